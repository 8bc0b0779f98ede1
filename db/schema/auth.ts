import { integer, sqliteTable, text } from 'drizzle-orm/sqlite-core';

/** Accounts. `email` is stored lower-cased; `passwordHash` is an argon2id PHC string. Timestamps are Unix ms. */
export const users = sqliteTable('users', {
  id: text('id').primaryKey(),
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  passwordHash: text('password_hash').notNull(),
  createdAt: integer('created_at', { mode: 'timestamp_ms' }).notNull(),
});

/** Lucia sessions. Column property names (`id`, `userId`, `expiresAt`) are fixed by the lucia Drizzle adapter. */
export const sessions = sqliteTable('sessions', {
  id: text('id').primaryKey(),
  userId: text('user_id')
    .notNull()
    .references(() => users.id, { onDelete: 'cascade' }),
  expiresAt: integer('expires_at').notNull(),
});

export type UserRow = typeof users.$inferSelect;
