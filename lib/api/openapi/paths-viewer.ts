import { arrayOf, bool, int, num, object, operation, queryParam, str } from './build';
import { whatIfSaveBody } from '@/lib/viewer/whatif-save';
import type { JsonSchema, PathItemObject } from './types';

const analysisId = { analysisId: 'Analysis id.' };
const box4 = (d: string): JsonSchema => ({ ...arrayOf(num()), minItems: 4, maxItems: 4, description: d });

/** Endpoints the canvas viewer reads (binary formats documented in lib/viewer/*-wire.ts). */
export const VIEWER_PATHS: Record<string, PathItemObject> = {
  '/analyses/{analysisId}/viewer': {
    get: operation('get', {
      id: 'getViewerInfo',
      tag: 'Analyses',
      summary: 'Model, limits, layers and die box of a finished analysis, for the canvas viewer',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      ok: {
        200: {
          description: 'Viewer information.',
          schema: object({
            analysisId: str(),
            revisionId: str(),
            model: { type: 'object', description: 'The process model as the analysis used it.' },
            limits: { type: 'object' },
            severities: { type: 'object' },
            exposedFraction: num('Open fraction of the die (global loading input).'),
            dieBboxUm: box4('Die box, µm.'),
            polygonCount: int(),
            layers: arrayOf(object({ layer: int(), datatype: int(), polygons: int(), etch: bool() })),
          }),
        },
      },
      errors: [409],
    }),
  },
  '/analyses/{analysisId}/features.bin': {
    get: operation('get', {
      id: 'getFeatureColumns',
      tag: 'Analyses',
      summary: 'Per-opening results as compact binary columns (TRFEAT1)',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      ok: {
        200: { description: 'TRFEAT1 columns.', contentType: 'application/vnd.trenchant.features', schema: { type: 'string', contentMediaType: 'application/vnd.trenchant.features' } },
        304: { description: 'Not modified.' },
      },
      errors: [409],
    }),
  },
  '/analyses/{analysisId}/flags.bin': {
    get: operation('get', {
      id: 'getFlagColumns',
      tag: 'Analyses',
      summary: 'Every flag of a finished analysis as compact binary columns (TRFLAG1), worst first',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      ok: {
        200: { description: 'TRFLAG1 columns.', contentType: 'application/vnd.trenchant.flags', schema: { type: 'string', contentMediaType: 'application/vnd.trenchant.flags' } },
        304: { description: 'Not modified.' },
      },
      errors: [409],
    }),
  },
  '/analyses/{analysisId}/what-if': {
    post: operation('post', {
      id: 'saveWhatIf',
      tag: 'Analyses',
      summary: 'Save a viewer what-if as a new analysis',
      description:
        'Queues a new analysis of the same revision with the stored settings and the analysis\'s process model with the given etch time, open-field rate, reaction probability and microloading coefficient. The model is recorded as derived: version "<original>+what-if", description naming the original model version and every changed parameter. 400 when nothing changed.',
      access: 'session-or-token',
      permission: 'analysis.create',
      path: analysisId,
      body: whatIfSaveBody,
      ok: {
        202: {
          description: 'Queued.',
          headers: { location: { description: 'URL of the new analysis', schema: str() } },
          schema: object({ analysis: object({ id: str(), status: str(), url: str(), modelVersion: str() }), changes: arrayOf(object({ path: str(), from: num(), to: num(), unit: str() })) }),
        },
      },
      errors: [409, 422],
    }),
  },
  '/analyses/{analysisId}/polygons': {
    get: operation('get', {
      id: 'getPolygonsInBox',
      tag: 'Analyses',
      summary: 'Layout polygons meeting a box (TRPOLY1 binary), or only their count when there are more than max',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      query: [
        queryParam('box', 'x0,y0,x1,y1 in µm.', { type: 'string' }, true),
        queryParam('max', 'Most polygons to return.', { type: 'integer', minimum: 1, maximum: 200000, default: 50000 }),
      ],
      ok: { 200: { description: 'TRPOLY1 polygons.', contentType: 'application/vnd.trenchant.polygons', schema: { type: 'string', contentMediaType: 'application/vnd.trenchant.polygons' } } },
      errors: [409],
    }),
  },
};
