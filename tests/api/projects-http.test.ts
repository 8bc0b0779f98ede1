import type Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openApiDocument } from '@/lib/api/openapi';
import { can, TEAM_ROLES, type TeamRole } from '@/lib/auth/permissions';
import { DEMO_PASSWORD_DEFAULT, DEMO_PROJECTS, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { signIn, TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { bearerFetch, mintToken, openTestDb } from './tokens-db';

/**
 * GET/POST /api/v1/projects, GET /api/v1/projects/{id}, GET /api/v1/me and the OpenAPI document over HTTP:
 * each demo role × {session cookie, API token}, a non-member and an anonymous caller. Expected statuses come
 * from the permission table (lib/auth/permissions.ts), not from a copy of it.
 */
type Caller = { label: string; role: TeamRole; get: (p: string) => Promise<Response>; post: (p: string, json: unknown) => Promise<Response> };

const kestrel = DEMO_PROJECTS[0].id;
type ProjectsBody = { projects: { id: string; teamId: string; myRole: string }[] };

describe('projects and me over HTTP, each role × session and token', () => {
  let server: TestServer;
  let db: Database.Database;
  const callers: Caller[] = [];
  let outsider: TestClient;
  let n = 0;

  beforeAll(async () => {
    server = await startTestServer();
    db = openTestDb(server.dbFile);
    for (const u of DEMO_USERS) {
      const client = await signIn(server.baseUrl, u.email, DEMO_PASSWORD_DEFAULT);
      callers.push({ label: `${u.role} (session)`, role: u.role, get: (p) => client.get(p), post: (p, json) => client.post(p, json) });
      const fetchAs = bearerFetch(server.baseUrl, mintToken(db, u.id, DEMO_TEAM.id).token);
      callers.push({ label: `${u.role} (token)`, role: u.role, get: (p) => fetchAs(p), post: (p, json) => fetchAs(p, { method: 'POST', json }) });
    }
    outsider = new TestClient(server.baseUrl);
    const res = await outsider.post('/api/v1/auth/sign-up', { name: 'Ona Outsider', email: 'ona@elsewhere.example', password: 'outsider-password', teamName: 'Elsewhere Labs' });
    expect(res.status).toBe(201);
  });
  afterAll(async () => {
    db?.close();
    await server?.stop();
  });

  it('covers every demo role with both ways of signing in', () => {
    expect(callers.map((c) => c.role).sort()).toEqual([...TEAM_ROLES, ...TEAM_ROLES].sort());
  });

  describe.each(TEAM_ROLES.flatMap((role) => ['session', 'token'].map((via) => ({ role, via }))))('$role via $via', ({ role, via }) => {
    const caller = () => callers.find((c) => c.label === `${role} (${via})`)!;

    it('GET /me names the user, the demo team with the right role and how it signed in', async () => {
      const res = await caller().get('/api/v1/me');
      expect(res.status).toBe(200);
      const body = (await res.json()) as { user: { email: string }; teams: { id: string; myRole: string }[]; auth: { kind: string; teamId: string | null } };
      expect(body.user.email).toBe(DEMO_USERS.find((u) => u.role === role)!.email);
      expect(body.teams).toEqual([expect.objectContaining({ id: DEMO_TEAM.id, myRole: role })]);
      expect(body.auth).toEqual(via === 'token' ? { kind: 'token', teamId: DEMO_TEAM.id } : { kind: 'session', teamId: null });
    });

    it('GET /projects lists the demo projects with the caller\'s role', async () => {
      const res = await caller().get('/api/v1/projects');
      expect(res.status).toBe(200);
      const body = (await res.json()) as ProjectsBody;
      for (const p of DEMO_PROJECTS) expect(body.projects).toContainEqual(expect.objectContaining({ id: p.id, teamId: DEMO_TEAM.id, myRole: role }));
    });

    it('GET /projects/{id} answers 200 for a demo project and 404 for an unknown id', async () => {
      const ok = await caller().get(`/api/v1/projects/${kestrel}`);
      expect(ok.status).toBe(200);
      expect(((await ok.json()) as { project: { id: string; myRole: string } }).project).toMatchObject({ id: kestrel, myRole: role });
      expect((await caller().get('/api/v1/projects/no-such-project')).status).toBe(404);
    });

    const allowed = can(role, 'project.create');
    it(`POST /projects → ${allowed ? '201' : '403'} (project.create)`, async () => {
      const name = `Matrix ${role} ${via} ${++n}`;
      const res = await caller().post('/api/v1/projects', { teamId: DEMO_TEAM.id, name, description: 'made by the API test' });
      expect(res.status, await res.clone().text()).toBe(allowed ? 201 : 403);
      if (allowed) {
        const { project } = (await res.json()) as { project: { id: string; name: string; teamId: string } };
        expect(project).toMatchObject({ name, teamId: DEMO_TEAM.id });
        expect((await caller().get(`/api/v1/projects/${project.id}`)).status).toBe(200);
      } else {
        expect(((await res.json()) as { error: { code: string } }).error.code).toBe('forbidden');
      }
    });
  });

  describe('a non-member (admin of another team)', () => {
    it('does not see the demo projects and gets 404 for one, 403 creating one there', async () => {
      const list = (await (await outsider.get('/api/v1/projects')).json()) as ProjectsBody;
      expect(list.projects.filter((p) => p.teamId === DEMO_TEAM.id)).toEqual([]);
      expect((await outsider.get(`/api/v1/projects/${kestrel}`)).status).toBe(404);
      expect((await outsider.post('/api/v1/projects', { teamId: DEMO_TEAM.id, name: 'Not mine' })).status).toBe(403);
    });

    it('creates a project in their own team and reads it back; demo members get 404 for it', async () => {
      const me = (await (await outsider.get('/api/v1/me')).json()) as { teams: { id: string; name: string }[] };
      const own = me.teams.find((t) => t.name === 'Elsewhere Labs')!;
      const res = await outsider.post('/api/v1/projects', { teamId: own.id, name: 'Outsider probe' });
      expect(res.status).toBe(201);
      const { project } = (await res.json()) as { project: { id: string } };
      for (const c of callers) expect((await c.get(`/api/v1/projects/${project.id}`)).status, c.label).toBe(404);
      const filtered = (await (await outsider.get(`/api/v1/projects?teamId=${own.id}`)).json()) as ProjectsBody;
      expect(filtered.projects.map((p) => p.id)).toEqual([project.id]);
    });
  });

  it('an anonymous caller gets 401 from every project route and /me', async () => {
    const anon = new TestClient(server.baseUrl);
    for (const res of [
      await anon.get('/api/v1/me'),
      await anon.get('/api/v1/projects'),
      await anon.get(`/api/v1/projects/${kestrel}`),
      await anon.post('/api/v1/projects', { teamId: DEMO_TEAM.id, name: 'Anonymous' }),
    ]) {
      expect(res.status).toBe(401);
      expect(((await res.json()) as { error: { code: string } }).error.code).toBe('unauthorized');
    }
  });

  it('answers bad bodies with 400 and per-field messages, duplicate names with 409', async () => {
    const admin = callers.find((c) => c.label === 'admin (session)')!;
    const bad = await admin.post('/api/v1/projects', { teamId: DEMO_TEAM.id, name: 'x', description: 'd'.repeat(501) });
    expect(bad.status).toBe(400);
    const badBody = (await bad.json()) as { error: { code: string; fieldErrors: Record<string, string[]> } };
    expect(badBody.error.code).toBe('bad_request');
    expect(Object.keys(badBody.error.fieldErrors).sort()).toEqual(['description', 'name']);
    const noTeam = await admin.post('/api/v1/projects', { name: 'No team given' });
    expect(noTeam.status).toBe(400);
    expect(Object.keys(((await noTeam.json()) as { error: { fieldErrors: object } }).error.fieldErrors)).toEqual(['teamId']);
    const dup = await admin.post('/api/v1/projects', { teamId: DEMO_TEAM.id, name: DEMO_PROJECTS[0].name });
    expect(dup.status).toBe(409);
    expect(((await dup.json()) as { error: { fieldErrors: object } }).error.fieldErrors).toHaveProperty('name');
  });

  it('serves the OpenAPI document publicly, identical to lib/api/openapi.ts', async () => {
    const res = await fetch(`${server.baseUrl}/api/v1/openapi.json`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/application\/json/);
    expect(await res.json()).toEqual(JSON.parse(JSON.stringify(openApiDocument)));
  });

  it('serves the Methods and API pages without sign-in, and the tokens page only with one', async () => {
    const methods = await fetch(`${server.baseUrl}/methods`);
    expect(methods.status).toBe(200);
    const html = await methods.text();
    expect(html).toContain('Density windows');
    expect(html).toContain('data-testid="method-cautions"'); // the cautions box
    expect(html).toContain('Predictions outside the calibrated width');
    const api = await fetch(`${server.baseUrl}/api-docs`);
    expect(api.status).toBe(200);
    expect(await api.text()).toContain('/api/v1/projects/{projectId}');
    const tokens = await fetch(`${server.baseUrl}/account/tokens`, { redirect: 'manual' });
    expect([303, 307, 308]).toContain(tokens.status);
    expect(tokens.headers.get('location')).toMatch(/\/sign-in/);
  });
});
