import 'server-only';
import { count, eq } from 'drizzle-orm';
import type { z } from 'zod';
import { getDb } from '@/db/client';
import { memberships, teams, users } from '@/db/schema';
import { hashPassword, verifyPassword } from '@/lib/auth/password';
import { passwordWeakness } from '@/lib/auth/password-strength';
import { recordSignInSuccess, reserveAttempt, signInCounters, throttleRules, waitText } from '@/lib/auth/throttle';
import type { AuthUser } from '@/lib/auth/session';
import { ApiError } from '@/lib/http/errors';
import { recordAudit } from './audit';
import type { signInInput, signUpInput } from './schemas';

// Verified against when the e-mail is unknown, so a miss costs as long as a wrong password.
let dummyHash: Promise<string> | undefined;

function rateLimited(message: string, waitMs: number): ApiError {
  return new ApiError('rate_limited', `${message} Try again in ${waitText(waitMs)}.`, {
    headers: { 'Retry-After': String(Math.ceil(waitMs / 1000)) },
  });
}

/**
 * Checks e-mail and password from `clientAddress`. Each attempt is counted before the password is checked
 * (lib/auth/throttle.ts: per account and address, per address, per account from unknown addresses, with
 * exponential backoff kept in the database); ApiError 429 with Retry-After while a wait is running. ApiError 401
 * with one message for unknown e-mail or wrong password (no hint which).
 */
export async function authenticate(input: z.infer<typeof signInInput>, clientAddress: string): Promise<AuthUser> {
  const counters = signInCounters(input.email, clientAddress);
  const waitMs = reserveAttempt(counters);
  if (waitMs > 0) throw rateLimited('Too many failed sign-ins.', waitMs);
  const row = getDb().select().from(users).where(eq(users.email, input.email)).get();
  dummyHash ??= hashPassword('not-a-real-password-used-for-timing');
  const ok = await verifyPassword(row?.passwordHash ?? (await dummyHash), input.password);
  if (!row || !ok) {
    recordAudit({ actorId: row?.id ?? null, action: 'auth.sign_in_failed', detail: { email: input.email, address: clientAddress } });
    throw new ApiError('unauthorized', 'E-mail or password is wrong.');
  }
  recordSignInSuccess(input.email, clientAddress);
  recordAudit({ actorId: row.id, action: 'auth.sign_in' });
  return { id: row.id, email: row.email, name: row.name };
}

/** Counts one account creation from `clientAddress`; ApiError 429 while the sign-up backoff runs. */
export function chargeSignUp(clientAddress: string): void {
  const waitMs = reserveAttempt([{ rule: throttleRules().signUpAddress, key: clientAddress }]);
  if (waitMs > 0) throw rateLimited('Too many new accounts from this address.', waitMs);
}

/** ApiError 400 on the `password` field when the password is common or trivial (lib/auth/password-strength.ts). */
export function assertStrongPassword(password: string, userInputs: string[]): void {
  const weakness = passwordWeakness(password, userInputs);
  // The reason goes on the field (forms show it there); the top-level message stays short so it is not said twice.
  if (weakness) throw new ApiError('bad_request', 'Choose a password that is harder to guess.', { fieldErrors: { password: [weakness] } });
}

/** Whether an account exists for this (lower-cased) e-mail. */
export function accountExists(email: string): boolean {
  return getDb().select({ id: users.id }).from(users).where(eq(users.email, email)).get() !== undefined;
}

/**
 * Creates an account from `clientAddress` (charged to the sign-up limit; common or trivial passwords refused,
 * ApiError 400 on `password`). The first account of an empty instance, and any sign-up that names a team, becomes
 * admin of a new team. Throws ApiError 409 (field `email`) when the e-mail is taken.
 */
export async function signUp(input: z.infer<typeof signUpInput>, clientAddress: string): Promise<AuthUser> {
  chargeSignUp(clientAddress);
  assertStrongPassword(input.password, [input.email, input.name]);
  if (accountExists(input.email)) {
    throw new ApiError('conflict', 'An account with this e-mail already exists.', {
      fieldErrors: { email: ['An account with this e-mail already exists. Sign in instead.'] },
    });
  }
  const passwordHash = await hashPassword(input.password);
  const db = getDb();
  const user: AuthUser = { id: crypto.randomUUID(), email: input.email, name: input.name };
  db.transaction((tx) => {
    const isFirst = (tx.select({ n: count() }).from(users).get()?.n ?? 0) === 0;
    const now = new Date();
    tx.insert(users).values({ ...user, passwordHash, createdAt: now }).run();
    const wanted = input.teamName?.trim();
    if (isFirst || wanted) {
      const teamId = crypto.randomUUID();
      tx.insert(teams).values({ id: teamId, name: wanted || `${input.name}'s team`, createdAt: now }).run();
      tx.insert(memberships).values({ teamId, userId: user.id, role: 'admin', createdAt: now }).run();
    }
  });
  recordAudit({ actorId: user.id, action: 'auth.sign_up' });
  return user;
}

/**
 * Creates an account without any team (used when accepting an invite): charged to the sign-up limit of
 * `clientAddress`, password checked for strength.
 */
export async function createAccount(name: string, email: string, password: string, clientAddress: string): Promise<AuthUser> {
  chargeSignUp(clientAddress);
  assertStrongPassword(password, [email, name]);
  if (accountExists(email)) throw new ApiError('conflict', 'An account with this e-mail already exists.');
  const user: AuthUser = { id: crypto.randomUUID(), email, name };
  getDb()
    .insert(users)
    .values({ ...user, passwordHash: await hashPassword(password), createdAt: new Date() })
    .run();
  recordAudit({ actorId: user.id, action: 'auth.sign_up' });
  return user;
}
