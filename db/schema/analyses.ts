import { index, integer, primaryKey, real, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';
import { users } from './auth';
import { projects } from './teams';

/**
 * Layouts, their uploaded revisions, analyses of a revision and their results.
 * Files live under the data folder (lib/jobs/paths.ts): revisions at `layouts/<revisionId>.<gds|csv>`, results at
 * `analyses/<analysisId>/`. Paths stored here are relative to the data folder, so the folder can move.
 */

export const LAYOUT_FORMATS = ['gdsii', 'csv'] as const;
export type LayoutFormat = (typeof LAYOUT_FORMATS)[number];

export const ANALYSIS_STATUSES = ['queued', 'running', 'done', 'failed', 'cancelled'] as const;
export type AnalysisStatus = (typeof ANALYSIS_STATUSES)[number];

/** One row of a revision's layer table: what the upload check found on each layer/datatype. */
export type LayerTableRow = { layer: number; datatype: number; polygons: number; points: number };

/** A named layout inside a project; each upload under the same name adds a revision. */
export const layouts = sqliteTable(
  'layouts',
  {
    id: text('id').primaryKey(),
    projectId: text('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
  },
  (t) => [uniqueIndex('layouts_project_name_idx').on(t.projectId, t.name)],
);

/** One uploaded file. Immutable once written; `revision` counts 1, 2, ... per layout. */
export const layoutRevisions = sqliteTable(
  'layout_revisions',
  {
    id: text('id').primaryKey(),
    layoutId: text('layout_id')
      .notNull()
      .references(() => layouts.id, { onDelete: 'cascade' }),
    revision: integer('revision').notNull(),
    uploadedBy: text('uploaded_by').references(() => users.id, { onDelete: 'set null' }),
    uploadedAt: integer('uploaded_at', { mode: 'timestamp_ms' }).notNull(),
    /** File name as sent by the browser or client (display only; the format comes from the content). */
    originalName: text('original_name').notNull(),
    sha256: text('sha256').notNull(),
    sizeBytes: integer('size_bytes').notNull(),
    format: text('format', { enum: LAYOUT_FORMATS }).notNull(),
    /** Relative to the data folder. */
    storedPath: text('stored_path').notNull(),
    layerTable: text('layer_table', { mode: 'json' }).$type<LayerTableRow[]>().notNull(),
    topCell: text('top_cell').notNull(),
    libraryName: text('library_name').notNull(),
    /** Database unit in µm (GDSII: metres per dbu × 1e6; CSV: as declared). */
    dbuUm: real('dbu_um').notNull(),
    /** Bounding box of all shapes in dbu [x0, y0, x1, y1]; null for a layout without shapes. */
    bboxDbu: text('bbox_dbu', { mode: 'json' }).$type<[number, number, number, number] | null>(),
    polygonCount: integer('polygon_count').notNull(),
    note: text('note').notNull().default(''),
    /** What the reader repaired when checking the upload (unclosed boundaries, ...), each with its byte offset. */
    readWarnings: text('read_warnings', { mode: 'json' }).$type<string[]>().notNull().default([]),
  },
  (t) => [uniqueIndex('layout_revisions_layout_rev_idx').on(t.layoutId, t.revision)],
);

/**
 * One analysis of one revision. `settings` and `model` are stored exactly as validated, so the run can be
 * repeated; `summary` is the pipeline's AnalysisSummary once done. The job queue is this table: status
 * queued → running → done | failed | cancelled; running jobs found at start-up are queued again.
 */
export const analyses = sqliteTable(
  'analyses',
  {
    id: text('id').primaryKey(),
    projectId: text('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    revisionId: text('revision_id')
      .notNull()
      .references(() => layoutRevisions.id, { onDelete: 'cascade' }),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
    settings: text('settings', { mode: 'json' }).$type<Record<string, unknown>>().notNull(),
    model: text('model', { mode: 'json' }).$type<Record<string, unknown>>().notNull(),
    modelName: text('model_name').notNull(),
    modelVersion: text('model_version').notNull(),
    /** Where the model came from: a built-in demo model id, or 'uploaded'. */
    modelSource: text('model_source').notNull(),
    status: text('status', { enum: ANALYSIS_STATUSES }).notNull(),
    stage: text('stage'),
    /** Overall progress 0..1. */
    progress: real('progress').notNull().default(0),
    errorCode: text('error_code'),
    errorMessage: text('error_message'),
    /** How many times a worker picked the job up (restarts re-queue it). */
    attempts: integer('attempts').notNull().default(0),
    startedAt: integer('started_at', { mode: 'timestamp_ms' }),
    finishedAt: integer('finished_at', { mode: 'timestamp_ms' }),
    summary: text('summary', { mode: 'json' }).$type<Record<string, unknown>>(),
    /** Relative to the data folder; null until the job ran. */
    resultDir: text('result_dir'),
    /** The published model version used (process_model_versions.id); null for built-in or uploaded models. */
    modelVersionId: text('model_version_id'),
    /** The saved rule set the settings were taken from (rule_sets.id), if any; the settings themselves are stored above. */
    ruleSetId: text('rule_set_id'),
  },
  (t) => [
    index('analyses_project_idx').on(t.projectId, t.createdAt),
    index('analyses_revision_idx').on(t.revisionId),
    index('analyses_status_idx').on(t.status, t.createdAt),
  ],
);

/**
 * Flags of a finished analysis. `id` is this row's own id (for comments and waivers later); `flagKey` is the
 * pipeline's id, stable across re-runs of the same layout and settings (e.g. "under-target-depth:f12").
 */
export const analysisFlags = sqliteTable(
  'analysis_flags',
  {
    id: text('id').primaryKey(),
    analysisId: text('analysis_id')
      .notNull()
      .references(() => analyses.id, { onDelete: 'cascade' }),
    flagKey: text('flag_key').notNull(),
    /** Order in the pipeline's list (worst first). */
    rank: integer('rank').notNull(),
    kind: text('kind').notNull(),
    severity: text('severity').notNull(),
    x0Um: real('x0_um').notNull(),
    y0Um: real('y0_um').notNull(),
    x1Um: real('x1_um').notNull(),
    y1Um: real('y1_um').notNull(),
    xUm: real('x_um').notNull(),
    yUm: real('y_um').notNull(),
    measured: real('measured').notNull(),
    limit: real('limit_value').notNull(),
    unit: text('unit').notNull(),
    message: text('message').notNull(),
    featureId: integer('feature_id'),
    windowUm: real('window_um'),
    stepUm: real('step_um'),
    /** The limit lies within the prediction's uncertainty band (calibrated models only); null = not assessed. */
    uncertain: integer('uncertain', { mode: 'boolean' }),
  },
  (t) => [uniqueIndex('analysis_flags_key_idx').on(t.analysisId, t.flagKey), index('analysis_flags_rank_idx').on(t.analysisId, t.rank)],
);

/** Per-opening results of a finished analysis (one row per extracted feature). */
export const analysisFeatures = sqliteTable(
  'analysis_features',
  {
    analysisId: text('analysis_id')
      .notNull()
      .references(() => analyses.id, { onDelete: 'cascade' }),
    featureId: integer('feature_id').notNull(),
    shape: text('shape').notNull(),
    modelKind: text('model_kind').notNull(),
    xUm: real('x_um').notNull(),
    yUm: real('y_um').notNull(),
    x0Um: real('x0_um').notNull(),
    y0Um: real('y0_um').notNull(),
    x1Um: real('x1_um').notNull(),
    y1Um: real('y1_um').notNull(),
    areaUm2: real('area_um2').notNull(),
    widthUm: real('width_um').notNull(),
    lengthUm: real('length_um').notNull(),
    effectiveDensity: real('effective_density').notNull(),
    depthUm: real('depth_um').notNull(),
    aspectRatio: real('aspect_ratio').notNull(),
    marginUm: real('margin_um').notNull(),
    overEtchUm: real('over_etch_um').notNull(),
    reachesTarget: integer('reaches_target', { mode: 'boolean' }).notNull(),
    warnings: text('warnings').notNull().default(''),
    /** Standard deviation of depthUm from the model's calibration covariance, µm; null for an uncalibrated model. */
    depthSigmaUm: real('depth_sigma_um'),
  },
  (t) => [primaryKey({ columns: [t.analysisId, t.featureId] })],
);

/** Index of the result maps written by the worker (one TRGRID1 file each). `name` is the file stem. */
export const analysisMaps = sqliteTable(
  'analysis_maps',
  {
    analysisId: text('analysis_id')
      .notNull()
      .references(() => analyses.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    kind: text('kind').notNull(),
    unit: text('unit').notNull(),
    file: text('file').notNull(),
    x0Um: real('x0_um').notNull(),
    y0Um: real('y0_um').notNull(),
    pixelUm: real('pixel_um').notNull(),
    nx: integer('nx').notNull(),
    ny: integer('ny').notNull(),
    meta: text('meta', { mode: 'json' }).$type<Record<string, unknown>>().notNull(),
    bytes: integer('bytes').notNull(),
  },
  (t) => [primaryKey({ columns: [t.analysisId, t.name] })],
);

export type LayoutRow = typeof layouts.$inferSelect;
export type LayoutRevisionRow = typeof layoutRevisions.$inferSelect;
export type AnalysisRow = typeof analyses.$inferSelect;
export type AnalysisFlagRow = typeof analysisFlags.$inferSelect;
export type AnalysisFeatureRow = typeof analysisFeatures.$inferSelect;
export type AnalysisMapRow = typeof analysisMaps.$inferSelect;
