/**
 * The team-limits form in Chromium: an admin sees it on the team page, a bad value gets a field message, a good
 * one is saved and is what the API reports; a designer does not see the form.
 */
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_TEAM } from '@/lib/data/demo';
import { launchBrowser, screenshot } from '../support/browser';
import { startTestServer, type TestServer } from '../support/server';
import { json, signInAs } from './support';

describe('team limits form', () => {
  let server: TestServer;
  let browser: Browser;
  beforeAll(async () => {
    [server, browser] = await Promise.all([startTestServer({ env: { TRENCHANT_DEMO: '1' } }), launchBrowser()]);
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  async function pageAs(email: string): Promise<Page> {
    const page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(/\/projects$/);
    await page.goto(`${server.baseUrl}/teams/${DEMO_TEAM.id}`);
    return page;
  }

  it('admin: refuses a bad value by field, saves a good one', async () => {
    const page = await pageAs('admin@larkspur.example');
    const form = page.getByTestId('team-limits-form');
    await expect(form.getByLabel('Polygons per layout (after flattening)').inputValue()).resolves.toBe('10000000');
    await form.getByLabel('Polygons per layout (after flattening)').fill('12');
    await form.getByRole('button', { name: 'Save limits' }).click();
    await page.getByTestId('error-maxPolygons').waitFor({ timeout: 30_000 });
    await expect(page.getByTestId('error-maxPolygons').textContent()).resolves.toContain('at least 1,000');
    await form.getByLabel('Polygons per layout (after flattening)').fill('2500000');
    await form.getByLabel('Result size per analysis (MiB)').fill('512');
    await form.getByRole('button', { name: 'Save limits' }).click();
    // The earlier "Please correct…" message stays until the new state arrives: wait for the success text itself.
    await form.getByText('Limits saved').waitFor({ timeout: 30_000 });
    await screenshot(page, 'team-limits');
    const admin = await signInAs(server.baseUrl, 'admin');
    const got = await json<{ limits: { maxPolygons: number; maxAnalysisBytes: number } }>(await admin.get(`/api/v1/teams/${DEMO_TEAM.id}/limits`));
    expect(got.limits).toMatchObject({ maxPolygons: 2_500_000, maxAnalysisBytes: 512 * 1024 * 1024 });
  });

  it('designer: no limits form', async () => {
    const page = await pageAs('designer@larkspur.example');
    await page.getByTestId('member-list').waitFor();
    expect(await page.getByTestId('team-limits-form').count()).toBe(0);
  });
});
