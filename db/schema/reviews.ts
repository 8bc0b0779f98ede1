import { index, integer, primaryKey, sqliteTable, text } from 'drizzle-orm/sqlite-core';
import { analyses } from './analyses';
import { users } from './auth';
import { teams } from './teams';

/**
 * The review of an analysis's findings. A finding is one row of analysis_flags, named here by
 * (analysis id, flag_key) so the review survives the worker re-saving its flag rows. A finding without a
 * `finding_reviews` row is open and unassigned. Statuses are listed in lib/review/statuses.ts.
 */

export const FINDING_STATUSES = ['open', 'needs_change', 'waived', 'fixed_later', 'verified'] as const;
export type FindingStatus = (typeof FINDING_STATUSES)[number];

/** Current state of one finding. */
export const findingReviews = sqliteTable(
  'finding_reviews',
  {
    analysisId: text('analysis_id')
      .notNull()
      .references(() => analyses.id, { onDelete: 'cascade' }),
    flagKey: text('flag_key').notNull(),
    status: text('status', { enum: FINDING_STATUSES }).notNull().default('open'),
    assigneeId: text('assignee_id').references(() => users.id, { onDelete: 'set null' }),
    /** Written reason of a waiver (status 'waived'); kept when the status later changes, for the record. */
    waiverReason: text('waiver_reason'),
    waiverApproverId: text('waiver_approver_id').references(() => users.id, { onDelete: 'set null' }),
    waiverApproverName: text('waiver_approver_name'),
    waivedAt: integer('waived_at', { mode: 'timestamp_ms' }),
    /** Set when the waiver was carried over from an earlier analysis by a revision compare. */
    carriedFromAnalysisId: text('carried_from_analysis_id'),
    carriedNote: text('carried_note'),
    updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull(),
    updatedBy: text('updated_by').references(() => users.id, { onDelete: 'set null' }),
  },
  (t) => [primaryKey({ columns: [t.analysisId, t.flagKey] }), index('finding_reviews_assignee_idx').on(t.assigneeId)],
);

export const FINDING_EVENT_TYPES = ['comment', 'status', 'assign', 'carry'] as const;
export type FindingEventType = (typeof FINDING_EVENT_TYPES)[number];

/** The thread of a finding: comments, status changes and assignments, with who and when. Append-only. */
export const findingEvents = sqliteTable(
  'finding_events',
  {
    id: text('id').primaryKey(),
    analysisId: text('analysis_id')
      .notNull()
      .references(() => analyses.id, { onDelete: 'cascade' }),
    flagKey: text('flag_key').notNull(),
    type: text('type', { enum: FINDING_EVENT_TYPES }).notNull(),
    at: integer('at', { mode: 'timestamp_ms' }).notNull(),
    actorId: text('actor_id').references(() => users.id, { onDelete: 'set null' }),
    /** Name at the time, so the thread reads the same after an account is removed. */
    actorName: text('actor_name').notNull(),
    fromStatus: text('from_status', { enum: FINDING_STATUSES }),
    toStatus: text('to_status', { enum: FINDING_STATUSES }),
    assigneeId: text('assignee_id'),
    assigneeName: text('assignee_name'),
    /** Comment text or the status change's reason; plain text, never HTML. */
    body: text('body').notNull().default(''),
    /** User ids mentioned in the body. */
    mentions: text('mentions', { mode: 'json' }).$type<string[]>().notNull().default([]),
  },
  (t) => [index('finding_events_flag_idx').on(t.analysisId, t.flagKey, t.at)],
);

/** Sign-off of one analysis. One per analysis; once present, the analysis's review is frozen. */
export const analysisSignoffs = sqliteTable('analysis_signoffs', {
  analysisId: text('analysis_id')
    .primaryKey()
    .references(() => analyses.id, { onDelete: 'cascade' }),
  signedBy: text('signed_by').references(() => users.id, { onDelete: 'set null' }),
  signedByName: text('signed_by_name').notNull(),
  signedAt: integer('signed_at', { mode: 'timestamp_ms' }).notNull(),
  modelName: text('model_name').notNull(),
  modelVersion: text('model_version').notNull(),
  calibrationDate: text('calibration_date'),
  note: text('note').notNull().default(''),
  /** Finding counts by status at the moment of sign-off. */
  counts: text('counts', { mode: 'json' }).$type<Record<string, number>>().notNull(),
});

export const NOTIFICATION_KINDS = ['assignment', 'mention', 'status'] as const;
export type NotificationKind = (typeof NOTIFICATION_KINDS)[number];

/** In-app notifications (the same events may also go out by e-mail, see notification_prefs). */
export const notifications = sqliteTable(
  'notifications',
  {
    id: text('id').primaryKey(),
    userId: text('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    teamId: text('team_id').references(() => teams.id, { onDelete: 'cascade' }),
    kind: text('kind', { enum: NOTIFICATION_KINDS }).notNull(),
    at: integer('at', { mode: 'timestamp_ms' }).notNull(),
    actorName: text('actor_name').notNull(),
    analysisId: text('analysis_id').references(() => analyses.id, { onDelete: 'cascade' }),
    flagKey: text('flag_key'),
    title: text('title').notNull(),
    body: text('body').notNull().default(''),
    readAt: integer('read_at', { mode: 'timestamp_ms' }),
  },
  (t) => [index('notifications_user_idx').on(t.userId, t.readAt, t.at)],
);

/** Per-user e-mail opt-outs by notification kind (no row = every kind is mailed). In-app notifications always show. */
export const notificationPrefs = sqliteTable('notification_prefs', {
  userId: text('user_id')
    .primaryKey()
    .references(() => users.id, { onDelete: 'cascade' }),
  emailAssignment: integer('email_assignment', { mode: 'boolean' }).notNull().default(true),
  emailMention: integer('email_mention', { mode: 'boolean' }).notNull().default(true),
  emailStatus: integer('email_status', { mode: 'boolean' }).notNull().default(true),
  updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull(),
});

export type FindingReviewRow = typeof findingReviews.$inferSelect;
export type FindingEventRow = typeof findingEvents.$inferSelect;
export type AnalysisSignoffRow = typeof analysisSignoffs.$inferSelect;
export type NotificationRow = typeof notifications.$inferSelect;
export type NotificationPrefsRow = typeof notificationPrefs.$inferSelect;
