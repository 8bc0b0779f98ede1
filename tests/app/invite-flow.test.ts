import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { signIn, TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';

const admin = DEMO_USERS.find((u) => u.role === 'admin')!;
type Message = { subject: string; to: string; body: string };

describe('invitation by e-mail through the development SMTP server', () => {
  let server: TestServer;
  let adminClient: TestClient;
  beforeAll(async () => {
    server = await startTestServer();
    adminClient = await signIn(server.baseUrl, admin.email, DEMO_PASSWORD_DEFAULT);
  });
  afterAll(() => server?.stop());

  async function inviteAndReadLink(email: string, role: string): Promise<string> {
    const res = await adminClient.post(`/api/v1/teams/${DEMO_TEAM.id}/invites`, { email, role });
    expect(res.status).toBe(201);
    const outbox = (await (await adminClient.get(`/api/v1/teams/${DEMO_TEAM.id}/outbox`)).json()) as { messages: Message[] };
    const mail = outbox.messages.find((m) => m.to === email);
    expect(mail, 'the SMTP server received the invitation').toBeDefined();
    expect(mail?.subject).toContain(DEMO_TEAM.name);
    const link = /https?:\/\/\S+\/invite\/[A-Za-z0-9_-]+/.exec(mail?.body ?? '')?.[0];
    expect(link).toBeDefined();
    return link!;
  }

  it('mails a one-time link that the invited address can accept, with the invited role', async () => {
    const link = await inviteAndReadLink('new.reviewer@example.com', 'reviewer');
    expect(link.startsWith(server.baseUrl)).toBe(true);
    const token = link.split('/invite/')[1]!;

    const page = await new TestClient(server.baseUrl).get(`/invite/${token}`);
    expect((await page.text()).includes(`Join ${DEMO_TEAM.name}`), 'invite page names the team').toBe(true);

    const invitee = new TestClient(server.baseUrl);
    expect((await invitee.post('/api/v1/auth/sign-up', { name: 'New Reviewer', email: 'new.reviewer@example.com', password: 'reviewer-password' })).status).toBe(201);
    const accepted = await invitee.post(`/api/v1/invites/${token}/accept`);
    expect(accepted.status).toBe(200);
    expect(await accepted.json()).toEqual({ teamId: DEMO_TEAM.id, role: 'reviewer' });
    const me = (await (await invitee.get('/api/v1/me')).json()) as { teams: { id: string; myRole: string }[] };
    expect(me.teams).toContainEqual(expect.objectContaining({ id: DEMO_TEAM.id, myRole: 'reviewer' }));

    // used once only
    expect((await invitee.post(`/api/v1/invites/${token}/accept`)).status).toBe(404);
  });

  it('refuses the link for an account with another e-mail (403)', async () => {
    const link = await inviteAndReadLink('someone.else@example.com', 'designer');
    const token = link.split('/invite/')[1]!;
    const wrong = new TestClient(server.baseUrl);
    await wrong.post('/api/v1/auth/sign-up', { name: 'Wrong', email: 'wrong.person@example.com', password: 'wrong-password' });
    expect((await wrong.post(`/api/v1/invites/${token}/accept`)).status).toBe(403);
  });

  it('refuses to invite an existing member (409) and validates the role (400)', async () => {
    expect((await adminClient.post(`/api/v1/teams/${DEMO_TEAM.id}/invites`, { email: 'designer@larkspur.example', role: 'designer' })).status).toBe(409);
    expect((await adminClient.post(`/api/v1/teams/${DEMO_TEAM.id}/invites`, { email: 'x@example.com', role: 'wizard' })).status).toBe(400);
  });
});
