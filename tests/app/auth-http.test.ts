import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_USERS } from '@/lib/data/demo';
import { signIn, TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';

const designer = DEMO_USERS.find((u) => u.role === 'designer')!;
const processEngineer = DEMO_USERS.find((u) => u.role === 'process_engineer')!;

describe('accounts and sessions over HTTP (demo instance)', () => {
  let server: TestServer;
  beforeAll(async () => {
    server = await startTestServer();
  });
  afterAll(() => server?.stop());

  it('prints the demo sign-ins at start', () => {
    for (const u of DEMO_USERS) expect(server.output()).toContain(u.email);
  });

  it('signs in with the right password and sets an httpOnly SameSite=Lax session cookie', async () => {
    const client = new TestClient(server.baseUrl);
    const res = await client.post('/api/v1/auth/session', { email: designer.email, password: DEMO_PASSWORD_DEFAULT });
    expect(res.status).toBe(200);
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith('trenchant_session='));
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    const me = await client.get('/api/v1/me');
    expect(me.status).toBe(200);
    expect(((await me.json()) as { user: { email: string } }).user.email).toBe(designer.email);
  });

  it('refuses a wrong password with 401 and one message that does not say which part was wrong', async () => {
    const client = new TestClient(server.baseUrl);
    const wrongPw = await client.post('/api/v1/auth/session', { email: designer.email, password: 'nope-nope-nope' });
    const noUser = await client.post('/api/v1/auth/session', { email: 'ghost@larkspur.example', password: 'nope-nope-nope' });
    expect(wrongPw.status).toBe(401);
    expect(noUser.status).toBe(401);
    expect(((await wrongPw.json()) as { error: { message: string } }).error.message).toBe(
      ((await noUser.json()) as { error: { message: string } }).error.message,
    );
    expect(client.hasSession()).toBe(false);
  });

  it('answers 400 with field messages for a malformed sign-in body', async () => {
    const res = await new TestClient(server.baseUrl).post('/api/v1/auth/session', { email: 'not-an-email', password: '' });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: { fieldErrors: Record<string, string[]> } };
    expect(Object.keys(body.error.fieldErrors).sort()).toEqual(['email', 'password']);
  });

  it('sign-out invalidates the session on the server, not only the cookie', async () => {
    const client = await signIn(server.baseUrl, designer.email, DEMO_PASSWORD_DEFAULT);
    const stolen = new TestClient(server.baseUrl);
    // copy the cookie as an attacker holding it would
    const res = await client.get('/api/v1/auth/session');
    expect(res.status).toBe(200);
    const cookieHeader = (client as unknown as { cookies: Map<string, string> }).cookies.get('trenchant_session');
    expect(cookieHeader).toBeTruthy();
    expect((await client.request('/api/v1/auth/session', { method: 'DELETE' })).status).toBe(204);
    const replay = await fetch(`${server.baseUrl}/api/v1/me`, { headers: { cookie: `trenchant_session=${cookieHeader}` } });
    expect(replay.status).toBe(401);
    expect((await stolen.get('/api/v1/me')).status).toBe(401);
  });

  it('backs off failed sign-ins for an account from one address: after 5 failures that address waits (429), other accounts do not', async () => {
    const client = new TestClient(server.baseUrl);
    for (let i = 0; i < 5; i++) {
      expect((await client.post('/api/v1/auth/session', { email: processEngineer.email, password: `wrong-${i}-xxxxx` })).status).toBe(401);
    }
    const blocked = await client.post('/api/v1/auth/session', { email: processEngineer.email, password: DEMO_PASSWORD_DEFAULT });
    expect(blocked.status).toBe(429);
    expect(Number(blocked.headers.get('retry-after'))).toBeGreaterThan(0);
    // other accounts are unaffected; the same account from another address is not locked (tests/security)
    expect((await client.post('/api/v1/auth/session', { email: designer.email, password: DEMO_PASSWORD_DEFAULT })).status).toBe(200);
  });

  it('refuses cross-site and Origin-less mutations with 403 (API and page/server-action paths)', async () => {
    const client = await signIn(server.baseUrl, designer.email, DEMO_PASSWORD_DEFAULT);
    const evil = await client.post('/api/v1/teams/demo-team-larkspur/projects', { name: 'Evil' }, { origin: 'http://evil.example' });
    expect(evil.status).toBe(403);
    const none = await client.post('/api/v1/teams/demo-team-larkspur/projects', { name: 'No origin' }, { origin: null });
    expect(none.status).toBe(403);
    const page = await client.request('/projects/new', { method: 'POST', body: 'x=1', origin: 'http://evil.example' });
    expect(page.status).toBe(403);
  });

  it('requires a session for the API (401) and redirects pages to sign-in', async () => {
    const anon = new TestClient(server.baseUrl);
    expect((await anon.get('/api/v1/me')).status).toBe(401);
    const page = await anon.get('/projects');
    expect([302, 303, 307, 308]).toContain(page.status);
    expect(page.headers.get('location')).toMatch(/\/sign-in/);
  });

  it('shows the designed 404 page without internals for an unknown address', async () => {
    const res = await new TestClient(server.baseUrl).get('/no/such/page');
    const html = await res.text();
    expect(res.status).toBe(404);
    expect(html).toContain('Nothing at this address');
    expect(html).not.toMatch(/node_modules|at Object\.|\.ts:\d+/);
  });

  it('answers 404 for a project of a team the user is not in, and for unknown ids', async () => {
    const client = await signIn(server.baseUrl, designer.email, DEMO_PASSWORD_DEFAULT);
    expect((await client.get('/api/v1/projects/demo-kestrel')).status).toBe(200);
    expect((await client.get('/api/v1/projects/does-not-exist')).status).toBe(404);
    const stranger = new TestClient(server.baseUrl);
    const signUp = await stranger.post('/api/v1/auth/sign-up', { name: 'Stranger', email: 'stranger@example.com', password: 'long-enough-pw' });
    expect(signUp.status).toBe(201);
    expect((await stranger.get('/api/v1/projects/demo-kestrel')).status).toBe(404);
  });
});

