import type Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_PROJECTS, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { signIn, TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { addMembership, bearerFetch, mintToken, openTestDb, removeMembership, revokeToken } from './tokens-db';

/**
 * API tokens over HTTP: team scope, revocation, garbage tokens, membership loss, and the cross-site rule
 * (cookie writes need a same-site Origin; Bearer writes do not).
 */
const designer = DEMO_USERS.find((u) => u.role === 'designer')!;
const kestrel = DEMO_PROJECTS[0].id;

describe('API tokens over HTTP', () => {
  let server: TestServer;
  let db: Database.Database;
  let other: { userId: string; teamId: string; projectId: string; client: TestClient };
  let n = 0;

  beforeAll(async () => {
    server = await startTestServer();
    db = openTestDb(server.dbFile);
    // A second team through the app's own routes: sign up with a new team, create a project there.
    const client = new TestClient(server.baseUrl);
    expect((await client.post('/api/v1/auth/sign-up', { name: 'Priya Second', email: 'priya@second.example', password: 'second-team-password', teamName: 'Second Foundry Group' })).status).toBe(201);
    const me = (await (await client.get('/api/v1/me')).json()) as { user: { id: string }; teams: { id: string }[] };
    const teamId = me.teams[0]!.id;
    const created = await client.post('/api/v1/projects', { teamId, name: 'Second team chip' });
    expect(created.status).toBe(201);
    other = { userId: me.user.id, teamId, projectId: ((await created.json()) as { project: { id: string } }).project.id, client };
  });
  afterAll(async () => {
    db?.close();
    await server?.stop();
  });

  it('a token works for its own team and records when it was last used', async () => {
    const { id, token } = mintToken(db, designer.id, DEMO_TEAM.id);
    const api = bearerFetch(server.baseUrl, token);
    expect((await api(`/api/v1/projects/${kestrel}`)).status).toBe(200);
    const row = db.prepare('SELECT last_used_at FROM api_tokens WHERE id = ?').get(id) as { last_used_at: number | null };
    expect(row.last_used_at).toBeGreaterThan(Date.now() - 60_000);
  });

  it('a token is refused (404) for another team\'s project, even when its owner belongs to that team', async () => {
    // Priya joins the demo team too, but her token is scoped to her own team.
    addMembership(db, DEMO_TEAM.id, other.userId, 'designer');
    try {
      const api = bearerFetch(server.baseUrl, mintToken(db, other.userId, other.teamId).token);
      expect((await api(`/api/v1/projects/${other.projectId}`)).status).toBe(200);
      expect((await api(`/api/v1/projects/${kestrel}`)).status).toBe(404);
      const create = await api('/api/v1/projects', { method: 'POST', json: { teamId: DEMO_TEAM.id, name: `Scoped ${++n}` } });
      expect(create.status).toBe(404);
      const list = (await (await api('/api/v1/projects')).json()) as { projects: { teamId: string }[] };
      expect(new Set(list.projects.map((p) => p.teamId))).toEqual(new Set([other.teamId]));
      const me = (await (await api('/api/v1/me')).json()) as { teams: { id: string }[] };
      expect(me.teams.map((t) => t.id)).toEqual([other.teamId]);
      // the same person with a browser session reaches both teams
      expect((await other.client.get(`/api/v1/projects/${kestrel}`)).status).toBe(200);
    } finally {
      removeMembership(db, DEMO_TEAM.id, other.userId);
    }
    // and a demo member's token never reaches the second team
    const demoApi = bearerFetch(server.baseUrl, mintToken(db, designer.id, DEMO_TEAM.id).token);
    expect((await demoApi(`/api/v1/projects/${other.projectId}`)).status).toBe(404);
  });

  it('a revoked token gets 401 at once', async () => {
    const { id, token } = mintToken(db, designer.id, DEMO_TEAM.id);
    const api = bearerFetch(server.baseUrl, token);
    expect((await api('/api/v1/me')).status).toBe(200);
    revokeToken(db, id);
    const res = await api('/api/v1/me');
    expect(res.status).toBe(401);
    expect(((await res.json()) as { error: { code: string } }).error.code).toBe('unauthorized');
    expect((await api(`/api/v1/projects/${kestrel}`)).status).toBe(401);
  });

  it('a garbage or malformed token gets 401, and never falls back to the cookie', async () => {
    const garbage = bearerFetch(server.baseUrl, 'trn_this-is-not-a-real-token-at-all-0000000000');
    expect((await garbage('/api/v1/me')).status).toBe(401);
    expect((await garbage(`/api/v1/projects/${kestrel}`)).status).toBe(401);
    expect((await fetch(`${server.baseUrl}/api/v1/me`, { headers: { authorization: 'Bearer' } })).status).toBe(401);
    expect((await fetch(`${server.baseUrl}/api/v1/me`, { headers: { authorization: 'Basic ZGVtbzpkZW1v' } })).status).toBe(401);
    const session = await signIn(server.baseUrl, designer.email, DEMO_PASSWORD_DEFAULT);
    const both = await session.request('/api/v1/me', { headers: { authorization: 'Bearer trn_wrong' } });
    expect(both.status).toBe(401);
  });

  it('a token stops working when its owner leaves the team', async () => {
    const api = bearerFetch(server.baseUrl, mintToken(db, other.userId, DEMO_TEAM.id).token);
    expect((await api('/api/v1/me')).status).toBe(401); // not a member of the demo team at all
    addMembership(db, DEMO_TEAM.id, other.userId, 'reviewer');
    expect((await api('/api/v1/me')).status).toBe(200);
    removeMembership(db, DEMO_TEAM.id, other.userId);
    expect((await api('/api/v1/me')).status).toBe(401);
  });

  it('cookie POST without Origin is refused 403; with a foreign Origin too; same-site Origin passes', async () => {
    const session = await signIn(server.baseUrl, designer.email, DEMO_PASSWORD_DEFAULT);
    const body = () => ({ teamId: DEMO_TEAM.id, name: `Origin check ${++n}` });
    const none = await session.post('/api/v1/projects', body(), { origin: null });
    expect(none.status).toBe(403);
    expect(((await none.json()) as { error: { code: string } }).error.code).toBe('forbidden');
    expect((await session.post('/api/v1/projects', body(), { origin: 'http://evil.example' })).status).toBe(403);
    expect((await session.post('/api/v1/projects', body())).status).toBe(201);
  });

  it('Bearer POST without Origin is accepted', async () => {
    const api = bearerFetch(server.baseUrl, mintToken(db, designer.id, DEMO_TEAM.id).token);
    const res = await api('/api/v1/projects', { method: 'POST', json: { teamId: DEMO_TEAM.id, name: `From CI ${++n}` } });
    expect(res.status, await res.clone().text()).toBe(201);
    // a token acts with its owner's role: a reviewer's token cannot create
    const reviewer = DEMO_USERS.find((u) => u.role === 'reviewer')!;
    const rApi = bearerFetch(server.baseUrl, mintToken(db, reviewer.id, DEMO_TEAM.id).token);
    expect((await rApi('/api/v1/projects', { method: 'POST', json: { teamId: DEMO_TEAM.id, name: `Reviewer ${++n}` } })).status).toBe(403);
  });
});
