/**
 * Server-side enforcement of the review routes: every route × every team role against the permission table
 * (lib/auth/permissions.ts), anonymous callers (401), cross-site cookie writes (403), and an API token of the
 * team (works without cookies or Origin). Uses the seeded demo analysis.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TEAM_ROLES, type TeamRole } from '@/lib/auth/permissions';
import { mintToken, openTestDb } from '../api/tokens-db';
import { signInAs, waitFor } from '../pipeline-server/support';
import { TestClient } from '../support/http';
import { itAllowsWhatThePermissionTableSays, type RouteCase } from '../support/route-roles';
import { startTestServer, type TestServer } from '../support/server';

type Route = RouteCase;

describe('authorisation of the review routes', () => {
  let server: TestServer;
  const clients = {} as Record<TeamRole, TestClient>;
  let analysisId = '';
  let findingId = '';
  let key = '';
  const reason = 'Accepted for the engineering lot; see the calibration plan.';

  const routes: Route[] = [
    { name: 'findings', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/findings`, action: 'project.read', okStatus: [200] },
    { name: 'findings csv', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/findings.csv`, action: 'project.read', okStatus: [200] },
    { name: 'thread', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/findings/${findingId}`, action: 'project.read', okStatus: [200] },
    { name: 'comment', method: 'POST', path: () => `/api/v1/analyses/${analysisId}/findings/${findingId}/comments`, action: 'flag.comment', body: () => ({ body: 'checked' }), okStatus: [201] },
    { name: 'needs change', method: 'POST', path: () => `/api/v1/analyses/${analysisId}/findings/bulk`, action: 'flag.triage', body: () => ({ keys: [key], status: 'needs_change' }), okStatus: [200] },
    { name: 'assign', method: 'POST', path: () => `/api/v1/analyses/${analysisId}/findings/bulk`, action: 'flag.triage', body: () => ({ keys: [key], assigneeId: 'demo-designer' }), okStatus: [200] },
    { name: 'waive', method: 'POST', path: () => `/api/v1/analyses/${analysisId}/findings/bulk`, action: 'flag.waive', body: () => ({ keys: [key], status: 'waived', reason }), okStatus: [200] },
    { name: 'verify', method: 'POST', path: () => `/api/v1/analyses/${analysisId}/findings/bulk`, action: 'flag.verify', body: () => ({ keys: [key], status: 'verified' }), okStatus: [200] },
    { name: 'sign-off state', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/signoff`, action: 'project.read', okStatus: [200] },
    // errors are still open, so an allowed role is refused for that reason (409), the others for their role (403)
    { name: 'sign off', method: 'POST', path: () => `/api/v1/analyses/${analysisId}/signoff`, action: 'revision.signoff', body: () => ({}), okStatus: [409] },
    // comparing an analysis with itself is a bad request (400) — after the role check
    { name: 'carry waivers', method: 'POST', path: () => `/api/v1/analyses/${analysisId}/compare/carry-waivers`, action: 'flag.waive', body: () => ({ from: analysisId }), okStatus: [400] },
    { name: 'compare', method: 'GET', path: () => `/api/v1/analyses/${analysisId}/compare?with=${analysisId}`, action: 'project.read', okStatus: [400] },
    { name: 'notifications', method: 'GET', path: () => '/api/v1/notifications', action: 'project.read', okStatus: [200] },
    { name: 'mark read', method: 'POST', path: () => '/api/v1/notifications/read', action: 'project.read', body: () => ({ all: true }), okStatus: [200] },
    { name: 'prefs', method: 'PUT', path: () => '/api/v1/notifications/prefs', action: 'project.read', body: () => ({ emailAssignment: true, emailMention: true, emailStatus: true }), okStatus: [200] },
  ];

  const call = async (client: TestClient, r: Route, init: { headers?: Record<string, string>; origin?: string | null } = {}) => {
    const body = r.body?.();
    const res = await client.request(r.path(), { method: r.method, headers: init.headers, origin: init.origin, ...(body !== undefined ? { json: body } : {}) });
    await res.body?.cancel();
    return res;
  };

  beforeAll(async () => {
    server = await startTestServer();
    for (const role of TEAM_ROLES) clients[role] = await signInAs(server.baseUrl, role);
    const list = (await (await clients.reviewer.get('/api/v1/projects/demo-kestrel/analyses')).json()) as { analyses: { id: string }[] };
    analysisId = list.analyses[0]?.id as string;
    await waitFor(clients.reviewer, analysisId, ['done']);
    const f = (await (await clients.reviewer.get(`/api/v1/analyses/${analysisId}/findings?view=flat&severity=error&limit=1`)).json()) as { items: { id: string; key: string }[] };
    findingId = f.items[0]?.id as string;
    key = f.items[0]?.key as string;
  });
  afterAll(() => server?.stop());

  itAllowsWhatThePermissionTableSays(routes, clients, (client, r) => call(client, r));

  it('the demo analysis fits on one screen as groups with counts (issue 14)', async () => {
    const page = (await (await clients.reviewer.get(`/api/v1/analyses/${analysisId}/findings`)).json()) as { view: string; total: number; findings: number; listed: number; capped: boolean; items: { count: number }[] };
    expect(page.view).toBe('groups');
    expect(page.total).toBeLessThanOrEqual(25); // one page of the table
    expect(page.items.reduce((n, g) => n + g.count, 0)).toBe(page.listed);
    expect(page.findings).toBe(page.listed);
    expect(page.capped).toBe(false);
    expect(Math.max(...page.items.map((g) => g.count))).toBeGreaterThan(1);
  });

  it('anonymous callers get 401 on every review route', async () => {
    const anon = new TestClient(server.baseUrl);
    for (const r of routes) expect((await call(anon, r)).status, r.name).toBe(401);
  });

  it('refuses cookie writes from another site (403)', async () => {
    for (const r of routes.filter((x) => x.method !== 'GET')) expect((await call(clients.admin, r, { origin: 'https://elsewhere.example' })).status, r.name).toBe(403);
  });

  it('an API token of the team acts with its owner\'s role, without cookies or Origin', async () => {
    const db = openTestDb(server.dbFile);
    const { token } = mintToken(db, 'demo-reviewer', 'demo-team-larkspur');
    db.close();
    const bare = new TestClient(server.baseUrl);
    const headers = { authorization: `Bearer ${token}` };
    const waive = routes.find((r) => r.name === 'waive') as Route;
    expect((await call(bare, waive, { headers, origin: null })).status).toBe(200);
    const list = (await (await bare.request(`/api/v1/analyses/${analysisId}/findings?view=flat&key=${encodeURIComponent(key)}`, { headers })).json()) as { items: { status: string; waiver: { approverName: string } }[] };
    expect(list.items[0]).toMatchObject({ status: 'waived', waiver: { approverName: 'Rafael Odum' } });
  });
});
