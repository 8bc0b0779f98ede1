import { index, integer, primaryKey, sqliteTable, text } from 'drizzle-orm/sqlite-core';

/**
 * Attempt counters of the sign-in and sign-up limits (lib/auth/throttle.ts), kept in the database so they hold
 * across restarts and between server processes. One row per (scope, key), e.g. ('signin-address', '203.0.113.9')
 * or ('signin-account', 'ada@example.com'). Times are Unix ms.
 */
export const authThrottle = sqliteTable(
  'auth_throttle',
  {
    scope: text('scope').notNull(),
    key: text('key').notNull(),
    /** failures (sign-in) or attempts (sign-up) since the counter last decayed to zero */
    count: integer('count').notNull(),
    lastAt: integer('last_at').notNull(),
    /** no attempt of this scope and key is served before this time */
    blockedUntil: integer('blocked_until').notNull(),
  },
  (t) => [primaryKey({ columns: [t.scope, t.key] }), index('auth_throttle_last_idx').on(t.lastAt)],
);

/**
 * Client addresses an account has signed in from successfully. The account-wide backoff does not apply to
 * these, so a flood of wrong passwords from elsewhere cannot lock the owner out of their account.
 */
export const knownSignInAddresses = sqliteTable(
  'known_sign_in_addresses',
  {
    email: text('email').notNull(),
    address: text('address').notNull(),
    lastSignInAt: integer('last_sign_in_at').notNull(),
  },
  (t) => [primaryKey({ columns: [t.email, t.address] })],
);

export type AuthThrottleRow = typeof authThrottle.$inferSelect;
