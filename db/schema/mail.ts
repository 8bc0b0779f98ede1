import { index, integer, sqliteTable, text } from 'drizzle-orm/sqlite-core';

/**
 * Messages received by the built-in development SMTP server (lib/mail/fake-smtp.ts). With SMTP_URL set, mail
 * goes to the real server and nothing lands here. `teamId` comes from the X-Trenchant-Team header the app adds.
 */
export const outbox = sqliteTable(
  'outbox',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    receivedAt: integer('received_at', { mode: 'timestamp_ms' }).notNull(),
    teamId: text('team_id'),
    fromAddress: text('from_address').notNull(),
    toAddresses: text('to_addresses').notNull(),
    subject: text('subject').notNull(),
    body: text('body').notNull(),
    raw: text('raw').notNull(),
  },
  (t) => [index('outbox_team_idx').on(t.teamId, t.receivedAt)],
);

export type OutboxRow = typeof outbox.$inferSelect;
