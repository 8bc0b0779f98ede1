/**
 * Authorisation of every pipeline route × every team role (lib/auth/permissions.ts is the table), anonymous
 * callers, API tokens of the right team, of another team, and revoked tokens.
 */
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, setDbForTesting } from '@/db/client';
import { createApiToken, revokeApiToken } from '@/lib/auth/api-tokens';
import { TEAM_ROLES, type TeamRole } from '@/lib/auth/permissions';
import { DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { TestClient } from '../support/http';
import { itAllowsWhatThePermissionTableSays, type RouteCase } from '../support/route-roles';
import { startTestServer, type TestServer } from '../support/server';
import { PROJECT, signInAs, startAnalysis, TEST_MODEL, TRENCH_SETTINGS, trenchLayoutGds, upload, uploadRevision, waitFor } from './support';

type Route = RouteCase<BodyInit | Record<string, unknown>>;

describe('authorisation of the pipeline routes', () => {
  let server: TestServer;
  const clients = {} as Record<TeamRole, TestClient>;
  let layoutId = '';
  let revisionId = '';
  let analysisId = '';

  const form = (name: string) => () => {
    const f = new FormData();
    f.set('name', name);
    f.set('file', new Blob([new Uint8Array(trenchLayoutGds())]), 'auth.gds');
    return f;
  };

  const routes: Route[] = [
    { name: 'list layouts', method: 'GET', path: () => `/api/v1/projects/${PROJECT}/layouts`, action: 'project.read', okStatus: [200] },
    { name: 'upload layout', method: 'POST', path: () => `/api/v1/projects/${PROJECT}/layouts`, action: 'layout.upload', body: form('auth upload'), okStatus: [201] },
    { name: 'layout revisions', method: 'GET', path: () => `/api/v1/layouts/${layoutId}/revisions`, action: 'project.read', okStatus: [200] },
    { name: 'upload revision', method: 'POST', path: () => `/api/v1/layouts/${layoutId}/revisions`, action: 'layout.upload', body: form('ignored'), okStatus: [201] },
    { name: 'one revision', method: 'GET', path: () => `/api/v1/layouts/${layoutId}/revisions/${revisionId}`, action: 'project.read', okStatus: [200] },
    { name: 'list analyses', method: 'GET', path: () => `/api/v1/projects/${PROJECT}/analyses`, action: 'project.read', okStatus: [200] },
    { name: 'start analysis', method: 'POST', path: () => `/api/v1/projects/${PROJECT}/analyses`, action: 'analysis.create', body: () => ({ revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL }), okStatus: [202] },
    { name: 'analysis status', method: 'GET', path: () => `/api/v1/analyses/${analysisId}`, action: 'project.read', okStatus: [200] },
    { name: 'analysis events', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/events`, action: 'project.read', okStatus: [200] },
    { name: 'results', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/results`, action: 'project.read', okStatus: [200] },
    { name: 'flags', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/flags`, action: 'project.read', okStatus: [200] },
    { name: 'map', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/maps/risk`, action: 'project.read', okStatus: [200] },
    { name: 'preview', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/preview.png`, action: 'project.read', okStatus: [200] },
    // A finished analysis cannot be cancelled (409) — but only roles that may start analyses get that far.
    { name: 'cancel', method: 'POST', path: () => `/api/v1/analyses/${analysisId}/cancel`, action: 'analysis.create', okStatus: [409] },
  ];

  const call = async (client: TestClient, r: Route, headers: Record<string, string> = {}): Promise<Response> => {
    const body = r.body?.();
    const init: RequestInit & { json?: unknown } = { method: r.method, headers };
    if (body instanceof FormData) init.body = body;
    else if (body !== undefined) init.json = body;
    const res = await client.request(r.path(), init);
    await res.body?.cancel();
    return res;
  };

  beforeAll(async () => {
    server = await startTestServer({ env: { TRENCHANT_JOB_CONCURRENCY: '2' } });
    for (const role of TEAM_ROLES) clients[role] = await signInAs(server.baseUrl, role);
    const rev = await uploadRevision(clients.designer, trenchLayoutGds(), 'auth layout');
    layoutId = rev.layoutId;
    revisionId = rev.id;
    analysisId = await startAnalysis(clients.designer, { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL });
    await waitFor(clients.designer, analysisId, ['done']);
  });
  afterAll(() => server?.stop());

  itAllowsWhatThePermissionTableSays(routes, clients, (client, r) => call(client, r));

  it('anonymous callers get 401 on every route', async () => {
    const anon = new TestClient(server.baseUrl);
    for (const r of routes) expect((await call(anon, r)).status, r.name).toBe(401);
  });

  it('a cross-site cookie request that changes state is refused (403)', async () => {
    const res = await clients.designer.request(`/api/v1/projects/${PROJECT}/analyses`, { method: 'POST', json: { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL }, origin: 'https://evil.example' });
    expect(res.status).toBe(403);
  });

  describe('API tokens', () => {
    let teamToken = '';
    let otherTeamToken = '';
    let revokedToken = '';
    beforeAll(() => {
      // Tokens are made directly in the server's database (the token UI and API are tested in their own area).
      const db = openDatabase(server.dbFile);
      setDbForTesting(db);
      const designer = DEMO_USERS.find((u) => u.role === 'designer')!;
      const sqlite = new Database(server.dbFile);
      sqlite.prepare("INSERT INTO teams (id, name, created_at) VALUES ('other-team', 'Other team', ?)").run(Date.now());
      sqlite.prepare("INSERT INTO memberships (team_id, user_id, role, created_at) VALUES ('other-team', ?, 'admin', ?)").run(designer.id, Date.now());
      sqlite.close();
      teamToken = createApiToken(designer.id, DEMO_TEAM.id, 'ci').token;
      otherTeamToken = createApiToken(designer.id, 'other-team', 'other').token;
      const revoked = createApiToken(designer.id, DEMO_TEAM.id, 'old');
      revokedToken = revoked.token;
      expect(revokeApiToken(designer.id, revoked.row.id)).toBe(true);
      setDbForTesting(undefined);
      db.$client.close();
    });

    it('a token of the project team works on every route, without cookies or Origin', async () => {
      const bare = new TestClient(server.baseUrl);
      for (const r of routes) {
        const res = await call(bare, r, { authorization: `Bearer ${teamToken}` });
        expect(r.okStatus, r.name).toContain(res.status);
      }
    });

    it('a token of another team is refused (the project is not found for it)', async () => {
      const bare = new TestClient(server.baseUrl);
      for (const r of routes) expect((await call(bare, r, { authorization: `Bearer ${otherTeamToken}` })).status, r.name).toBe(404);
    });

    it('a revoked token is refused with 401', async () => {
      const bare = new TestClient(server.baseUrl);
      for (const r of routes) expect((await call(bare, r, { authorization: `Bearer ${revokedToken}` })).status, r.name).toBe(401);
    });

    it('a token upload works with curl-style multipart', async () => {
      const bare = new TestClient(server.baseUrl);
      const res = await upload(bare, `/api/v1/projects/${PROJECT}/layouts`, trenchLayoutGds(), 'ci.gds', {});
      expect(res.status).toBe(401);
      const f = new FormData();
      f.set('file', new Blob([new Uint8Array(trenchLayoutGds())]), 'ci.gds');
      const ok = await fetch(`${server.baseUrl}/api/v1/projects/${PROJECT}/layouts`, { method: 'POST', body: f, headers: { authorization: `Bearer ${teamToken}` } });
      expect(ok.status).toBe(201);
    });
  });
});
