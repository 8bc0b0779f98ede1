import { processModelSchema } from '@/lib/etch/process-model';
import { ruleSetBody, ruleSetPatchBody, ruleSetRulesSchema } from '@/lib/models/rule-set-schema';
import { createModelBody, storedCalibrationSchema, updateDraftBody } from '@/lib/models/schemas';
import { arrayOf, bool, int, isoTime, nullable, num, object, operation, outputSchema, queryParam, ref, str } from './build';
import type { JsonSchema, PathItemObject } from './types';

// Process models (versions, drafts, publishing, diff, width rules, density limits) and rule sets: the routes under
// app/api/v1/teams/{teamId}/{models,rule-sets}, app/api/v1/model-versions and app/api/v1/rule-sets, described from
// lib/models (VersionSummary, VersionView, RuleSetView, WidthRules).

const versionSummary = {
  id: str(),
  modelId: str(),
  number: int('1, 2, … per model'),
  label: str('e.g. "v2" or "v3 (draft)"'),
  status: { type: 'string', enum: ['draft', 'published'] },
  note: str(),
  basedOnVersionId: nullable(str('The version this one was drafted from')),
  createdAt: isoTime(),
  updatedAt: isoTime(),
  createdByName: nullable(str()),
  publishedAt: nullable(isoTime()),
  calibrationDate: nullable(str('YYYY-MM-DD')),
  rSquared: nullable(num()),
  editedSinceCalibration: arrayOf(str('A fitted parameter whose value differs from the calibration record')),
} satisfies Record<string, JsonSchema>;

const modelHead = { id: str(), teamId: str(), key: str('Short stable key, unique in the team'), name: str(), description: str(), featureKind: { type: 'string', enum: ['trench', 'hole'] }, mode: str() } satisfies Record<string, JsonSchema>;

export const MODEL_SCHEMAS: Record<string, JsonSchema> = {
  ModelVersionSummary: object(versionSummary),
  ProcessModelSummary: object({ ...modelHead, versions: arrayOf(ref('ModelVersionSummary')) }),
  ModelVersion: object({
    ...versionSummary,
    model: object(modelHead),
    document: { ...outputSchema(processModelSchema), description: 'The process model document (published versions never change).' },
    calibration: nullable({ ...outputSchema(storedCalibrationSchema), description: 'Measurements and fit shown on the calibration page.' }),
  }),
  ParameterChange: object({ path: str(), label: str(), unit: str(), before: {}, after: {}, change: { type: 'string', enum: ['added', 'removed', 'changed'] } }),
  WidthRules: {
    type: 'object',
    description: 'Width-rule table: per width the predicted depth at the recipe time (± depthSigmaUm when calibrated), aspect ratio, margin and status, and the minimum width reaching target − tolerance.',
    properties: {
      kind: str(),
      targetDepthUm: num(),
      toleranceUm: num(),
      timeMin: num(),
      minimumWidthUm: nullable(num()),
      uncertaintyBandK: nullable(num()),
      rows: arrayOf(object({ widthUm: num(), depthUm: num(), aspectRatio: num(), marginUm: num(), pass: bool(), status: str(), depthSigmaUm: nullable(num()) })),
      caution: str(),
    },
    additionalProperties: true,
  },
  DensityLimits: {
    type: 'object',
    description: 'Density limits: per opening width the effective-density band (minDensity–maxDensity) in which the depth at the recipe time stays within target ± tolerance, and the depth at each density of `densities`.',
    properties: {
      kind: str(),
      targetDepthUm: num(),
      toleranceUm: num(),
      timeMin: num(),
      exposedFraction: num(),
      calibratedDensity: nullable(arrayOf(num())),
      densities: arrayOf(num()),
      rows: arrayOf(object({ widthUm: num(), depthsUm: arrayOf(num()), maxDensity: nullable(num('null: short of target even at density 0')), minDensity: nullable(num('null: deeper than target + tolerance even at density 1')) })),
      caution: str(),
    },
    additionalProperties: true,
  },
  RuleSet: object({ id: str(), teamId: str(), name: str(), description: str(), rules: outputSchema(ruleSetRulesSchema), isDefault: bool(), archived: bool(), updatedAt: isoTime() }),
};

