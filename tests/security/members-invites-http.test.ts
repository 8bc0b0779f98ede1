import type Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { bearerFetch, mintToken, openTestDb } from '../api/tokens-db';
import { signIn, TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { rawRequest } from './raw-http';

const byRole = (role: string) => DEMO_USERS.find((u) => u.role === role)!;
const admin = byRole('admin');
const designer = byRole('designer');
const PUBLIC_URL = 'https://trenchant.larkspur.example';
type Message = { to: string; body: string };

describe('member removal, invitations and mail links', () => {
  let server: TestServer;
  let db: Database.Database;
  let adminClient: TestClient;
  beforeAll(async () => {
    server = await startTestServer({ env: { TRENCHANT_PUBLIC_URL: `${PUBLIC_URL}/` } });
    db = openTestDb(server.dbFile);
    adminClient = await signIn(server.baseUrl, admin.email, DEMO_PASSWORD_DEFAULT);
  });
  afterAll(async () => {
    db?.close();
    await server?.stop();
  });

  const invites = `/api/v1/teams/${DEMO_TEAM.id}/invites`;

  async function latestLinkFor(email: string): Promise<string> {
    const outbox = (await (await adminClient.get(`/api/v1/teams/${DEMO_TEAM.id}/outbox`)).json()) as { messages: Message[] };
    const mail = outbox.messages.find((m) => m.to === email);
    const link = /https?:\/\/\S+\/invite\/[A-Za-z0-9_-]+/.exec(mail?.body ?? '')?.[0];
    if (!link) throw new Error(`no invitation mail for ${email}`);
    return link;
  }

  it('removing a member revokes their tokens for the team; re-inviting and re-joining does not revive them', async () => {
    const { id, token } = mintToken(db, designer.id, DEMO_TEAM.id, 'ci');
    const api = bearerFetch(server.baseUrl, token);
    expect((await api('/api/v1/me')).status).toBe(200);

    const removed = await adminClient.request(`/api/v1/teams/${DEMO_TEAM.id}/members/${designer.id}`, { method: 'DELETE' });
    expect(removed.status).toBe(204);
    const row = db.prepare('SELECT revoked_at FROM api_tokens WHERE id = ?').get(id) as { revoked_at: number | null };
    expect(row.revoked_at).toBeGreaterThan(0);
    expect((await api('/api/v1/me')).status).toBe(401);

    expect((await adminClient.post(invites, { email: designer.email, role: 'designer' })).status).toBe(201);
    const link = await latestLinkFor(designer.email);
    const designerClient = await signIn(server.baseUrl, designer.email, DEMO_PASSWORD_DEFAULT);
    const accepted = await designerClient.post(`/api/v1/invites/${link.split('/invite/')[1]}/accept`);
    expect(accepted.status).toBe(200);
    // member again, but the old token stays revoked
    expect((await designerClient.get(`/api/v1/teams/${DEMO_TEAM.id}`)).status).toBe(200);
    expect((await api('/api/v1/me')).status).toBe(401);
  });

  it('mail links use TRENCHANT_PUBLIC_URL, never the Host of the request', async () => {
    const forgedHost = 'evil.example:8080';
    const res = await rawRequest(server.baseUrl, invites, {
      method: 'POST',
      headers: { host: forgedHost, origin: `http://${forgedHost}`, cookie: cookieHeader(adminClient) },
      json: { email: 'host.header@example.com', role: 'reviewer' },
    });
    expect(res.status).toBe(201);
    const link = await latestLinkFor('host.header@example.com');
    expect(link.startsWith(`${PUBLIC_URL}/invite/`)).toBe(true);
    expect(link).not.toContain('evil.example');
  });

  it('a pending invitation can be cancelled; its link stops working', async () => {
    const created = await adminClient.post(invites, { email: 'to.cancel@example.com', role: 'reviewer' });
    const inviteId = ((await created.json()) as { invite: { id: string } }).invite.id;
    const token = (await latestLinkFor('to.cancel@example.com')).split('/invite/')[1]!;
    const before = await new TestClient(server.baseUrl).get(`/invite/${token}`);
    expect(await before.text()).toContain(`Join ${DEMO_TEAM.name}`);

    // a designer may not cancel (members.invite is admin-only)
    const designerClient = await signIn(server.baseUrl, designer.email, DEMO_PASSWORD_DEFAULT);
    expect((await designerClient.request(`${invites}/${inviteId}`, { method: 'DELETE' })).status).toBe(403);

    expect((await adminClient.request(`${invites}/${inviteId}`, { method: 'DELETE' })).status).toBe(204);
    const list = (await (await adminClient.get(invites)).json()) as { invites: { id: string }[] };
    expect(list.invites.map((i) => i.id)).not.toContain(inviteId);

    const after = await new TestClient(server.baseUrl).get(`/invite/${token}`);
    expect(await after.text()).toContain('Invitation not valid');
    const invitee = new TestClient(server.baseUrl);
    expect((await invitee.post('/api/v1/auth/sign-up', { name: 'To Cancel', email: 'to.cancel@example.com', password: 'moss-tulip-quarry-49' })).status).toBe(201);
    expect((await invitee.post(`/api/v1/invites/${token}/accept`)).status).toBe(404);
    // cancelling twice: 404
    expect((await adminClient.request(`${invites}/${inviteId}`, { method: 'DELETE' })).status).toBe(404);
  });

  it('refuses weak passwords at sign-up with a clear message on the password field', async () => {
    const res = await new TestClient(server.baseUrl).post('/api/v1/auth/sign-up', { name: 'Weak', email: 'weak@example.com', password: 'aaaaaaaaaa' });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: { message: string; fieldErrors: { password: string[] } } };
    expect(body.error.fieldErrors.password[0]).toMatch(/too easy to guess: repeated characters/);
  });
});

function cookieHeader(client: TestClient): string {
  return `trenchant_session=${(client as unknown as { cookies: Map<string, string> }).cookies.get('trenchant_session')}`;
}

describe('production without a public URL', () => {
  it('refuses to start (the process exits), naming TRENCHANT_PUBLIC_URL', async () => {
    let error: unknown;
    try {
      const server = await startTestServer({ env: { TRENCHANT_PUBLIC_URL: '' }, readyTimeoutMs: 30_000 });
      await server.stop();
    } catch (e) {
      error = e;
    }
    expect(String(error)).toMatch(/next start exited with 1/);
    expect(String(error)).toMatch(/refusing to start: TRENCHANT_PUBLIC_URL is not set/);
  });
});
