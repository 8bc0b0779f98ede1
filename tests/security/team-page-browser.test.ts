import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { launchBrowser, screenshot } from '../support/browser';
import { signIn } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';

const byRole = (role: string) => DEMO_USERS.find((u) => u.role === role)!;

describe('team page in Chromium: removal needs a confirmation, invitations can be cancelled, CSP holds', () => {
  let server: TestServer;
  let browser: Browser;
  let page: Page;
  const cspViolations: string[] = [];
  beforeAll(async () => {
    [server, browser] = await Promise.all([startTestServer(), launchBrowser()]);
    const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    page = await context.newPage();
    page.on('console', (m) => {
      if (/Content Security Policy|Refused to (execute|load|apply|create)/i.test(m.text())) cspViolations.push(m.text());
    });
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel('E-mail').fill(byRole('admin').email);
    await page.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(/\/projects$/);
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('the first click on Remove only asks; Keep leaves the member; the confirmed removal removes', async () => {
    const reviewer = byRole('reviewer');
    await page.goto(`${server.baseUrl}/teams/${DEMO_TEAM.id}`);
    const row = page.getByTestId('member-list').locator('li', { hasText: reviewer.email });
    await row.getByRole('button', { name: 'Remove…' }).click();
    const dialog = row.getByTestId('confirm-remove');
    await dialog.waitFor();
    expect(await dialog.textContent()).toContain(`Remove ${reviewer.name} from the team?`);
    expect(await dialog.textContent()).toMatch(/API tokens for this team are revoked/);
    await screenshot(page, 'team-remove-confirm');
    await dialog.getByRole('button', { name: 'Keep' }).click();
    await dialog.waitFor({ state: 'detached' });
    await page.reload();
    expect(await page.getByTestId('member-list').textContent()).toContain(reviewer.email);

    const row2 = page.getByTestId('member-list').locator('li', { hasText: reviewer.email });
    await row2.getByRole('button', { name: 'Remove…' }).click();
    await row2.getByRole('button', { name: `Remove ${reviewer.name}` }).click();
    await page.waitForFunction((email) => !document.querySelector('[data-testid="member-list"]')?.textContent?.includes(email), reviewer.email);
  });

  it('a pending invitation has a Cancel button that withdraws it', async () => {
    const api = await signIn(server.baseUrl, byRole('admin').email, DEMO_PASSWORD_DEFAULT);
    expect((await api.post(`/api/v1/teams/${DEMO_TEAM.id}/invites`, { email: 'pending.person@example.com', role: 'designer' })).status).toBe(201);
    await page.goto(`${server.baseUrl}/teams/${DEMO_TEAM.id}`);
    const pending = page.getByTestId('pending-invites');
    await pending.waitFor();
    expect(await pending.textContent()).toContain('pending.person@example.com');
    await screenshot(page, 'team-pending-invites');
    await pending.getByRole('button', { name: 'Cancel the invitation of pending.person@example.com' }).click();
    await pending.waitFor({ state: 'detached' });
    const list = (await (await api.get(`/api/v1/teams/${DEMO_TEAM.id}/invites`)).json()) as { invites: unknown[] };
    expect(list.invites).toHaveLength(0);
  });

  it('pages hydrate under the content security policy without violations', async () => {
    expect(cspViolations).toEqual([]);
  });
});
