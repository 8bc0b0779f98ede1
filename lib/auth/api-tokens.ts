import 'server-only';
import { and, desc, eq, isNull } from 'drizzle-orm';
import { createHash, randomBytes, randomUUID } from 'node:crypto';
import { getDb } from '@/db/client';
import { apiTokens, teams, users, type ApiTokenRow } from '@/db/schema';
import { teamRoleOf } from './guard';
import type { AuthUser } from './session';

/** Tokens look like `trn_<43 base64url chars>` (32 random bytes); the prefix makes leaked ones easy to grep for. */
const TOKEN_PREFIX = 'trn_';

/** How precisely "last used" is kept, ms. */
const LAST_USED_RESOLUTION_MS = 60_000;

/** Active (unrevoked) tokens one person may hold; more is a sign of tokens not being cleaned up. */
export const MAX_ACTIVE_TOKENS = 25;

export function hashApiToken(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

/** Creates a token for `userId` scoped to `teamId`. The plain token is returned once and never stored. */
export function createApiToken(userId: string, teamId: string, name: string): { token: string; row: ApiTokenRow } {
  const token = TOKEN_PREFIX + randomBytes(32).toString('base64url');
  const row: ApiTokenRow = {
    id: randomUUID(),
    userId,
    teamId,
    name,
    prefix: token.slice(0, TOKEN_PREFIX.length + 6),
    tokenHash: hashApiToken(token),
    createdAt: new Date(),
    lastUsedAt: null,
    revokedAt: null,
  };
  getDb().insert(apiTokens).values(row).run();
  return { token, row };
}

/** The caller's own tokens (never the hashes). */
export function listApiTokens(userId: string): Omit<ApiTokenRow, 'tokenHash'>[] {
  return getDb()
    .select({
      id: apiTokens.id,
      userId: apiTokens.userId,
      teamId: apiTokens.teamId,
      name: apiTokens.name,
      prefix: apiTokens.prefix,
      createdAt: apiTokens.createdAt,
      lastUsedAt: apiTokens.lastUsedAt,
      revokedAt: apiTokens.revokedAt,
    })
    .from(apiTokens)
    .where(eq(apiTokens.userId, userId))
    .all();
}

/** The caller's own tokens with their team's name, newest first, for the tokens page. */
export function listApiTokensWithTeams(userId: string): (Omit<ApiTokenRow, 'tokenHash' | 'userId'> & { teamName: string })[] {
  return getDb()
    .select({
      id: apiTokens.id,
      teamId: apiTokens.teamId,
      teamName: teams.name,
      name: apiTokens.name,
      prefix: apiTokens.prefix,
      createdAt: apiTokens.createdAt,
      lastUsedAt: apiTokens.lastUsedAt,
      revokedAt: apiTokens.revokedAt,
    })
    .from(apiTokens)
    .innerJoin(teams, eq(teams.id, apiTokens.teamId))
    .where(eq(apiTokens.userId, userId))
    .orderBy(desc(apiTokens.createdAt))
    .all();
}

/** One of the caller's tokens (for audit details), or undefined. */
export function findApiToken(userId: string, tokenId: string): Omit<ApiTokenRow, 'tokenHash'> | undefined {
  return listApiTokens(userId).find((t) => t.id === tokenId);
}

/** Revokes one of the caller's tokens; false when it is not theirs or already revoked. */
export function revokeApiToken(userId: string, tokenId: string): boolean {
  const result = getDb()
    .update(apiTokens)
    .set({ revokedAt: new Date() })
    .where(and(eq(apiTokens.id, tokenId), eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
    .run();
  return result.changes > 0;
}

/**
 * Resolves a presented token to its owner and team scope, or null when unknown, revoked, or when the owner has
 * since left the team (a token never outlives its owner's membership).
 */
export function resolveApiToken(token: string): { user: AuthUser; teamId: string; tokenId: string } | null {
  const db = getDb();
  const row = db
    .select({
      id: apiTokens.id,
      teamId: apiTokens.teamId,
      revokedAt: apiTokens.revokedAt,
      lastUsedAt: apiTokens.lastUsedAt,
      user: { id: users.id, email: users.email, name: users.name },
    })
    .from(apiTokens)
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(eq(apiTokens.tokenHash, hashApiToken(token)))
    .get();
  if (!row || row.revokedAt || !teamRoleOf(row.user.id, row.teamId)) return null;
  // One write a minute at most: scripts polling progress should not turn every read into a write.
  const now = Date.now();
  if (!row.lastUsedAt || now - row.lastUsedAt.getTime() > LAST_USED_RESOLUTION_MS) {
    db.update(apiTokens).set({ lastUsedAt: new Date(now) }).where(eq(apiTokens.id, row.id)).run();
  }
  return { user: row.user, teamId: row.teamId, tokenId: row.id };
}
