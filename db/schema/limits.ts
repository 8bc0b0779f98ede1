import { integer, sqliteTable, text } from 'drizzle-orm/sqlite-core';
import { analyses } from './analyses';
import { users } from './auth';
import { teams } from './teams';

/**
 * Per-team resource limits set by a team admin (lib/jobs/team-limits.ts holds the defaults and the allowed
 * ranges). No row = the defaults. Upload limits count flattened geometry; result limits count bytes on disk.
 */
export const teamLimits = sqliteTable('team_limits', {
  teamId: text('team_id')
    .primaryKey()
    .references(() => teams.id, { onDelete: 'cascade' }),
  /** Most flattened polygons one uploaded layout may have. */
  maxPolygons: integer('max_polygons').notNull(),
  /** Most flattened points (vertices) one uploaded layout may have. */
  maxPoints: integer('max_points').notNull(),
  /** Most bytes one analysis may write (maps and per-opening results). */
  maxAnalysisBytes: integer('max_analysis_bytes').notNull(),
  /** Most bytes of stored analysis results the team may keep in total. */
  maxStoredBytes: integer('max_stored_bytes').notNull(),
  updatedBy: text('updated_by').references(() => users.id, { onDelete: 'set null' }),
  updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull(),
});

export type TeamLimitsRow = typeof teamLimits.$inferSelect;

/**
 * Per-opening results of a finished analysis stored as one column file in its result folder (written by the
 * worker, read by lib/jobs/feature-columns.ts). Analyses saved before this table have their rows in
 * analysis_features instead.
 */
export const analysisFeatureFiles = sqliteTable('analysis_feature_files', {
  analysisId: text('analysis_id')
    .primaryKey()
    .references(() => analyses.id, { onDelete: 'cascade' }),
  /** Relative to the analysis's result folder. */
  file: text('file').notNull(),
  count: integer('count').notNull(),
  bytes: integer('bytes').notNull(),
});

export type AnalysisFeatureFileRow = typeof analysisFeatureFiles.$inferSelect;