describe('an empty instance (TRENCHANT_DEMO=0)', () => {
  let server: TestServer;
  beforeAll(async () => {
    server = await startTestServer({ env: { TRENCHANT_DEMO: '0' } });
  });
  afterAll(() => server?.stop());

  it('makes the first account admin of a new team; a later sign-up without a team name gets no team', async () => {
    const first = new TestClient(server.baseUrl);
    const r1 = await first.post('/api/v1/auth/sign-up', { name: 'First Person', email: 'first@example.com', password: 'first-password' });
    expect(r1.status).toBe(201);
    const me1 = (await (await first.get('/api/v1/me')).json()) as { teams: { myRole: string }[] };
    expect(me1.teams).toHaveLength(1);
    expect(me1.teams[0]?.myRole).toBe('admin');

    const second = new TestClient(server.baseUrl);
    expect((await second.post('/api/v1/auth/sign-up', { name: 'Second', email: 'second@example.com', password: 'second-password' })).status).toBe(201);
    const me2 = (await (await second.get('/api/v1/me')).json()) as { teams: unknown[] };
    expect(me2.teams).toHaveLength(0);
  });

  it('refuses a second account with the same e-mail (409, field email)', async () => {
    const res = await new TestClient(server.baseUrl).post('/api/v1/auth/sign-up', { name: 'Again', email: 'FIRST@example.com', password: 'another-password' });
    expect(res.status).toBe(409);
    expect(((await res.json()) as { error: { fieldErrors: Record<string, string[]> } }).error.fieldErrors.email).toBeDefined();
  });

  it('stores argon2id hashes, never the password', async () => {
    const Database = (await import('better-sqlite3')).default;
    const db = new Database(server.dbFile, { readonly: true });
    try {
      const row = db.prepare('select password_hash as h from users where email = ?').get('first@example.com') as { h: string };
      expect(row.h.startsWith('$argon2id$')).toBe(true);
      expect(row.h).not.toContain('first-password');
    } finally {
      db.close();
    }
  });
});
