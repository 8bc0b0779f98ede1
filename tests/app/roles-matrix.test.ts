import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { can, TEAM_ACTIONS, TEAM_ROLES, type TeamAction, type TeamRole } from '@/lib/auth/permissions';
import { DEMO_PASSWORD_DEFAULT, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { signIn, TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';

/**
 * The roles matrix through the real route handlers of a started server: each role × each protected action that
 * has an HTTP endpoint → 2xx when the permission table allows it, else 403; plus non-members (403) and
 * anonymous callers (401). Actions whose endpoints other areas add (uploads, analyses, models, flags, sign-off)
 * are covered against the same guard in permissions.test.ts; their own route tests extend this matrix.
 */
type Probe = (client: TestClient, n: number) => Promise<Response>;
const team = DEMO_TEAM.id;
const PROBES: Partial<Record<TeamAction, Probe>> = {
  'team.manage': (c, n) => c.patch(`/api/v1/teams/${team}`, { name: `Larkspur Microsystems ${n}` }),
  'members.invite': (c, n) => c.post(`/api/v1/teams/${team}/invites`, { email: `matrix-${n}@example.com`, role: 'reviewer' }),
  'outbox.view': (c) => c.get(`/api/v1/teams/${team}/outbox`),
  'project.create': (c, n) => c.post(`/api/v1/teams/${team}/projects`, { name: `Matrix project ${n}` }),
};

describe('roles × actions over HTTP', () => {
  let server: TestServer;
  const clients = new Map<TeamRole | 'outsider' | 'anonymous', TestClient>();
  let counter = 0;

  beforeAll(async () => {
    server = await startTestServer();
    for (const u of DEMO_USERS) clients.set(u.role, await signIn(server.baseUrl, u.email, DEMO_PASSWORD_DEFAULT));
    const outsider = new TestClient(server.baseUrl);
    // an admin of their own team, but not a member of the demo team
    await outsider.post('/api/v1/auth/sign-up', { name: 'Outsider', email: 'outsider@example.com', password: 'outsider-password', teamName: 'Elsewhere' });
    clients.set('outsider', outsider);
    clients.set('anonymous', new TestClient(server.baseUrl));
  });
  afterAll(() => server?.stop());

  it('has an HTTP probe for the admin, invite, outbox and project actions', () => {
    expect(Object.keys(PROBES).sort()).toEqual(['members.invite', 'outbox.view', 'project.create', 'team.manage']);
    for (const a of Object.keys(PROBES)) expect(TEAM_ACTIONS).toContain(a);
  });

  for (const [action, probe] of Object.entries(PROBES) as [TeamAction, Probe][]) {
    for (const role of TEAM_ROLES) {
      const allowed = can(role, action);
      it(`${role} × ${action} → ${allowed ? '2xx' : '403'}`, async () => {
        const res = await probe(clients.get(role)!, ++counter);
        if (allowed) expect(res.status, await res.clone().text()).toBeGreaterThanOrEqual(200);
        if (allowed) expect(res.status).toBeLessThan(300);
        else expect(res.status).toBe(403);
      });
    }
    it(`non-member × ${action} → 403`, async () => {
      expect((await probe(clients.get('outsider')!, ++counter)).status).toBe(403);
    });
    it(`anonymous × ${action} → 401`, async () => {
      expect((await probe(clients.get('anonymous')!, ++counter)).status).toBe(401);
    });
  }

  it('an admin cannot demote the last admin (409) but can change other roles', async () => {
    const admin = clients.get('admin')!;
    expect((await admin.patch(`/api/v1/teams/${team}/members/demo-admin`, { role: 'designer' })).status).toBe(409);
    expect((await admin.patch(`/api/v1/teams/${team}/members/demo-reviewer`, { role: 'reviewer' })).status).toBe(200);
    expect((await clients.get('designer')!.patch(`/api/v1/teams/${team}/members/demo-reviewer`, { role: 'admin' })).status).toBe(403);
  });
});
