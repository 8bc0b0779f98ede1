import type { JsonSchema, PathItemObject } from './types';

// Layouts and analyses: the routes under app/api/v1/projects/{projectId}/{layouts,analyses}, app/api/v1/layouts
// and app/api/v1/analyses (written by the pipeline server helper; described from their handlers).

export const PIPELINE_SCHEMAS: Record<string, JsonSchema> = {};

export const PIPELINE_PATHS: Record<string, PathItemObject> = {};
