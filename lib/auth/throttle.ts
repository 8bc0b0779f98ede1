import { and, eq, lt } from 'drizzle-orm';
import { getDb, type Db } from '@/db/client';
import { authThrottle, knownSignInAddresses } from '@/db/schema';

/**
 * Sign-in and sign-up limits with exponential backoff, kept in the database (auth_throttle) so they hold across
 * restarts. Each rule lets `free` attempts through, then every further counted attempt doubles the wait, from
 * `baseMs` up to `maxMs`; a counter with no attempt for `decayMs` starts over. Nothing is a hard lock: waits are
 * bounded, and the account-wide rule skips addresses the account has signed in from before, so wrong passwords
 * sent from elsewhere cannot keep the owner out.
 */
export type ThrottleRule = { scope: string; free: number; baseMs: number; maxMs: number; decayMs: number };

const MINUTE = 60_000;
const HOUR = 60 * MINUTE;

function envInt(name: string, fallback: number): number {
  const v = Number(process.env[name]);
  return Number.isInteger(v) && v > 0 ? v : fallback;
}

/** The rules in force (read each call so tests and operators can set the environment). */
export function throttleRules() {
  return {
    /** one account from one address: the usual guessing attack */
    signInPair: { scope: 'signin-pair', free: envInt('TRENCHANT_SIGNIN_MAX_FAILURES', 5), baseMs: 30_000, maxMs: 15 * MINUTE, decayMs: HOUR },
    /** one address, any account: password spraying */
    signInAddress: { scope: 'signin-address', free: 20, baseMs: 30_000, maxMs: HOUR, decayMs: HOUR },
    /** one account, any address (not for the account's known addresses): distributed guessing */
    signInAccount: { scope: 'signin-account', free: 10, baseMs: 30_000, maxMs: 15 * MINUTE, decayMs: HOUR },
    /** sign-ups (and invitation accounts) from one address, every attempt counted */
    signUpAddress: { scope: 'signup-address', free: envInt('TRENCHANT_SIGNUP_MAX_PER_HOUR', 10), baseMs: MINUTE, maxMs: HOUR, decayMs: HOUR },
  } satisfies Record<string, ThrottleRule>;
}

/** The wait after the `count`-th counted attempt: 0 while free, then base·2^(count−free), capped. */
export function backoffMs(rule: ThrottleRule, count: number): number {
  if (count < rule.free) return 0;
  return Math.min(rule.maxMs, rule.baseMs * 2 ** Math.min(30, count - rule.free));
}

type Counter = { rule: ThrottleRule; key: string };

function row(db: Db, c: Counter) {
  return db.select().from(authThrottle).where(and(eq(authThrottle.scope, c.rule.scope), eq(authThrottle.key, c.key))).get();
}

/** Milliseconds until every counter lets an attempt through (0 = now). */
export function waitMs(counters: Counter[], now = Date.now(), db: Db = getDb()): number {
  let wait = 0;
  for (const c of counters) {
    const r = row(db, c);
    if (r && r.blockedUntil > now) wait = Math.max(wait, r.blockedUntil - now);
  }
  return wait;
}

/**
 * Counts one attempt on every counter, atomically with the check: refuses (returns the wait) when any counter is
 * still waiting, else records the attempt and returns 0. Counting before the password is checked means parallel
 * requests cannot all slip through before the first failure is written.
 */
export function reserveAttempt(counters: Counter[], now = Date.now(), db: Db = getDb()): number {
  return db.transaction((tx) => {
    const wait = waitMs(counters, now, tx as unknown as Db);
    if (wait > 0) return wait;
    for (const c of counters) {
      const r = row(tx as unknown as Db, c);
      const count = (r && now - r.lastAt <= c.rule.decayMs ? r.count : 0) + 1;
      const blockedUntil = now + backoffMs(c.rule, count);
      tx.insert(authThrottle)
        .values({ scope: c.rule.scope, key: c.key, count, lastAt: now, blockedUntil })
        .onConflictDoUpdate({ target: [authThrottle.scope, authThrottle.key], set: { count, lastAt: now, blockedUntil } })
        .run();
    }
    // Old counters carry no information any more; drop them so the table stays small.
    tx.delete(authThrottle).where(lt(authThrottle.lastAt, now - 24 * HOUR)).run();
    return 0;
  });
}

/** Takes back one counted attempt (a successful sign-in should not use up the address's allowance). */
export function releaseAttempt(c: Counter, db: Db = getDb()): void {
  const r = row(db, c);
  if (!r) return;
  const count = Math.max(0, r.count - 1);
  db.update(authThrottle)
    .set({ count, blockedUntil: r.lastAt + backoffMs(c.rule, count) })
    .where(and(eq(authThrottle.scope, c.rule.scope), eq(authThrottle.key, c.key)))
    .run();
}

/** Clears counters (after a successful sign-in: the account and the account-from-this-address pair). */
export function clearCounters(counters: Counter[], db: Db = getDb()): void {
  for (const c of counters) {
    db.delete(authThrottle).where(and(eq(authThrottle.scope, c.rule.scope), eq(authThrottle.key, c.key))).run();
  }
}

export function isKnownAddress(email: string, address: string, db: Db = getDb()): boolean {
  return (
    db
      .select({ e: knownSignInAddresses.email })
      .from(knownSignInAddresses)
      .where(and(eq(knownSignInAddresses.email, email), eq(knownSignInAddresses.address, address)))
      .get() !== undefined
  );
}

export function rememberAddress(email: string, address: string, now = Date.now(), db: Db = getDb()): void {
  db.insert(knownSignInAddresses)
    .values({ email, address, lastSignInAt: now })
    .onConflictDoUpdate({ target: [knownSignInAddresses.email, knownSignInAddresses.address], set: { lastSignInAt: now } })
    .run();
}

const pairKey = (email: string, address: string) => `${email}|${address}`;

/** The counters one sign-in attempt is charged to. */
export function signInCounters(email: string, address: string, db: Db = getDb()): Counter[] {
  const rules = throttleRules();
  const counters: Counter[] = [
    { rule: rules.signInPair, key: pairKey(email, address) },
    { rule: rules.signInAddress, key: address },
  ];
  if (!isKnownAddress(email, address, db)) counters.push({ rule: rules.signInAccount, key: email });
  return counters;
}

/**
 * After a successful sign-in: the address gets its counted attempt back, the account's counters start over, and
 * the address becomes one the account-wide backoff never applies to.
 */
export function recordSignInSuccess(email: string, address: string, now = Date.now(), db: Db = getDb()): void {
  const rules = throttleRules();
  releaseAttempt({ rule: rules.signInAddress, key: address }, db);
  clearCounters([{ rule: rules.signInPair, key: pairKey(email, address) }, { rule: rules.signInAccount, key: email }], db);
  rememberAddress(email, address, now, db);
}

/** "30 s", "4 min": how long to wait, for messages. */
export function waitText(ms: number): string {
  const s = Math.ceil(ms / 1000);
  return s < 120 ? `${s} s` : `${Math.ceil(s / 60)} min`;
}
