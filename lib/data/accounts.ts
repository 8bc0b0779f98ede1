import 'server-only';
import { count, eq } from 'drizzle-orm';
import type { z } from 'zod';
import { getDb } from '@/db/client';
import { memberships, teams, users } from '@/db/schema';
import { hashPassword, verifyPassword } from '@/lib/auth/password';
import { signInLimiter } from '@/lib/auth/rate-limit';
import type { AuthUser } from '@/lib/auth/session';
import { ApiError } from '@/lib/http/errors';
import { recordAudit } from './audit';
import type { signInInput, signUpInput } from './schemas';

// Verified against when the e-mail is unknown, so a miss costs as long as a wrong password.
let dummyHash: Promise<string> | undefined;

/**
 * Checks e-mail and password. Throws ApiError 429 after too many failures for this e-mail (in-memory limiter)
 * and ApiError 401 with one message for unknown e-mail or wrong password (no hint which).
 */
export async function authenticate(input: z.infer<typeof signInInput>): Promise<AuthUser> {
  const limiter = signInLimiter();
  const key = input.email;
  const waitMs = limiter.retryAfterMs(key);
  if (waitMs > 0) {
    const minutes = Math.ceil(waitMs / 60_000);
    throw new ApiError('rate_limited', `Too many failed sign-ins for this account. Try again in ${minutes} min.`, {
      headers: { 'Retry-After': String(Math.ceil(waitMs / 1000)) },
    });
  }
  const row = getDb().select().from(users).where(eq(users.email, input.email)).get();
  dummyHash ??= hashPassword('not-a-real-password-used-for-timing');
  const ok = await verifyPassword(row?.passwordHash ?? (await dummyHash), input.password);
  if (!row || !ok) {
    limiter.recordFailure(key);
    recordAudit({ actorId: row?.id ?? null, action: 'auth.sign_in_failed', detail: { email: input.email } });
    throw new ApiError('unauthorized', 'E-mail or password is wrong.');
  }
  limiter.reset(key);
  recordAudit({ actorId: row.id, action: 'auth.sign_in' });
  return { id: row.id, email: row.email, name: row.name };
}

/** Whether an account exists for this (lower-cased) e-mail. */
export function accountExists(email: string): boolean {
  return getDb().select({ id: users.id }).from(users).where(eq(users.email, email)).get() !== undefined;
}

/**
 * Creates an account. The first account of an empty instance, and any sign-up that names a team, becomes
 * admin of a new team. Throws ApiError 409 (field `email`) when the e-mail is taken.
 */
export async function signUp(input: z.infer<typeof signUpInput>): Promise<AuthUser> {
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

/** Creates an account without any team (used when accepting an invite); password already validated. */
export async function createAccount(name: string, email: string, password: string): Promise<AuthUser> {
  if (accountExists(email)) throw new ApiError('conflict', 'An account with this e-mail already exists.');
  const user: AuthUser = { id: crypto.randomUUID(), email, name };
  getDb()
    .insert(users)
    .values({ ...user, passwordHash: await hashPassword(password), createdAt: new Date() })
    .run();
  recordAudit({ actorId: user.id, action: 'auth.sign_up' });
  return user;
}
