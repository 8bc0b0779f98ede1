import { readFileSync } from 'node:fs';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_PROJECTS, DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { launchBrowser, screenshot } from '../support/browser';
import { signIn, type TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';

// Defects found by using the app as designer, process engineer and reviewer at desktop and phone widths; each check
// here failed before its fix. Expected texts are the product's own words.
const byRole = (role: string) => DEMO_USERS.find((u) => u.role === role)!;
const kestrel = DEMO_PROJECTS[0];
const VIADUCT = DEMO_PROJECTS[1].id;

describe('UX round: phone width, uploads, layer choice, calibration, compare', () => {
  let server: TestServer;
  let browser: Browser;
  let designer: TestClient;
  beforeAll(async () => {
    [server, browser] = await Promise.all([startTestServer(), launchBrowser()]);
    designer = await signIn(server.baseUrl, byRole('designer').email, DEMO_PASSWORD_DEFAULT);
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  async function signedIn(role: string, width = 1280, height = 900): Promise<Page> {
    const page = await (await browser.newContext({ viewport: { width, height } })).newPage();
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel('E-mail').fill(byRole(role).email);
    await page.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(/\/projects$/);
    return page;
  }
  const pageWidth = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth);

  it('at 390 px the header and the project page fit the screen (nav scrolls in its own row)', async () => {
    const page = await signedIn('designer', 390, 844);
    await page.waitForLoadState('networkidle');
    expect(await pageWidth(page)).toBeLessThanOrEqual(390);
    await page.goto(`${server.baseUrl}/projects/${kestrel.id}`);
    await page.getByTestId('analyses-table').waitFor();
    expect(await pageWidth(page)).toBeLessThanOrEqual(390);
    // the analysis page with its findings table (kept at a readable minimum width, scrolled inside its card)
    await page.getByTestId('analyses-table').getByRole('link').first().click();
    await page.getByTestId('findings-table').waitFor({ timeout: 120_000 });
    expect(await pageWidth(page)).toBeLessThanOrEqual(390);
    expect(await page.getByRole('button', { name: 'Sign out' }).isVisible()).toBe(true);
    await screenshot(page, 'ux-phone-project');
    await page.context().close();
  });

  it('the layout name follows a second chosen file instead of keeping the first one', async () => {
    const page = await signedIn('designer');
    await page.goto(`${server.baseUrl}/projects/${VIADUCT}/upload`);
    const input = page.getByTestId('file-input');
    await input.setInputFiles({ name: 'wrong-die.gds', mimeType: 'application/octet-stream', buffer: Buffer.from([0, 6, 0, 2, 0, 5]) });
    expect(await page.getByLabel('Layout name').inputValue()).toBe('wrong-die');
    await input.setInputFiles({ name: 'mems-die-excerpt.csv', mimeType: 'text/csv', buffer: readFileSync(new URL('../../samples/mems-die-excerpt.csv', import.meta.url)) });
    expect(await page.getByLabel('Layout name').inputValue()).toBe('mems-die-excerpt');
    // a name the user typed is kept
    await page.getByLabel('Layout name').fill('Kestrel excerpt');
    await input.setInputFiles({ name: 'other.csv', mimeType: 'text/csv', buffer: Buffer.from('x') });
    expect(await page.getByLabel('Layout name').inputValue()).toBe('Kestrel excerpt');
    await page.context().close();
  });

  it('compare offers no empty choice and no idle button while the project has a single analysis', async () => {
    // runs before any other analysis of Kestrel is started in this file
    const { analyses } = (await (await designer.get(`/api/v1/projects/${kestrel.id}/analyses`)).json()) as { analyses: { id: string }[] };
    expect(analyses).toHaveLength(1);
    const page = await signedIn('designer');
    await page.goto(`${server.baseUrl}/analyses/${analyses[0]!.id}/compare`);
    await page.getByTestId('compare-none').waitFor();
    expect(await page.getByTestId('compare-with').count()).toBe(0);
    expect(await page.getByRole('button', { name: 'Compare' }).count()).toBe(0);
    await page.context().close();
  });

  it('an etch layer open over the whole die gets a caution naming the layer and the polarity', async () => {
    const { layouts } = (await (await designer.get(`/api/v1/projects/${kestrel.id}/layouts`)).json()) as { layouts: { revisions: { id: string; layers: { layer: number; datatype: number; polygons: number }[] }[] }[] };
    const revision = layouts[0]!.revisions[0]!;
    // the demo layout's layer 0/0 is its die outline: one polygon over the whole die
    expect(revision.layers.find((l) => l.layer === 0 && l.datatype === 0)?.polygons).toBe(1);
    const res = await designer.post(`/api/v1/projects/${kestrel.id}/analyses`, { revisionId: revision.id, settings: { etchLayers: [{ layer: 0, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }] }, modelId: 'deep-trench-continuous' });
    expect(res.status).toBe(202);
    const { analysis } = (await res.json()) as { analysis: { id: string } };
    const page = await signedIn('designer');
    await page.goto(`${server.baseUrl}/analyses/${analysis.id}`);
    await page.getByTestId('layer-hint').waitFor({ timeout: 120_000 });
    expect(await page.getByTestId('layer-hint').textContent()).toMatch(/of the die is open on layer 0\/0 \(polarity clear\).*die outline/);
    // map tabs use the summary's words for windows, not the stored file names
    const tab = page.getByTestId('map-window-density-100um-50um');
    await tab.waitFor({ timeout: 60_000 });
    expect(await tab.textContent()).toBe('Window density 100/50 µm');
    await screenshot(page, 'ux-layer-hint');
    await page.context().close();
  });

  it('measurements can be typed for a calibration; a short row names its line and the rows around it are still checked', async () => {
    const pe = await signIn(server.baseUrl, byRole('process_engineer').email, DEMO_PASSWORD_DEFAULT);
    const list = (await (await pe.get(`/api/v1/teams/${DEMO_TEAM.id}/models`)).json()) as { models: { key: string; versions: { id: string; number: number }[] }[] };
    const v2 = list.models.find((m) => m.key === 'deep-trench-continuous')!.versions[0]!.id;
    const draft = ((await (await pe.post(`/api/v1/model-versions/${v2}/drafts`)).json()) as { version: { id: string; document: Record<string, unknown> } }).version;
    const page = await signedIn('process_engineer');
    await page.goto(`${server.baseUrl}/models/versions/${draft.id}`);
    await page.getByTestId('calibration-typed').locator('summary').click();
    await page.getByTestId('calibration-rows').fill('width_um,kind,density,time_min,depth_um\n2,trench,0.2,20,38\n5,trench,0.2\n10,trench,zz,20,52\n');
    await page.getByTestId('calibration-use-rows').click();
    const errors = page.getByTestId('calibration-errors');
    await errors.waitFor();
    const text = (await errors.textContent()) ?? '';
    expect(text).toContain('line 3: 3 values, the header has 5 columns');
    expect(text).toContain('line 4: density must be a number in [0, 1], got "zz"');
    await page.getByTestId('calibration-rows').fill('width_um,kind,density,time_min,depth_um\n2,trench,0.2,20,38\n5,trench,0.2,20,47\n10,trench,0.2,20,52\n50,trench,0.2,20,58\n');
    await page.getByTestId('calibration-use-rows').click();
    expect(await page.getByTestId('calibration-summary').textContent()).toMatch(/typed measurements: 4 usable rows/);
    await page.getByTestId('run-fit').click();
    await page.getByTestId('calibration-result').waitFor({ timeout: 60_000 });
    await screenshot(page, 'ux-typed-calibration');

    // a fitted value typed over after the calibration: the page says the fit no longer applies
    expect(await page.getByTestId('calibration-drift').count()).toBe(0);
    expect((await pe.patch(`/api/v1/model-versions/${draft.id}`, { document: { ...draft.document, openRateUmPerMin: 4.2 } })).status).toBe(200);
    await page.goto(`${server.baseUrl}/models/versions/${draft.id}`);
    expect(await page.getByTestId('calibration-drift').textContent()).toMatch(/Open-field etch rate is 4\.2 µm\/min here; the fit gave 3\.66/);
    await page.goto(`${server.baseUrl}/models`);
    expect(await page.getByTestId('edited-since-calibration').count()).toBe(1);
    await page.context().close();
  });
});