const teamId = { teamId: 'Team id.' };
const versionId = { versionId: 'Model version id.' };
const ruleSetId = { ruleSetId: 'Rule set id.' };
const version = object({ version: ref('ModelVersion') });

export const MODEL_PATHS: Record<string, PathItemObject> = {
  '/teams/{teamId}/models': {
    get: operation('get', {
      id: 'listTeamModels',
      tag: 'Models',
      summary: 'Process models of a team',
      description: 'Every model with its versions (newest first), and the built-in samples a new model may start from.',
      access: 'session-or-token',
      permission: 'team.read',
      path: teamId,
      ok: { 200: { description: 'Models.', schema: object({ models: arrayOf(ref('ProcessModelSummary')), samples: arrayOf(object({ id: str(), name: str(), description: str() })) }) } },
    }),
    post: operation('post', {
      id: 'createModel',
      tag: 'Models',
      summary: 'Create a model',
      description: 'A new model with a first draft, started from a version, a built-in sample or a document.',
      access: 'session-or-token',
      permission: 'model.publish',
      path: teamId,
      body: createModelBody,
      ok: { 201: { description: 'The first draft.', schema: version } },
      errors: [409],
    }),
  },
  '/model-versions/{versionId}': {
    get: operation('get', { id: 'getModelVersion', tag: 'Models', summary: 'A model version', access: 'session-or-token', permission: 'team.read', path: versionId, ok: { 200: { description: 'The version.', schema: version } } }),
    patch: operation('patch', {
      id: 'updateModelDraft',
      tag: 'Models',
      summary: 'Edit a draft',
      description: 'Replace the document (validated; errors per field as `document.<path>`), the note or the stored calibration. Published versions answer 409.',
      access: 'session-or-token',
      permission: 'model.publish',
      path: versionId,
      body: updateDraftBody,
      ok: { 200: { description: 'The draft.', schema: version } },
      errors: [409],
    }),
    delete: operation('delete', { id: 'deleteModelDraft', tag: 'Models', summary: 'Discard a draft', access: 'session-or-token', permission: 'model.publish', path: versionId, ok: { 204: { description: 'Deleted.' } }, errors: [409] }),
  },
  '/model-versions/{versionId}/publish': {
    post: operation('post', {
      id: 'publishModelVersion',
      tag: 'Models',
      summary: 'Publish a draft',
      description: 'From then on the version never changes and analyses may use it (`modelId` = its id).',
      access: 'session-or-token',
      permission: 'model.publish',
      path: versionId,
      ok: { 200: { description: 'The published version.', schema: version } },
      errors: [409],
    }),
  },
  '/model-versions/{versionId}/drafts': {
    post: operation('post', { id: 'draftFromVersion', tag: 'Models', summary: 'New draft from a version', access: 'session-or-token', permission: 'model.publish', path: versionId, ok: { 201: { description: 'The new draft.', schema: version } } }),
  },
  '/model-versions/{versionId}/diff': {
    get: operation('get', {
      id: 'diffModelVersions',
      tag: 'Models',
      summary: 'Parameter changes between versions',
      access: 'session-or-token',
      permission: 'team.read',
      path: versionId,
      query: [queryParam('against', 'The older version (default: the one this was drafted from).', { type: 'string' })],
      ok: { 200: { description: 'Changes from `against` to this version.', schema: object({ from: nullable(ref('ModelVersionSummary')), to: ref('ModelVersionSummary'), changes: arrayOf(ref('ParameterChange')) }) } },
    }),
  },
  '/model-versions/{versionId}/width-rules': {
    get: operation('get', {
      id: 'modelWidthRules',
      tag: 'Models',
      summary: 'Width-rule table',
      description: 'Predicted depth per opening width for a target depth, and the minimum width reaching it; CSV or JSON for a design-rule deck. Estimates: the foundry rule manual takes precedence.',
      access: 'session-or-token',
      permission: 'team.read',
      path: versionId,
      query: [
        queryParam('kind', 'trench or hole', { type: 'string', enum: ['trench', 'hole'], default: 'trench' }),
        queryParam('targetDepthUm', 'Target depth, µm (default: the model’s).', { type: 'number', exclusiveMinimum: 0 }),
        queryParam('toleranceUm', 'Depth tolerance, µm.', { type: 'number', minimum: 0 }),
        queryParam('density', 'Effective open density around the opening, 0..1.', { type: 'number', minimum: 0, maximum: 1 }),
        queryParam('format', 'json or csv', { type: 'string', enum: ['json', 'csv'], default: 'json' }),
      ],
      ok: { 200: { description: 'The table (JSON, or CSV with # comment lines).', schema: ref('WidthRules') } },
    }),
  },
  '/model-versions/{versionId}/density-limits': {
    get: operation('get', {
      id: 'modelDensityLimits',
      tag: 'Models',
      summary: 'Density limits',
      description: 'Per opening width, the band of effective (kernel-weighted) density in which the predicted depth stays within target ± tolerance, and depth over a density grid; CSV or JSON. Estimates: the foundry rule manual takes precedence.',
      access: 'session-or-token',
      permission: 'team.read',
      path: versionId,
      query: [
        queryParam('kind', 'trench or hole', { type: 'string', enum: ['trench', 'hole'], default: 'trench' }),
        queryParam('targetDepthUm', 'Target depth, µm (default: the model’s).', { type: 'number', exclusiveMinimum: 0 }),
        queryParam('toleranceUm', 'Depth tolerance, µm.', { type: 'number', minimum: 0 }),
        queryParam('widthsUm', 'Comma-separated opening widths in µm (1–20; default 8 from 1 to 100 µm).', { type: 'string' }),
        queryParam('format', 'json or csv', { type: 'string', enum: ['json', 'csv'], default: 'json' }),
      ],
      ok: { 200: { description: 'The table (JSON, or CSV with # comment lines).', schema: ref('DensityLimits') } },
    }),
  },
  '/teams/{teamId}/rule-sets': {
    get: operation('get', {
      id: 'listRuleSets',
      tag: 'Models',
      summary: 'Rule sets of a team',
      access: 'session-or-token',
      permission: 'team.read',
      path: teamId,
      query: [queryParam('archived', '1 to include archived rule sets.', { type: 'string', enum: ['1'] })],
      ok: { 200: { description: 'Rule sets.', schema: object({ ruleSets: arrayOf(ref('RuleSet')) }) } },
    }),
    post: operation('post', { id: 'createRuleSet', tag: 'Models', summary: 'Create a rule set', access: 'session-or-token', permission: 'model.publish', path: teamId, body: ruleSetBody, ok: { 201: { description: 'Created.', schema: object({ ruleSet: ref('RuleSet') }) } }, errors: [409] }),
  },
  '/rule-sets/{ruleSetId}': {
    get: operation('get', { id: 'getRuleSet', tag: 'Models', summary: 'A rule set', access: 'session-or-token', permission: 'team.read', path: ruleSetId, ok: { 200: { description: 'The rule set.', schema: object({ ruleSet: ref('RuleSet') }) } } }),
    patch: operation('patch', {
      id: 'updateRuleSet',
      tag: 'Models',
      summary: 'Edit a rule set',
      description: 'Analyses already run keep the settings they stored.',
      access: 'session-or-token',
      permission: 'model.publish',
      path: ruleSetId,
      body: ruleSetPatchBody,
      ok: { 200: { description: 'The rule set.', schema: object({ ruleSet: ref('RuleSet') }) } },
      errors: [409],
    }),
  },
};
