import { index, integer, sqliteTable, text } from 'drizzle-orm/sqlite-core';

/**
 * Who did what. Actor and team are plain ids (no foreign keys) so the record outlives deleted users and teams.
 * `action` uses the permission names of lib/auth/permissions.ts where one applies (e.g. 'project.create'),
 * otherwise a dotted verb ('auth.sign_in', 'auth.sign_in_failed'). `detail` is a small JSON object.
 */
export const auditLog = sqliteTable(
  'audit_log',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    at: integer('at', { mode: 'timestamp_ms' }).notNull(),
    actorId: text('actor_id'),
    teamId: text('team_id'),
    action: text('action').notNull(),
    target: text('target'),
    detail: text('detail', { mode: 'json' }).$type<Record<string, unknown>>(),
  },
  (t) => [index('audit_team_idx').on(t.teamId, t.at)],
);

export type AuditRow = typeof auditLog.$inferSelect;
