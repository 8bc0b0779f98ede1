import { ANALYSIS_STATUSES, LAYOUT_FORMATS } from '@/db/schema/analyses';
import { processModelSchema } from '@/lib/etch/process-model';
import { analysisSettingsSchema, FLAG_KINDS, FLAG_SEVERITIES } from '@/lib/pipeline/settings';
import { arrayOf, bool, inputSchema, int, nullable, num, object, operation, queryParam, ref, str } from './build';
import type { JsonSchema, PathItemObject } from './types';

// Layouts and analyses: the routes under app/api/v1/projects/{projectId}/{layouts,analyses}, app/api/v1/layouts,
// app/api/v1/analyses and app/api/v1/models, described from their handlers and the view types of lib/uploads and
// lib/jobs (RevisionView, LayoutView, AnalysisView, getResults, listFlags).

const bbox = (description: string): JsonSchema => ({ ...arrayOf(num()), minItems: 4, maxItems: 4, description });
const point = (description: string): JsonSchema => ({ ...arrayOf(num()), minItems: 2, maxItems: 2, description });
const gridGeometry = object(
  { x0Um: num('Lower-left corner x, µm'), y0Um: num('Lower-left corner y, µm'), pixelUm: num('Pixel size, µm'), nx: int(), ny: int() },
  { description: 'Pixel (i, j) covers [x0 + i·p, x0 + (i+1)·p] × [y0 + j·p, y0 + (j+1)·p]; rows run along +y.' },
);
const page = (items: JsonSchema): Record<string, JsonSchema> => ({ total: int(), offset: int(), limit: int(), items: arrayOf(items) });

export const PIPELINE_SCHEMAS: Record<string, JsonSchema> = {
  LayerTableRow: object({ layer: int(), datatype: int(), polygons: int(), points: int() }),
  Revision: object({
    id: str(),
    layoutId: str(),
    layoutName: str(),
    projectId: str(),
    revision: int('1, 2, … within the layout'),
    originalName: str('File name as uploaded'),
    uploadedAt: str(undefined, { format: 'date-time' }),
    uploadedByName: nullable(str()),
    sha256: str('SHA-256 of the stored file, hex'),
    sizeBytes: int(),
    format: { type: 'string', enum: [...LAYOUT_FORMATS], description: 'Recognised from the content, not the name' },
    layers: arrayOf(ref('LayerTableRow')),
    topCell: str(),
    libraryName: str(),
    dbuUm: num('Database unit, µm'),
    bboxUm: nullable(bbox('Bounding box over all layers, µm [x0, y0, x1, y1]')),
    polygonCount: int(),
    note: str(),
    readWarnings: arrayOf(str('What the reader repaired, e.g. an unclosed BOUNDARY closed; names the byte offset')),
    readsThroughIndex: bool('GDSII larger than TRENCHANT_WHOLE_READ_MB: checked from its on-disk index, analysed in tiles, drawn one window at a time'),
  }),
  Layout: object({
    id: str(),
    name: str(),
    projectId: str(),
    createdAt: str(undefined, { format: 'date-time' }),
    revisions: arrayOf({ allOf: [ref('Revision'), object({ analysisCount: int() })] }),
  }),
  AnalysisSettings: { ...inputSchema(analysisSettingsSchema), description: 'Analysis settings (lengths in µm, densities as fractions 0..1). Stored with the analysis so it can be reproduced.' },
  ProcessModel: { ...inputSchema(processModelSchema), description: 'A process model document (see the Methods page, "Etch model").' },
  Analysis: object({
    id: str(),
    projectId: str(),
    status: { type: 'string', enum: [...ANALYSIS_STATUSES] },
    stage: nullable(str('Current pipeline stage while running')),
    progress: num('0..1', { minimum: 0, maximum: 1 }),
    errorCode: nullable(str()),
    errorMessage: nullable(str('One line naming the problem when failed')),
    createdAt: str(undefined, { format: 'date-time' }),
    createdByName: nullable(str()),
    startedAt: nullable(str(undefined, { format: 'date-time' })),
    finishedAt: nullable(str(undefined, { format: 'date-time' })),
    attempts: int('Runs started (a restart re-queues interrupted jobs)'),
    revision: object({ id: str(), revision: int(), layoutId: str(), layoutName: str(), originalName: str() }),
    model: object({ name: str(), version: str(), source: str() }),
    settings: { type: 'object', description: 'The stored, fully defaulted settings' },
  }),
  MapInfo: object({
    name: str('e.g. "risk", "window-density-700um-70um"'),
    kind: str(),
    unit: str('fraction, um, ratio or score'),
    grid: gridGeometry,
    meta: { type: 'object' },
    bytes: int(),
    url: str('GET this for the TRGRID1 file'),
  }),
  FeatureResult: {
    type: 'object',
    description: 'One connected opening with its prediction (lengths µm; margin = depth − target).',
    properties: {
      id: int(),
      featureId: int(),
      shape: str('round-hole, square-hole, trench, open-field or irregular'),
      modelKind: { type: 'string', enum: ['trench', 'hole'] },
      centroidUm: point('Centroid, µm'),
      bboxUm: bbox('µm [x0, y0, x1, y1]'),
      areaUm2: num(),
      widthUm: num('Smallest width (trench width, hole diameter or side)'),
      lengthUm: num(),
      effectiveDensity: num('0..1'),
      depthUm: num('Predicted depth at the end of the etch'),
      aspectRatio: num('depth / width'),
      marginUm: num('depth − target'),
      overEtchUm: num(),
      reachesTarget: bool(),
      warnings: arrayOf(str()),
    },
    required: ['id', 'shape', 'widthUm', 'depthUm', 'aspectRatio', 'marginUm', 'reachesTarget'],
  },
  Flag: object({
    id: int(),
    key: str('Stable key of the flag within the analysis'),
    kind: { type: 'string', enum: [...FLAG_KINDS] },
    severity: { type: 'string', enum: [...FLAG_SEVERITIES] },
    bboxUm: bbox('Where, µm [x0, y0, x1, y1]'),
    atUm: point('Representative point, µm'),
    measured: num(),
    limit: num(),
    unit: str(),
    message: str('Plain-language explanation'),
    featureId: nullable(int()),
    window: nullable(object({ windowUm: num(), stepUm: num() })),
  }),
  Summary: {
    type: 'object',
    description:
      'Summary of a finished analysis: global density, each window set (min/max and where, max gradient, method), effective density, depth range and spread, flag counts by kind and severity, the model, resolved limits, the method block and the cautions.',
    properties: {
      globalDensity: num('Open area / die area, 0..1'),
      windows: arrayOf({ type: 'object' }),
      depth: nullable({ type: 'object', properties: { minUm: num(), maxUm: num(), spreadUm: num(), meanUm: num(), reachingTarget: int() } }),
      flags: { type: 'object', properties: { total: int(), listed: int(), bySeverity: { type: 'object' }, counts: { type: 'object' } } },
      model: object({ name: str(), version: str(), calibrationDate: nullable(str()) }),
      method: arrayOf(object({ label: str(), value: str(), sectionId: str('Methods page anchor') })),
      cautions: arrayOf(str()),
    },
    additionalProperties: true,
  },
};

