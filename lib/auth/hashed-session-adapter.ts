import type { Adapter, DatabaseSession, DatabaseUser } from 'lucia';
import { createHash } from 'node:crypto';

/** What the sessions table stores for a session id: its SHA-256, hex. */
export function hashSessionId(sessionId: string): string {
  return createHash('sha256').update(sessionId).digest('hex');
}

/**
 * Wraps a lucia adapter so the database never holds a usable session id: lucia hands the adapter the id from
 * the cookie, this stores and looks up SHA-256(id) instead. A read of the sessions table (backup, leaked file)
 * then yields nothing that can be put in a cookie. Session ids carry 125 random bits, so an unsalted fast hash is
 * enough (no guessing attack on the preimage).
 *
 * getUserSessions returns the stored hashes as ids; they identify sessions but cannot be passed back to
 * invalidateSession (nothing in Trenchant does that; use invalidateUserSessions).
 */
export class HashedSessionAdapter implements Adapter {
  constructor(private readonly inner: Adapter) {}

  async getSessionAndUser(sessionId: string): Promise<[DatabaseSession | null, DatabaseUser | null]> {
    const [session, user] = await this.inner.getSessionAndUser(hashSessionId(sessionId));
    // lucia uses the returned id for follow-up calls (refresh, delete), which hash again: hand back the plain id.
    return [session ? { ...session, id: sessionId } : null, user];
  }

  getUserSessions(userId: string): Promise<DatabaseSession[]> {
    return this.inner.getUserSessions(userId);
  }

  setSession(session: DatabaseSession): Promise<void> {
    return this.inner.setSession({ ...session, id: hashSessionId(session.id) });
  }

  updateSessionExpiration(sessionId: string, expiresAt: Date): Promise<void> {
    return this.inner.updateSessionExpiration(hashSessionId(sessionId), expiresAt);
  }

  deleteSession(sessionId: string): Promise<void> {
    return this.inner.deleteSession(hashSessionId(sessionId));
  }

  deleteUserSessions(userId: string): Promise<void> {
    return this.inner.deleteUserSessions(userId);
  }

  deleteExpiredSessions(): Promise<void> {
    return this.inner.deleteExpiredSessions();
  }
}
