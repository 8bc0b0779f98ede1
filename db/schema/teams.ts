import { index, integer, primaryKey, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';
import { users } from './auth';

/** Team roles. The permission table lives in lib/auth/permissions.ts; this list is the column's domain. */
export const TEAM_ROLES = ['admin', 'process_engineer', 'designer', 'reviewer'] as const;
export type TeamRole = (typeof TEAM_ROLES)[number];

export const teams = sqliteTable('teams', {
  id: text('id').primaryKey(),
  name: text('name').notNull(),
  createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
});

/** One role per user per team. */
export const memberships = sqliteTable(
  'memberships',
  {
    teamId: text('team_id')
      .notNull()
      .references(() => teams.id, { onDelete: 'cascade' }),
    userId: text('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    role: text('role', { enum: TEAM_ROLES }).notNull(),
    createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.teamId, t.userId] }), index('memberships_user_idx').on(t.userId)],
);

/** E-mail invitations. Only the SHA-256 of the token is stored; the token itself travels in the mail link. */
export const invites = sqliteTable(
  'invites',
  {
    id: text('id').primaryKey(),
    teamId: text('team_id')
      .notNull()
      .references(() => teams.id, { onDelete: 'cascade' }),
    email: text('email').notNull(),
    role: text('role', { enum: TEAM_ROLES }).notNull(),
    tokenHash: text('token_hash').notNull(),
    invitedBy: text('invited_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
    expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
    acceptedAt: integer('accepted_at', { mode: 'timestamp_ms' }),
  },
  (t) => [uniqueIndex('invites_token_idx').on(t.tokenHash), index('invites_team_idx').on(t.teamId)],
);

/** A project groups the layouts and analyses of one chip or test structure; it belongs to one team. */
export const projects = sqliteTable(
  'projects',
  {
    id: text('id').primaryKey(),
    teamId: text('team_id')
      .notNull()
      .references(() => teams.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    description: text('description').notNull().default(''),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
  },
  (t) => [index('projects_team_idx').on(t.teamId), uniqueIndex('projects_team_name_idx').on(t.teamId, t.name)],
);

export type TeamRow = typeof teams.$inferSelect;
export type MembershipRow = typeof memberships.$inferSelect;
export type ProjectRow = typeof projects.$inferSelect;