const projectId = { projectId: 'Project id.' };
const analysisId = { analysisId: 'Analysis id.' };
const layoutId = { layoutId: 'Layout id.' };
const pageParams = [
  queryParam('offset', 'Items to skip.', { type: 'integer', minimum: 0, default: 0 }),
  queryParam('limit', 'Items to return (at most 5000).', { type: 'integer', minimum: 1, maximum: 5000, default: 500 }),
];
const uploadBody = (fields: Record<string, JsonSchema>) => ({
  contentType: 'multipart/form-data',
  description: 'Streamed to disk; the size limit comes from configuration (2 GB by default). The format (GDSII or CSV polygons) is recognised from the content.',
  schema: { type: 'object', properties: { file: { type: 'string', contentMediaType: 'application/octet-stream' }, ...fields }, required: ['file'] },
});
const cacheHeaders = {
  'cache-control': { description: 'private, max-age=31536000, immutable (results of a finished analysis never change)', schema: str() },
  etag: { description: 'Send it back as If-None-Match for a 304.', schema: str() },
};

export const PIPELINE_PATHS: Record<string, PathItemObject> = {
  '/models': {
    get: operation('get', {
      id: 'listModels',
      tag: 'Analyses',
      summary: 'Built-in process models',
      description: 'Invented demo models usable as `modelId` when starting an analysis. Calibrate your own for real work.',
      access: 'session-or-token',
      ok: { 200: { description: 'Models.', schema: object({ models: arrayOf(object({ id: str(), name: str(), version: str(), description: str(), model: ref('ProcessModel') })) }) } },
    }),
  },
  '/projects/{projectId}/layouts': {
    get: operation('get', {
      id: 'listLayouts',
      tag: 'Layouts',
      summary: 'Layouts of a project',
      access: 'session-or-token',
      permission: 'project.read',
      path: projectId,
      ok: { 200: { description: 'Layouts with their revisions, newest first.', schema: object({ layouts: arrayOf(ref('Layout')) }) } },
    }),
    post: operation('post', {
      id: 'uploadLayout',
      tag: 'Layouts',
      summary: 'Upload a layout',
      description: 'A new layout, or a new revision when `name` (or `layoutId`) matches an existing one. An interrupted, oversized or unreadable upload leaves nothing behind.',
      access: 'session-or-token',
      permission: 'layout.upload',
      path: projectId,
      body: uploadBody({ name: str('Layout name (default: the file name)'), layoutId: str('Add a revision to this layout'), note: str('Revision note') }),
      ok: { 201: { description: 'Stored.', schema: object({ revision: ref('Revision') }) } },
      errors: [413, 415, 422],
    }),
  },
  '/layouts/{layoutId}/revisions': {
    get: operation('get', {
      id: 'getLayout',
      tag: 'Layouts',
      summary: 'A layout and its revisions',
      access: 'session-or-token',
      permission: 'project.read',
      path: layoutId,
      ok: { 200: { description: 'The layout.', schema: object({ layout: ref('Layout') }) } },
    }),
    post: operation('post', {
      id: 'uploadRevision',
      tag: 'Layouts',
      summary: 'Upload a new revision',
      access: 'session-or-token',
      permission: 'layout.upload',
      path: layoutId,
      body: uploadBody({ note: str('Revision note') }),
      ok: { 201: { description: 'Stored.', schema: object({ revision: ref('Revision') }) } },
      errors: [413, 415, 422],
    }),
  },
  '/layouts/{layoutId}/revisions/{revisionId}': {
    get: operation('get', {
      id: 'getRevision',
      tag: 'Layouts',
      summary: 'One revision with its layer table',
      access: 'session-or-token',
      permission: 'project.read',
      path: { ...layoutId, revisionId: 'Revision id.' },
      ok: { 200: { description: 'The revision.', schema: object({ revision: ref('Revision') }) } },
    }),
  },
  '/projects/{projectId}/analyses': {
    get: operation('get', {
      id: 'listAnalyses',
      tag: 'Analyses',
      summary: 'Analyses of a project',
      access: 'session-or-token',
      permission: 'project.read',
      path: projectId,
      ok: { 200: { description: 'Newest first, with status and progress.', schema: object({ analyses: arrayOf(ref('Analysis')) }) } },
    }),
    post: operation('post', {
      id: 'startAnalysis',
      tag: 'Analyses',
      summary: 'Start an analysis',
      description:
        'Queues an analysis of a layout revision with the given settings and either a built-in model (`modelId`) or your own model document (`model`). 400 for invalid settings (field errors); 422 for an etch layer the revision does not have (the message names the layers present) or an invalid model.',
      access: 'session-or-token',
      permission: 'analysis.create',
      path: projectId,
      body: {
        type: 'object',
        properties: { revisionId: str(), settings: ref('AnalysisSettings'), modelId: str('A built-in model id (GET /models)'), model: ref('ProcessModel') },
        required: ['revisionId', 'settings'],
        oneOf: [{ required: ['modelId'] }, { required: ['model'] }],
        additionalProperties: false,
      },
      ok: {
        202: {
          description: 'Queued. Follow `events` for progress.',
          headers: { location: { description: 'URL of the analysis', schema: str() } },
          schema: object({ analysis: object({ id: str(), status: { type: 'string', enum: ['queued'] }, url: str(), events: str() }) }),
        },
      },
      errors: [422],
    }),
  },
  '/analyses/{analysisId}': {
    get: operation('get', {
      id: 'getAnalysis',
      tag: 'Analyses',
      summary: 'Status of an analysis',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      ok: { 200: { description: 'Status, stage, progress, error message, settings.', schema: object({ analysis: ref('Analysis') }) } },
    }),
  },
  '/analyses/{analysisId}/events': {
    get: operation('get', {
      id: 'analysisEvents',
      tag: 'Analyses',
      summary: 'Progress as server-sent events',
      description:
        '`event: progress` with `{ status, stage, progress, errorMessage }` — the current state first, then every change — and a final `event: end` with `{ status, errorMessage }` when the analysis is done, failed or cancelled; then the stream closes.',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      ok: { 200: { description: 'An event stream.', contentType: 'text/event-stream', schema: str() } },
    }),
  },
  '/analyses/{analysisId}/cancel': {
    post: operation('post', {
      id: 'cancelAnalysis',
      tag: 'Analyses',
      summary: 'Cancel an analysis',
      description: "Queued analyses are cancelled at once; running ones stop within seconds (status stays 'running' until then; follow /events). 409 when already finished.",
      access: 'session-or-token',
      permission: 'analysis.create',
      path: analysisId,
      ok: { 202: { description: 'Cancelled or cancelling.', schema: object({ analysis: ref('Analysis') }) } },
      errors: [409],
    }),
  },
  '/analyses/{analysisId}/rerun': {
    post: operation('post', {
      id: 'rerunAnalysis',
      tag: 'Analyses',
      summary: 'Run an analysis again',
      description: 'Queues a new analysis of the same revision with the stored settings and process model (after a cancel or failure, or to repeat a run). 409 while the analysis is still queued or running; 422 when the stored settings no longer pass validation.',
      access: 'session-or-token',
      permission: 'analysis.create',
      path: analysisId,
      ok: {
        202: {
          description: 'Queued. Follow `events` for progress.',
          headers: { location: { description: 'URL of the new analysis', schema: str() } },
          schema: object({ analysis: object({ id: str(), status: { type: 'string', enum: ['queued'] }, url: str(), events: str() }) }),
        },
      },
      errors: [409, 422],
    }),
  },
  '/analyses/{analysisId}/results': {
    get: operation('get', {
      id: 'getResults',
      tag: 'Analyses',
      summary: 'Summary, maps and per-opening results',
      description: '409 while the analysis is not done (the message says why).',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      query: pageParams,
      ok: {
        200: {
          description: 'Results of a finished analysis; openings are paged.',
          schema: object({ analysisId: str(), summary: ref('Summary'), maps: arrayOf(ref('MapInfo')), features: object(page(ref('FeatureResult'))) }),
        },
      },
      errors: [409],
    }),
  },
  '/analyses/{analysisId}/flags': {
    get: operation('get', {
      id: 'listFlags',
      tag: 'Analyses',
      summary: 'Flags, worst first',
      description: '409 while the analysis is not done.',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      query: [
        queryParam('severity', 'Only this severity.', { type: 'string', enum: [...FLAG_SEVERITIES] }),
        queryParam('kind', 'Only this kind.', { type: 'string', enum: [...FLAG_KINDS] }),
        ...pageParams,
      ],
      ok: { 200: { description: 'A page of flags.', schema: object({ analysisId: str(), ...page(ref('Flag')) }) } },
      errors: [409],
    }),
  },
  '/analyses/{analysisId}/maps/{kind}': {
    get: operation('get', {
      id: 'getMap',
      tag: 'Analyses',
      summary: 'One result map (binary grid)',
      description:
        'A TRGRID1 file: little-endian float32 raster with its geometry (format in lib/pipeline/grid-file.ts). `kind` is a map name from the results (e.g. "window-density-700um-70um") or a kind ("risk", "predicted-depth"; "window-density" gives the first window set). The geometry is repeated in the X-Trenchant-Grid header.',
      access: 'session-or-token',
      permission: 'project.read',
      path: { ...analysisId, kind: 'Map name or kind.' },
      ok: {
        200: {
          description: 'The grid file.',
          contentType: 'application/vnd.trenchant.grid',
          schema: { type: 'string', contentMediaType: 'application/vnd.trenchant.grid' },
          headers: {
            ...cacheHeaders,
            'x-trenchant-grid': { description: 'JSON { x0Um, y0Um, pixelUm, nx, ny } (µm)', schema: str() },
            'x-trenchant-map-kind': { description: 'Map kind', schema: str() },
            'x-trenchant-map-unit': { description: 'fraction, um, ratio or score', schema: str() },
          },
        },
        304: { description: 'Not modified (If-None-Match matched).' },
      },
      errors: [409],
    }),
  },
  '/analyses/{analysisId}/preview.png': {
    get: operation('get', {
      id: 'getPreview',
      tag: 'Analyses',
      summary: 'Static PNG of one map',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      query: [
        queryParam('map', 'Map name or kind (default risk).', { type: 'string', default: 'risk' }),
        queryParam('size', 'Longest side in pixels.', { type: 'integer', minimum: 64, maximum: 2048, default: 640 }),
      ],
      ok: {
        200: { description: 'PNG image.', contentType: 'image/png', schema: { type: 'string', contentMediaType: 'image/png' }, headers: cacheHeaders },
        304: { description: 'Not modified.' },
      },
      errors: [409],
    }),
  },
};
