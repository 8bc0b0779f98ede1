import 'server-only';
import type { Session } from 'lucia';
import { cookies, headers } from 'next/headers';
import { cache } from 'react';
import { ApiError } from '@/lib/http/errors';
import { getLucia } from './lucia';

/** The signed-in person as the app sees them; never contains the password hash. */
export type AuthUser = { id: string; email: string; name: string };

export type SessionResult = { user: AuthUser; session: Session } | { user: null; session: null };

/**
 * The session of the current request from the cookie, validated against the DB, memoised per request.
 * Extends the cookie when lucia refreshed the session (only possible in route handlers and server actions;
 * in server components the cookie store is read-only, and the next action or handler refreshes it).
 */
export const getCurrentSession = cache(async (): Promise<SessionResult> => {
  // A request with an Authorization header is authenticated by its token or not at all; its cookie never counts
  // (lib/auth/request-access.ts), so a token-bearing request cannot slip past the Origin check on the cookie.
  if ((await headers()).get('authorization') !== null) return { user: null, session: null };
  const store = await cookies();
  // Opened only after headers()/cookies(): prerendering at build time stops at those, so a build never opens
  // (and creates) the default database.
  const lucia = getLucia();
  const sessionId = store.get(lucia.sessionCookieName)?.value ?? null;
  if (!sessionId) return { user: null, session: null };
  const result = await lucia.validateSession(sessionId);
  try {
    if (result.session?.fresh) {
      const c = lucia.createSessionCookie(result.session.id);
      store.set(c.name, c.value, c.attributes);
    }
    if (!result.session) {
      const c = lucia.createBlankSessionCookie();
      store.set(c.name, c.value, c.attributes);
    }
  } catch {
    // Read-only cookie store (server component render): nothing to do.
  }
  if (!result.session || !result.user) return { user: null, session: null };
  return { user: { id: result.user.id, email: result.user.email, name: result.user.name }, session: result.session };
});

/** The signed-in user, or ApiError 401. */
export async function requireUser(): Promise<AuthUser> {
  const { user } = await getCurrentSession();
  if (!user) throw new ApiError('unauthorized');
  return user;
}

/** Creates a session for `userId` and sets the cookie. Route handlers and server actions only. */
export async function startSession(userId: string): Promise<void> {
  const lucia = getLucia();
  const session = await lucia.createSession(userId, {});
  const c = lucia.createSessionCookie(session.id);
  (await cookies()).set(c.name, c.value, c.attributes);
}

/** Invalidates the current session (if any) and clears the cookie. */
export async function endSession(): Promise<void> {
  const lucia = getLucia();
  const { session } = await getCurrentSession();
  if (session) await lucia.invalidateSession(session.id);
  const c = lucia.createBlankSessionCookie();
  (await cookies()).set(c.name, c.value, c.attributes);
}
