import type Database from 'better-sqlite3';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_PROJECTS, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { METHOD_SECTIONS } from '@/lib/methods';
import { launchBrowser, screenshot } from '../support/browser';
import { startTestServer, type TestServer } from '../support/server';
import { bearerFetch, openTestDb, sha256Hex } from './tokens-db';

/**
 * The API tokens page in a real browser: create (shown once, stored hashed, audited), use it from a script,
 * revoke it (audited, 401 at once); the server re-checks team membership on a tampered form. Also screenshots
 * of the tokens and Methods pages into /tmp/shots.
 */
const designer = DEMO_USERS.find((u) => u.role === 'designer')!;

describe('API tokens page and Methods page in the browser', () => {
  let server: TestServer;
  let browser: Browser;
  let page: Page;
  let db: Database.Database;

  beforeAll(async () => {
    server = await startTestServer();
    db = openTestDb(server.dbFile);
    browser = await launchBrowser();
    page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel('E-mail').fill(designer.email);
    await page.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(/\/projects/);
  });
  afterAll(async () => {
    await browser?.close();
    db?.close();
    await server?.stop();
  });

  it('is linked from the app header', async () => {
    await page.getByRole('link', { name: 'API tokens' }).click();
    await page.waitForURL(/\/account\/tokens$/);
    expect(await page.getByRole('heading', { level: 1 }).textContent()).toBe('API tokens');
  });

  it('refuses an empty name with a field message', async () => {
    await page.getByRole('button', { name: 'Create token' }).click();
    await expectVisible(page, '[data-testid="error-name"]');
    expect(await page.locator('[data-testid="new-token"]').count()).toBe(0);
  });

  let token = '';
  it('creates a token, shows it once with a warning, and stores only its SHA-256', async () => {
    await page.getByLabel('Name').fill('CI on main');
    await page.getByRole('button', { name: 'Create token' }).click();
    await expectVisible(page, '[data-testid="new-token-value"]');
    token = (await page.locator('[data-testid="new-token-value"]').textContent())?.trim() ?? '';
    expect(token).toMatch(/^trn_[A-Za-z0-9_-]{43}$/);
    expect(await page.locator('[data-testid="new-token"]').textContent()).toContain('will not be shown again');
    await screenshot(page, 'api-tokens-created');

    const row = db.prepare('SELECT * FROM api_tokens WHERE name = ?').get('CI on main') as Record<string, unknown>;
    expect(row.token_hash).toBe(sha256Hex(token));
    expect(row.team_id).toBe(DEMO_TEAM.id);
    expect(JSON.stringify(row)).not.toContain(token.slice(4)); // the secret part is nowhere in the row
    const audit = db.prepare("SELECT actor_id, team_id, target FROM audit_log WHERE action = 'token.create'").all();
    expect(audit).toEqual([{ actor_id: designer.id, team_id: DEMO_TEAM.id, target: row.id }]);

    await page.reload();
    expect(await page.locator('[data-testid="new-token"]').count()).toBe(0);
    expect(await page.content()).not.toContain(token);
    expect(await page.locator('[data-testid="token-row"]').first().textContent()).toContain(String(row.prefix));
  });

  it('the created token works from a script for its team', async () => {
    const api = bearerFetch(server.baseUrl, token);
    const res = await api('/api/v1/projects');
    expect(res.status).toBe(200);
    const body = (await res.json()) as { projects: { id: string }[] };
    expect(body.projects.map((p) => p.id)).toEqual(expect.arrayContaining(DEMO_PROJECTS.map((p) => p.id)));
    await page.reload();
    expect(await page.locator('[data-testid="token-row"]').first().textContent()).not.toContain('never');
  });

  it('a tampered form cannot create a token for a team the user is not in', async () => {
    await page.locator('#token-team').evaluate((el) => {
      const select = el as HTMLSelectElement;
      const opt = select.options[0];
      if (opt) opt.value = 'some-other-team';
    });
    await page.getByLabel('Name').fill('Sneaky');
    await page.getByRole('button', { name: 'Create token' }).click();
    await expectVisible(page, '[data-testid="form-message"]');
    expect(await page.locator('[data-testid="form-message"]').textContent()).toMatch(/not a member/i);
    expect(db.prepare("SELECT count(*) AS n FROM api_tokens WHERE name = 'Sneaky'").get()).toEqual({ n: 0 });
  });

  it('revokes the token: 401 at once, audited, shown as revoked', async () => {
    await page.reload();
    page.once('dialog', (d) => void d.accept());
    await page.getByRole('button', { name: 'Revoke CI on main' }).click();
    await expectVisible(page, '[data-testid="token-revoked"]');
    expect((await bearerFetch(server.baseUrl, token)('/api/v1/projects')).status).toBe(401);
    expect(db.prepare("SELECT count(*) AS n FROM audit_log WHERE action = 'token.revoke'").get()).toEqual({ n: 1 });
    await screenshot(page, 'api-tokens-revoked');
  });

  it('shows the Methods page with every section, formulas in monospace and the cautions', async () => {
    await page.goto(`${server.baseUrl}/methods`);
    const shown = METHOD_SECTIONS.filter((s) => s.id !== 'cautions');
    expect(await page.locator('h2').allTextContents()).toEqual(expect.arrayContaining(shown.map((s, i) => `${i + 1}.${s.title}`)));
    await expectVisible(page, '[data-testid="method-cautions"]');
    const font = await page.locator('figure pre').first().evaluate((el) => getComputedStyle(el).fontFamily);
    expect(font).toMatch(/JetBrains Mono|monospace/);
    await screenshot(page, 'methods');
  });

  it('shows the Methods and API pages to a visitor who is not signed in', async () => {
    const anon = await browser.newPage({ viewport: { width: 1280, height: 900 } });
    await anon.goto(`${server.baseUrl}/methods`);
    await expectVisible(anon, '[data-testid="method-cautions"]');
    await anon.goto(`${server.baseUrl}/api-docs`);
    expect(await anon.locator('[data-testid="api-operations"] li').count()).toBeGreaterThan(20);
    await screenshot(anon, 'api-docs');
    await anon.close();
  });
});

async function expectVisible(page: Page, selector: string): Promise<void> {
  await page.locator(selector).first().waitFor({ state: 'visible', timeout: 15_000 });
}
