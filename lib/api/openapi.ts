/**
 * Trenchant's OpenAPI 3.1 document as typed data: served at GET /api/v1/openapi.json and rendered by the API page.
 * tests/api/openapi-sync.test.ts walks app/api/v1 and fails when a route file or handler is missing here (or a
 * documented one no longer exists), so keep this in step with the handlers.
 */
import { CORE_SCHEMAS, ERROR_RESPONSE_OBJECTS, SECURITY_SCHEMES } from './openapi/components';
import { CORE_PATHS } from './openapi/paths-core';
import { LIMITS_PATHS } from './openapi/paths-limits';
import { PIPELINE_PATHS, PIPELINE_SCHEMAS } from './openapi/paths-pipeline';
import { REVIEW_PATHS, REVIEW_SCHEMAS } from './openapi/paths-review';
import { MODEL_PATHS, MODEL_SCHEMAS } from './openapi/paths-models';
import { VIEWER_PATHS } from './openapi/paths-viewer';
import { HTTP_METHODS, type HttpMethod, type OpenApiDocument, type OperationObject } from './openapi/types';

export type { HttpMethod, OpenApiDocument, OperationObject } from './openapi/types';

/** Where the document's paths are mounted; paths in the document are relative to it. */
export const API_BASE_PATH = '/api/v1';

const TAGS: OpenApiDocument['tags'] = [
  { name: 'Account', description: 'Sign-in, sign-up and who is calling.' },
  { name: 'Teams', description: 'Team membership and invitations (browser session only).' },
  { name: 'Projects', description: 'Projects group the layouts and analyses of one product or test chip.' },
  { name: 'Layouts', description: 'Layout uploads (GDSII or CSV polygons); each upload is a new revision.' },
  { name: 'Analyses', description: 'Etch-loading analyses: settings, progress, results, maps and flags.' },
  { name: 'Review', description: 'Findings review: status, waivers, threads, sign-off, compare, notifications.' },
  { name: 'Models', description: 'Process models (versions, calibration, width rules) and saved rule sets.' },
  { name: 'Meta', description: 'This document.' },
];

function buildDocument(): OpenApiDocument {
  return {
    openapi: '3.1.0',
    info: {
      title: 'Trenchant API',
      version: '1',
      summary: 'Plasma-etch loading checks of mask layouts.',
      description:
        'Every route checks the same team roles as the web app. Authenticate with a personal API token ' +
        '(`Authorization: Bearer trn_…`, from the API tokens page; it reaches one team) or the browser session cookie. ' +
        'Errors have the body `{ "error": { "code", "message", "fieldErrors"? } }`. Predicted depths and flags are ' +
        'model estimates: validate them against your fab\'s process of record; foundry rules take precedence.',
    },
    jsonSchemaDialect: 'https://json-schema.org/draft/2020-12/schema',
    servers: [{ url: API_BASE_PATH, description: 'This Trenchant instance' }],
    tags: TAGS,
    security: [{ bearerToken: [] }, { sessionCookie: [] }],
    paths: { ...CORE_PATHS, ...PIPELINE_PATHS, ...LIMITS_PATHS, ...REVIEW_PATHS, ...MODEL_PATHS, ...VIEWER_PATHS },
    components: {
      securitySchemes: SECURITY_SCHEMES,
      schemas: { ...CORE_SCHEMAS, ...PIPELINE_SCHEMAS, ...REVIEW_SCHEMAS, ...MODEL_SCHEMAS },
      responses: ERROR_RESPONSE_OBJECTS,
    },
  };
}

/** The document (built once; plain JSON-compatible data). */
export const openApiDocument: OpenApiDocument = buildDocument();

export type ListedOperation = { method: HttpMethod; path: string; operation: OperationObject };

/** Every operation, in document order (paths sorted), for the API page and the sync test. */
export function listOperations(doc: OpenApiDocument = openApiDocument): ListedOperation[] {
  const out: ListedOperation[] = [];
  for (const path of Object.keys(doc.paths).sort()) {
    const item = doc.paths[path];
    for (const method of HTTP_METHODS) {
      const operation = item?.[method];
      if (operation) out.push({ method, path, operation });
    }
  }
  return out;
}
