/**
 * Test-side access to a started server's SQLite file (WAL mode, so the server keeps working while the test
 * writes). Used to mint API tokens the way lib/auth/api-tokens.ts stores them — only the SHA-256 — without a
 * browser, and to add memberships for cross-team cases.
 */
import Database from 'better-sqlite3';
import { createHash, randomBytes, randomUUID } from 'node:crypto';

export type TestToken = { id: string; token: string };

export function sha256Hex(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

export function openTestDb(dbFile: string): Database.Database {
  const db = new Database(dbFile);
  db.pragma('busy_timeout = 5000');
  return db;
}

/** Inserts a token row for `userId` scoped to `teamId`; returns the plain token. */
export function mintToken(db: Database.Database, userId: string, teamId: string, name = 'test token'): TestToken {
  const token = `trn_${randomBytes(32).toString('base64url')}`;
  const id = randomUUID();
  db.prepare(
    'INSERT INTO api_tokens (id, user_id, team_id, name, prefix, token_hash, created_at) VALUES (?, ?, ?, ?, ?, ?, ?)',
  ).run(id, userId, teamId, name, token.slice(0, 10), sha256Hex(token), Date.now());
  return { id, token };
}

export function revokeToken(db: Database.Database, id: string): void {
  db.prepare('UPDATE api_tokens SET revoked_at = ? WHERE id = ?').run(Date.now(), id);
}

export function addMembership(db: Database.Database, teamId: string, userId: string, role: string): void {
  db.prepare('INSERT INTO memberships (team_id, user_id, role, created_at) VALUES (?, ?, ?, ?)').run(teamId, userId, role, Date.now());
}

export function removeMembership(db: Database.Database, teamId: string, userId: string): void {
  db.prepare('DELETE FROM memberships WHERE team_id = ? AND user_id = ?').run(teamId, userId);
}

/** A fetch with a Bearer token and no cookie and no Origin header (what a script sends). */
export function bearerFetch(baseUrl: string, token: string) {
  return (path: string, init: { method?: string; json?: unknown; headers?: Record<string, string> } = {}) =>
    fetch(`${baseUrl}${path}`, {
      method: init.method ?? 'GET',
      headers: {
        authorization: `Bearer ${token}`,
        ...(init.json !== undefined ? { 'content-type': 'application/json' } : {}),
        ...init.headers,
      },
      body: init.json !== undefined ? JSON.stringify(init.json) : undefined,
      redirect: 'manual',
    });
}
