/**
 * The review workflow in the built app with two roles, in Debian Chromium (issue 10): the reviewer comments and
 * waives a finding with a reason, a waiver without a reason is refused, the designer receives the e-mail in the
 * built-in mail catcher and sees the notification, and the designer cannot sign off. A comment body with a
 * <script> tag renders as text. The same rules are also checked on the API (server-side enforcement).
 */
import Database from 'better-sqlite3';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoLayoutGdsii } from '@/lib/jobs/demo-layout';
import { readLayoutBytes } from '@/lib/layout/read';
import { launchBrowser, screenshot } from '../support/browser';
import { signIn, type TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';

const PASSWORD = 'etch-demo-2026';
let server: TestServer;
let browser: Browser;
let analysisId: string;

async function demoAnalysisDone(client: TestClient): Promise<string> {
  const deadline = Date.now() + 120_000;
  while (Date.now() < deadline) {
    const j = (await (await client.get('/api/v1/projects/demo-kestrel/analyses')).json()) as { analyses: { id: string; status: string }[] };
    const a = j.analyses[0];
    if (a?.status === 'done') return a.id;
    if (a && (a.status === 'failed' || a.status === 'cancelled')) throw new Error(`demo analysis ${a.status}`);
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error('demo analysis did not finish in 120 s');
}

async function signInPage(email: string): Promise<Page> {
  const page = await browser.newPage({ viewport: { width: 1400, height: 1000 } });
  await page.goto(`${server.baseUrl}/sign-in`);
  await page.fill('input[name=email]', email);
  await page.fill('input[name=password]', PASSWORD);
  await page.click('button[type=submit]');
  await page.waitForURL(/\/projects/);
  return page;
}

/** Mail the built-in SMTP catcher stored, read straight from the server's database. */
function outboxFor(address: string): { subject: string; body: string }[] {
  const db = new Database(server.dbFile, { readonly: true });
  try {
    return db.prepare('SELECT subject, body FROM outbox WHERE to_addresses LIKE ? ORDER BY id').all(`%${address}%`) as { subject: string; body: string }[];
  } finally {
    db.close();
  }
}

beforeAll(async () => {
  server = await startTestServer();
  browser = await launchBrowser();
  analysisId = await demoAnalysisDone(await signIn(server.baseUrl, 'reviewer@larkspur.example', PASSWORD));
}, 300_000);

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('review in the browser with two roles', () => {
  let findingKey = '';

  it('reviewer: opens a grouped finding, comments with a <script> body (shown as text) and an @mention', async () => {
    const page = await signInPage('reviewer@larkspur.example');
    await page.goto(`${server.baseUrl}/analyses/${analysisId}?kind=width-below-minimum`);
    const group = page.locator('[data-testid=finding-group-row]').first();
    await group.waitFor();
    expect(Number(await group.locator('[data-testid=group-count]').textContent())).toBeGreaterThan(1);
    await group.click();
    const member = page.locator('[data-testid=group-members] li button').nth(1);
    await member.waitFor();
    findingKey = ((await member.locator('span').first().textContent()) ?? '').trim();
    await member.click();
    await page.locator(`[data-testid=finding-detail]:has-text("${findingKey}")`).waitFor();
    expect(new URL(page.url()).searchParams.get('finding')).toBe(findingKey);

    const body = '<script>window.__injected = 1</script><img src=x onerror="window.__injected=2"> @designer please widen this gap';
    await page.fill('[data-testid=comment-input]', body);
    await page.click('[data-testid=comment-submit]');
    const shown = page.locator('[data-testid=comment-body]').first();
    await shown.waitFor();
    expect(await shown.textContent()).toBe(body);
    expect(await page.evaluate(() => (window as unknown as { __injected?: number }).__injected ?? null)).toBeNull();
    expect(await page.locator('[data-testid=thread] script, [data-testid=thread] img').count()).toBe(0);

    await page.locator('[data-testid=detail-assignee]').selectOption('demo-designer');
    await page.locator('[data-testid=thread] li:has-text("assigned to Suvi Laaksonen")').waitFor();
    await page.close();
  });

  it('reviewer: a waiver without a reason is refused; with a reason it is recorded with the approver', async () => {
    const page = await signInPage('reviewer@larkspur.example');
    await page.goto(`${server.baseUrl}/analyses/${analysisId}?finding=${encodeURIComponent(findingKey)}`);
    await page.locator(`[data-testid=finding-detail]:has-text("${findingKey}")`).waitFor();
    await page.locator('[data-testid=detail-status]').selectOption('waived');
    await page.click('[data-testid=detail-status-apply]');
    await page.locator('[data-testid=detail-error]').waitFor();
    expect(await page.textContent('[data-testid=detail-error]')).toMatch(/written reason/);
    await page.fill('[data-testid=detail-reason]', 'Dummy comb finger outside the sense electrodes; its depth does not matter.');
    await page.click('[data-testid=detail-status-apply]');
    const waiver = page.locator('[data-testid=waiver]');
    await waiver.waitFor();
    expect(await waiver.textContent()).toMatch(/Waived by Rafael Odum/);
    await screenshot(page, 'review-waived');
    await page.close();
  });

  it('designer: received the mention and status e-mails in the mail catcher and sees the notifications', async () => {
    const mails = outboxFor('designer@larkspur.example');
    expect(mails.map((m) => m.subject)).toEqual(
      expect.arrayContaining([expect.stringMatching(/mentioned you on finding/), expect.stringMatching(/assigned finding .* to you/), expect.stringMatching(/to "Accepted with waiver"/)]),
    );
    expect(mails.find((m) => /mentioned/.test(m.subject))?.body).toContain(`/analyses/${analysisId}`);

    const page = await signInPage('designer@larkspur.example');
    const badge = page.locator('[data-testid=unread-count]');
    expect(Number(await badge.textContent())).toBeGreaterThanOrEqual(3);
    await page.click('[data-testid=notification-bell]');
    await page.locator('[data-testid=notification-list] li').first().waitFor();
    const text = await page.textContent('[data-testid=notification-list]');
    expect(text).toMatch(/Rafael Odum mentioned you/);
    expect(text).toMatch(/Accepted with waiver/);
    expect(text).toMatch(/assigned finding .* to you/);
    await screenshot(page, 'review-designer-notifications');
    await page.close();
  });

  it('designer: has no sign-off button, and the API refuses the sign-off and a waiver (403)', async () => {
    const page = await signInPage('designer@larkspur.example');
    await page.goto(`${server.baseUrl}/analyses/${analysisId}`);
    await page.locator('[data-testid=signoff-panel]').waitFor();
    expect(await page.locator('[data-testid=signoff-button]').count()).toBe(0);
    await page.close();

    const designer = await signIn(server.baseUrl, 'designer@larkspur.example', PASSWORD);
    expect((await designer.post(`/api/v1/analyses/${analysisId}/signoff`, {})).status).toBe(403);
    const waive = await designer.post(`/api/v1/analyses/${analysisId}/findings/bulk`, { keys: [findingKey], status: 'waived', reason: 'I think this one is fine really.' });
    expect(waive.status).toBe(403);
  });

  it('API: a waiver without a reason is refused with 422 naming the field; sign-off is refused while errors are open', async () => {
    const reviewer = await signIn(server.baseUrl, 'reviewer@larkspur.example', PASSWORD);
    const r = await reviewer.post(`/api/v1/analyses/${analysisId}/findings/bulk`, { keys: [findingKey], status: 'waived' });
    expect(r.status).toBe(422);
    expect(((await r.json()) as { error: { fieldErrors: Record<string, string[]> } }).error.fieldErrors.reason?.[0]).toMatch(/reason/);
    const s = await reviewer.post(`/api/v1/analyses/${analysisId}/signoff`, {});
    expect(s.status).toBe(409);
    expect(((await s.json()) as { error: { message: string } }).error.message).toMatch(/still open or unwaived/);
  });

  it('a link to one finding (as a canvas pick does) opens the page that holds it and highlights its row', async () => {
    const reviewer = await signIn(server.baseUrl, 'reviewer@larkspur.example', PASSWORD);
    const all = (await (await reviewer.get(`/api/v1/analyses/${analysisId}/findings?view=flat&limit=500`)).json()) as { items: { key: string }[] };
    const target = all.items[60]?.key as string; // row 61: page 3 at 25 rows a page
    const page = await signInPage('reviewer@larkspur.example');
    // every text the pager shows, from the first render on: locating must not flash page 1 on its way to page 3
    await page.addInitScript(() => {
      const seen: string[] = [];
      (window as unknown as { pagerSeen: string[] }).pagerSeen = seen;
      new MutationObserver(() => {
        const text = document.querySelector('[data-testid=findings-page]')?.textContent;
        if (text && text !== seen[seen.length - 1]) seen.push(text);
      }).observe(document, { subtree: true, childList: true, characterData: true });
    });
    await page.goto(`${server.baseUrl}/analyses/${analysisId}?view=flat&finding=${encodeURIComponent(target)}`);
    const row = page.locator(`[data-testid=finding-row][data-row-id="${target}"]`);
    await row.waitFor();
    expect(await row.getAttribute('aria-selected')).toBe('true');
    // The pager and the rows can land in separate renders under load: wait for the pager, do not sample it once.
    await expect.poll(() => page.textContent('[data-testid=findings-page]'), { timeout: 10_000 }).toMatch(/page 3 of/);
    await expect.poll(() => new URL(page.url()).searchParams.get('page'), { timeout: 5000 }).toBe('3');
    await page.waitForTimeout(500); // let the fetch that follows the URL land
    const seen = await page.evaluate(() => (window as unknown as { pagerSeen: string[] }).pagerSeen);
    expect(seen.length).toBeGreaterThan(0);
    for (const text of seen) expect(text).toMatch(/page 3 of/);
    await page.close();
  });

  it('reviewer: waives every error group in one bulk change (with a reason), signs off, and the project page shows it', async () => {
    const page = await signInPage('reviewer@larkspur.example');
    await page.goto(`${server.baseUrl}/analyses/${analysisId}?severity=error`);
    await page.locator('[data-testid=finding-group-row]').first().waitFor();
    expect(await page.locator('[data-testid=signoff-button]').isDisabled()).toBe(true);
    await page.locator('input[aria-label="Check every row on this page"]').check();
    await page.locator('[data-testid=bulk-status]').selectOption('waived');
    await page.fill('[data-testid=bulk-reason]', 'Accepted for the first engineering lot; to be re-checked on calibration wafers.');
    await page.click('[data-testid=bulk-apply]');
    await page.locator('[data-testid=signoff-state]:has-text("Ready for sign-off")').waitFor();
    await page.click('[data-testid=signoff-button]');
    await page.locator('[data-testid=signoff-done]').waitFor();
    expect(await page.textContent('[data-testid=signoff-done]')).toMatch(/Signed off.*Rafael Odum.*model .+ v\d+/s);
    await screenshot(page, 'review-signed-off');
    await page.goto(`${server.baseUrl}/projects/demo-kestrel`);
    expect(await page.textContent('[data-testid=project-signoffs]')).toMatch(/signed off by Rafael Odum/);
    await page.close();

    const reviewer = await signIn(server.baseUrl, 'reviewer@larkspur.example', PASSWORD);
    const after = await reviewer.post(`/api/v1/analyses/${analysisId}/findings/bulk`, { keys: [findingKey], status: 'open' });
    expect(after.status).toBe(409);
    expect(((await after.json()) as { error: { message: string } }).error.message).toMatch(/new analysis/);
  });

  it('a new revision fixes the 2 µm gaps: compare lists them resolved and carries the other waivers over with a note', async () => {
    // revision 2 = the demo layout with every 2 µm comb gap widened to 3 µm about its centre (above the 2.5 µm rule)
    const layout = await readLayoutBytes(demoLayoutGdsii());
    const lines = ['# trenchant-polygons v1', '# unit=dbu dbu=0.001 name=kestrel3-r2', 'layer,datatype,polygon,x,y'];
    let widened = 0;
    for (const set of layout.layers) {
      for (let i = 0; i < set.count; i++) {
        const pts: [number, number][] = [];
        for (let k = set.offsets[i] as number; k < (set.offsets[i + 1] as number); k++) pts.push([set.coords[2 * k] as number, set.coords[2 * k + 1] as number]);
        const xs = pts.map((p) => p[0]);
        const ys = pts.map((p) => p[1]);
        const [x0, x1, y0, y1] = [Math.min(...xs), Math.max(...xs), Math.min(...ys), Math.max(...ys)];
        if (set.layer === 1 && pts.length === 4 && x1 - x0 === 2000 && y1 - y0 === 120_000) {
          pts.splice(0, 4, [x0 - 500, y0], [x1 + 500, y0], [x1 + 500, y1], [x0 - 500, y1]);
          widened++;
        }
        for (const [x, y] of pts) lines.push(`${set.layer},${set.datatype},p${i},${x},${y}`);
      }
    }
    expect(widened).toBe(96); // 4 quadrants × 24 fingers of the 2 µm bank (lib/jobs/demo-layout.ts)
    const designer = await signIn(server.baseUrl, 'designer@larkspur.example', PASSWORD);
    const form = new FormData();
    form.append('file', new Blob([lines.join('\n') + '\n']), 'kestrel3-r2.csv');
    form.append('name', 'Kestrel-3 DRIE');
    const up = await designer.request('/api/v1/projects/demo-kestrel/layouts', { method: 'POST', body: form });
    expect(up.status).toBe(201);
    const rev = ((await up.json()) as { revision: { id: string; revision: number } }).revision;
    expect(rev.revision).toBe(2);
    const first = (await (await designer.get(`/api/v1/analyses/${analysisId}`)).json()) as { analysis: { settings: Record<string, unknown> } };
    const started = await designer.post('/api/v1/projects/demo-kestrel/analyses', { revisionId: rev.id, modelId: 'deep-trench-continuous', settings: first.analysis.settings });
    expect(started.status).toBe(202);
    const second = ((await started.json()) as { analysis: { id: string } }).analysis.id;
    await expect.poll(async () => ((await (await designer.get(`/api/v1/analyses/${second}`)).json()) as { analysis: { status: string } }).analysis.status, { timeout: 120_000, interval: 500 }).toBe('done');

    const page = await signInPage('reviewer@larkspur.example');
    await page.goto(`${server.baseUrl}/analyses/${second}/compare?with=${analysisId}`);
    await page.locator('[data-testid=compare-counts]').waitFor();
    const resolved = (await page.textContent('[data-testid=list-resolved]')) ?? '';
    const added = (await page.textContent('[data-testid=list-new]')) ?? '';
    const unchanged = (await page.textContent('[data-testid=list-unchanged]')) ?? '';
    expect(Number(await page.textContent('[data-testid=count-resolved]'))).toBeGreaterThanOrEqual(96);
    expect(resolved.match(/width-below-minimum/g)?.length).toBe(96);
    expect(added).not.toMatch(/width-below-minimum/);
    expect(unchanged).not.toMatch(/width-below-minimum/);
    await page.click('[data-testid=carry-waivers]');
    await page.locator('[data-testid=carried-notice]').waitFor();
    expect(await page.textContent('[data-testid=carried-notice]')).toMatch(/^\d+ waivers? carried over/);
    await screenshot(page, 'review-compare');

    await page.goto(`${server.baseUrl}/analyses/${second}?view=flat&status=waived`);
    await page.locator('[data-testid=finding-row]').first().click();
    const note = page.locator('[data-testid=carried-note]');
    await note.waitFor();
    expect(await note.textContent()).toMatch(/carried over from Kestrel-3 DRIE r1/);
    await page.close();
  });

  it('API: CSV export lists every stored finding with the waiver', async () => {
    const reviewer = await signIn(server.baseUrl, 'reviewer@larkspur.example', PASSWORD);
    const res = await reviewer.get(`/api/v1/analyses/${analysisId}/findings.csv`);
    expect(res.headers.get('content-type')).toMatch(/text\/csv/);
    const { parse } = await import('csv-parse/sync');
    const rows = parse(await res.text(), { columns: true }) as Record<string, string>[];
    const list = (await (await reviewer.get(`/api/v1/analyses/${analysisId}/findings?view=flat&limit=1`)).json()) as { listed: number };
    expect(rows.length).toBe(list.listed);
    expect(rows.find((x) => x.flag_key === findingKey)?.waiver_approver).toBe('Rafael Odum');
  });
});
