import { index, integer, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';
import { users } from './auth';
import { teams } from './teams';

/**
 * Process models owned by a team, their versions, and the team's saved rule sets.
 * A version is a draft (editable by process engineers) until published; a published version never changes, so an
 * analysis that names it can be repeated. A new draft may be started from any version (`basedOnVersionId`).
 */

export const MODEL_VERSION_STATUSES = ['draft', 'published'] as const;
export type ModelVersionStatus = (typeof MODEL_VERSION_STATUSES)[number];

/** One process (recipe) a team models; `key` is a short stable name per team (e.g. a demo sample's file name). */
export const processModels = sqliteTable(
  'process_models',
  {
    id: text('id').primaryKey(),
    teamId: text('team_id')
      .notNull()
      .references(() => teams.id, { onDelete: 'cascade' }),
    key: text('key').notNull(),
    name: text('name').notNull(),
    description: text('description').notNull().default(''),
    /** Opening kind the model is meant for; used to pick a sensible default in the analysis form. */
    featureKind: text('feature_kind', { enum: ['trench', 'hole'] }).notNull().default('trench'),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
  },
  (t) => [uniqueIndex('process_models_team_key_idx').on(t.teamId, t.key), index('process_models_team_idx').on(t.teamId)],
);

/**
 * One version of a model. `document` is the process model JSON as validated (lib/etch/process-model.ts);
 * `calibration` keeps what the calibration page needs to show its plots again (measurement rows, fitted parameters,
 * covariance, residuals) — the document's own `calibration` record carries the ranges and the covariance used for
 * depth uncertainty in analyses.
 */
export const processModelVersions = sqliteTable(
  'process_model_versions',
  {
    id: text('id').primaryKey(),
    modelId: text('model_id')
      .notNull()
      .references(() => processModels.id, { onDelete: 'cascade' }),
    /** 1, 2, … per model, in creation order. */
    number: integer('number').notNull(),
    status: text('status', { enum: MODEL_VERSION_STATUSES }).notNull(),
    document: text('document', { mode: 'json' }).$type<Record<string, unknown>>().notNull(),
    calibration: text('calibration', { mode: 'json' }).$type<Record<string, unknown> | null>(),
    note: text('note').notNull().default(''),
    basedOnVersionId: text('based_on_version_id'),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
    updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull(),
    publishedBy: text('published_by').references(() => users.id, { onDelete: 'set null' }),
    publishedAt: integer('published_at', { mode: 'timestamp_ms' }),
  },
  (t) => [uniqueIndex('process_model_versions_number_idx').on(t.modelId, t.number), index('process_model_versions_model_idx').on(t.modelId)],
);

/**
 * A saved set of check rules (density windows, kernel, limits, severities) that designers pick when starting an
 * analysis. `rules` is validated by lib/models/rule-set-schema.ts; at most one rule set per team is the default.
 */
export const ruleSets = sqliteTable(
  'rule_sets',
  {
    id: text('id').primaryKey(),
    teamId: text('team_id')
      .notNull()
      .references(() => teams.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    description: text('description').notNull().default(''),
    rules: text('rules', { mode: 'json' }).$type<Record<string, unknown>>().notNull(),
    isDefault: integer('is_default', { mode: 'boolean' }).notNull().default(false),
    archived: integer('archived', { mode: 'boolean' }).notNull().default(false),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
    updatedBy: text('updated_by').references(() => users.id, { onDelete: 'set null' }),
    updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull(),
  },
  (t) => [uniqueIndex('rule_sets_team_name_idx').on(t.teamId, t.name), index('rule_sets_team_idx').on(t.teamId)],
);

export type ProcessModelRow = typeof processModels.$inferSelect;
export type ProcessModelVersionRow = typeof processModelVersions.$inferSelect;
export type RuleSetRow = typeof ruleSets.$inferSelect;
