import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_PROJECTS, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { launchBrowser, screenshot } from '../support/browser';
import { signIn } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';

const byRole = (role: string) => DEMO_USERS.find((u) => u.role === role)!;

describe('the app in Chromium', () => {
  let server: TestServer;
  let browser: Browser;
  beforeAll(async () => {
    [server, browser] = await Promise.all([startTestServer(), launchBrowser()]);
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  async function newPage(): Promise<Page> {
    const context = await browser.newContext({ viewport: { width: 1280, height: 800 } });
    return context.newPage();
  }

  async function signInAs(page: Page, email: string, password = DEMO_PASSWORD_DEFAULT) {
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Password').fill(password);
    await page.getByRole('button', { name: 'Sign in' }).click();
  }

  it('designer: signs in, sees the demo projects, creates a project, signs out', async () => {
    const page = await newPage();
    await page.goto(`${server.baseUrl}/`);
    await page.waitForURL(/\/sign-in$/);
    await screenshot(page, 'sign-in');
    await signInAs(page, byRole('designer').email);
    await page.waitForURL(/\/projects$/);
    const list = page.getByTestId('project-list');
    for (const p of DEMO_PROJECTS) expect(await list.getByText(p.name, { exact: true }).count(), p.name).toBe(1);
    expect(await list.locator('li').count()).toBe(DEMO_PROJECTS.length);
    await expect(page.getByTestId('caution').textContent()).resolves.toMatch(/process of record/);
    await screenshot(page, 'project-list');

    await page.getByTestId('new-project').click();
    await page.waitForURL(/\/projects\/new$/);
    // empty name first: the field-level message appears and nothing is created
    await page.getByRole('button', { name: 'Create project' }).click();
    await page.getByTestId('error-name').waitFor();
    expect(await page.getByTestId('error-name').textContent()).toMatch(/at least 2 characters/);
    await screenshot(page, 'new-project-error');
    await page.getByLabel('Name').fill('Osprey resonator array');
    await page.getByLabel(/Description/).fill('Released resonators with 2 to 8 µm trenches.');
    await page.getByRole('button', { name: 'Create project' }).click();
    await page.waitForURL(/\/projects\/[0-9a-f-]{36}$/);
    expect(await page.getByRole('heading', { level: 1 }).textContent()).toBe('Osprey resonator array');

    await page.goto(`${server.baseUrl}/projects`);
    expect(await page.getByTestId('project-list').locator('li').count()).toBe(DEMO_PROJECTS.length + 1);

    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/\/sign-in$/);
    await page.goto(`${server.baseUrl}/projects`);
    await page.waitForURL(/\/sign-in$/);
    await page.context().close();
  });

  it('a wrong password shows an error and keeps the user on the sign-in page', async () => {
    const page = await newPage();
    await signInAs(page, byRole('designer').email, 'definitely-not-it');
    const alert = page.getByTestId('form-message');
    await alert.waitFor();
    expect(await alert.textContent()).toBe('E-mail or password is wrong.');
    expect(page.url()).toMatch(/\/sign-in$/);
    await screenshot(page, 'sign-in-wrong-password');
    await page.context().close();
  });

  it('a reviewer sees no "New project" button, gets a 403 notice on the page, and the server refuses the action', async () => {
    const page = await newPage();
    await signInAs(page, byRole('reviewer').email);
    await page.waitForURL(/\/projects$/);
    expect(await page.getByTestId('new-project').count()).toBe(0);
    await page.goto(`${server.baseUrl}/projects/new`);
    await page.getByTestId('forbidden').waitFor();
    expect(await page.getByTestId('forbidden').textContent()).toMatch(/admin or designer/);
    await screenshot(page, 'reviewer-forbidden');
    await page.context().close();

    // the same action straight at the server, bypassing the UI
    const reviewer = await signIn(server.baseUrl, byRole('reviewer').email, DEMO_PASSWORD_DEFAULT);
    const res = await reviewer.post(`/api/v1/teams/${DEMO_TEAM.id}/projects`, { name: 'Sneaky' });
    expect(res.status).toBe(403);
  });

  it('an invited person opens the mailed link, creates an account and lands in the team', async () => {
    const admin = await signIn(server.baseUrl, byRole('admin').email, DEMO_PASSWORD_DEFAULT);
    expect((await admin.post(`/api/v1/teams/${DEMO_TEAM.id}/invites`, { email: 'new.designer@example.com', role: 'designer' })).status).toBe(201);
    const { messages } = (await (await admin.get(`/api/v1/teams/${DEMO_TEAM.id}/outbox`)).json()) as { messages: { to: string; body: string }[] };
    const link = /https?:\/\/\S+\/invite\/\S+/.exec(messages.find((m) => m.to === 'new.designer@example.com')?.body ?? '')?.[0];
    expect(link).toBeDefined();

    const page = await newPage();
    await page.goto(link!);
    await page.getByLabel('Your name').fill('Noor Haddad');
    await page.getByLabel('Password').fill('short');
    await page.getByRole('button', { name: 'Create account and join' }).click();
    await page.getByTestId('error-password').waitFor();
    await page.getByLabel('Password').fill('a-long-enough-password');
    await page.getByRole('button', { name: 'Create account and join' }).click();
    await page.waitForURL(new RegExp(`/teams/${DEMO_TEAM.id}$`));
    expect(await page.getByTestId('member-list').textContent()).toContain('Noor Haddad');
    await page.context().close();
  });

  it('the admin reads the invitation in the outbox page', async () => {
    const page = await newPage();
    await signInAs(page, byRole('admin').email);
    await page.waitForURL(/\/projects$/);
    await page.goto(`${server.baseUrl}/teams/${DEMO_TEAM.id}`);
    await page.getByTestId('invite-form').waitFor();
    await screenshot(page, 'team-admin');
    await page.goto(`${server.baseUrl}/teams/${DEMO_TEAM.id}/outbox`);
    const list = page.getByTestId('outbox-list');
    await list.waitFor();
    expect(await list.textContent()).toContain('new.designer@example.com');
    await screenshot(page, 'outbox');
    await page.context().close();
  });
});
