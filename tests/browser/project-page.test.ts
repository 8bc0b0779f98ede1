import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_PROJECTS, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { launchBrowser, screenshot } from '../support/browser';
import { startTestServer, type TestServer } from '../support/server';

// Small defects found by trying the app as a new user would (issue 14): each has its check here.
const byRole = (role: string) => DEMO_USERS.find((u) => u.role === role)!;
const kestrel = DEMO_PROJECTS[0];

describe('project page and navigation', () => {
  let server: TestServer;
  let browser: Browser;
  beforeAll(async () => {
    [server, browser] = await Promise.all([startTestServer(), launchBrowser()]);
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  async function signedIn(role: string): Promise<Page> {
    const page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel('E-mail').fill(byRole(role).email);
    await page.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(/\/projects$/);
    return page;
  }

  it('shows the revision note, labels analyses with their settings, links the API docs, and runs an analysis again', async () => {
    const page = await signedIn('designer');
    expect(await page.getByRole('link', { name: 'API', exact: true }).getAttribute('href')).toBe('/api-docs');
    await page.goto(`${server.baseUrl}/projects/${kestrel.id}`);
    const note = page.getByTestId('revision-note').first();
    await note.waitFor();
    expect(await note.textContent()).toMatch(/invented/);
    const label = page.getByTestId('analysis-settings-label').first();
    await label.waitFor();
    expect(await label.textContent()).toMatch(/layers 1\/0 .*windows .* µm/);
    await screenshot(page, 'project-page-labels');
    const rows = page.getByTestId('analyses-table').locator('tbody tr');
    const before = await rows.count();
    await page.getByTestId('run-again').first().click();
    await page.waitForURL(/\/analyses\/[0-9a-f-]{36}$/);
    await page.getByTestId('analysis-stage').waitFor();
    await page.goto(`${server.baseUrl}/projects/${kestrel.id}`);
    await page.getByTestId('analyses-table').waitFor();
    await expect.poll(() => rows.count()).toBe(before + 1);
    await page.context().close();
  });

  it('the permission table shows what each action means, not its key', async () => {
    const page = await signedIn('admin');
    await page.goto(`${server.baseUrl}/teams/${DEMO_TEAM.id}`);
    const body = (await page.locator('main').textContent()) ?? '';
    expect(body).toContain('Waive findings (with a reason)');
    expect(body).not.toContain('flag.waive');
    await screenshot(page, 'team-permissions');
    await page.context().close();
  });
});
