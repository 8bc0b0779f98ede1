import { createHash } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, setDbForTesting, type Db } from '@/db/client';
import { apiTokens, memberships, teams, users } from '@/db/schema';
import { createApiToken, listApiTokens, listApiTokensWithTeams, resolveApiToken, revokeApiToken } from '@/lib/auth/api-tokens';

/** lib/auth/api-tokens.ts against an in-memory database: storage, resolution, scope and revocation. */
describe('API token store', () => {
  let db: Db;
  beforeAll(() => {
    db = openDatabase(':memory:');
    setDbForTesting(db);
    const at = new Date();
    db.insert(teams).values([{ id: 't1', name: 'Alpha', createdAt: at }, { id: 't2', name: 'Beta', createdAt: at }]).run();
    db.insert(users).values([
      { id: 'u1', email: 'u1@example.com', name: 'User One', passwordHash: 'x', createdAt: at },
      { id: 'u2', email: 'u2@example.com', name: 'User Two', passwordHash: 'x', createdAt: at },
    ]).run();
    db.insert(memberships).values([
      { teamId: 't1', userId: 'u1', role: 'designer', createdAt: at },
      { teamId: 't2', userId: 'u2', role: 'admin', createdAt: at },
    ]).run();
  });
  afterAll(() => setDbForTesting(undefined));

  it('stores only the SHA-256 of a 256-bit random token and a short prefix', () => {
    const { token, row } = createApiToken('u1', 't1', 'ci');
    expect(token).toMatch(/^trn_[A-Za-z0-9_-]{43}$/); // 32 bytes base64url = 43 characters
    const stored = db.select().from(apiTokens).where(eq(apiTokens.id, row.id)).get()!;
    // SHA-256 hex computed independently with node:crypto
    expect(stored.tokenHash).toBe(createHash('sha256').update(token).digest('hex'));
    expect(stored.prefix).toBe(token.slice(0, 10));
    expect(JSON.stringify(stored)).not.toContain(token.slice(10));
    expect(Object.keys(listApiTokens('u1')[0]!)).not.toContain('tokenHash');
    expect(listApiTokensWithTeams('u1')[0]).toMatchObject({ name: 'ci', teamName: 'Alpha' });
  });

  it('resolves a token to its owner and team, and marks it used', () => {
    const { token, row } = createApiToken('u1', 't1', 'resolve');
    expect(resolveApiToken(token)).toEqual({ user: { id: 'u1', email: 'u1@example.com', name: 'User One' }, teamId: 't1', tokenId: row.id });
    expect(db.select().from(apiTokens).where(eq(apiTokens.id, row.id)).get()!.lastUsedAt).toBeInstanceOf(Date);
    expect(resolveApiToken(`${token}x`)).toBeNull();
    expect(resolveApiToken('trn_')).toBeNull();
  });

  it('revokes only the owner\'s own active tokens', () => {
    const { token, row } = createApiToken('u1', 't1', 'revoke me');
    expect(revokeApiToken('u2', row.id)).toBe(false); // someone else's token
    expect(resolveApiToken(token)).not.toBeNull();
    expect(revokeApiToken('u1', row.id)).toBe(true);
    expect(revokeApiToken('u1', row.id)).toBe(false); // already revoked
    expect(resolveApiToken(token)).toBeNull();
  });

  it('stops resolving when the owner is no longer in the token\'s team', () => {
    const { token } = createApiToken('u1', 't2', 'not a member'); // u1 is not in t2
    expect(resolveApiToken(token)).toBeNull();
    db.insert(memberships).values({ teamId: 't2', userId: 'u1', role: 'reviewer', createdAt: new Date() }).run();
    expect(resolveApiToken(token)?.teamId).toBe('t2');
  });
});
