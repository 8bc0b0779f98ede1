/**
 * Process models through the running app: the API's role checks, immutability and width-rule downloads, then the
 * browser flow of issue 11 — a process engineer uploads the invented sample measurements, fits, sees the plots and
 * the parameter table and publishes; a designer can pick that version for an analysis but cannot edit it; the
 * analysis records the version and carries a depth-uncertainty map.
 */
import Database from 'better-sqlite3';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_PROJECTS, DEMO_TEAM } from '@/lib/data/demo';
import { DEMO_TRUTH } from '../../samples/calibration/make-demo-csv';
import { launchBrowser, screenshot } from '../support/browser';
import { signIn, type TestClient } from '../support/http';
import { PROJECT_ROOT, startTestServer, type TestServer } from '../support/server';

type Version = { id: string; number: number; status: string; document: { openRateUmPerMin: number; version?: string } };
type ModelList = { models: { key: string; versions: { id: string; number: number; status: string }[] }[] };

let server: TestServer;
let browser: Browser;
let pe: TestClient;
let designer: TestClient;
beforeAll(async () => {
  [server, browser] = await Promise.all([startTestServer(), launchBrowser()]);
  [pe, designer] = await Promise.all([signIn(server.baseUrl, 'process@larkspur.example', DEMO_PASSWORD_DEFAULT), signIn(server.baseUrl, 'designer@larkspur.example', DEMO_PASSWORD_DEFAULT)]);
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

async function trenchVersions(client: TestClient) {
  const list = (await (await client.get(`/api/v1/teams/${DEMO_TEAM.id}/models`)).json()) as ModelList;
  return list.models.find((m) => m.key === 'deep-trench-continuous')?.versions ?? [];
}

describe('model versions over HTTP', () => {
  it('seeds published versions; a published version cannot change; designers cannot draft, edit or publish', async () => {
    const versions = await trenchVersions(designer);
    expect(versions.map((v) => [v.number, v.status])).toEqual([[2, 'published'], [1, 'published']]);
    const v2 = versions[0]!.id;
    expect((await pe.patch(`/api/v1/model-versions/${v2}`, { note: 'x' })).status).toBe(409);
    expect((await designer.post(`/api/v1/model-versions/${v2}/drafts`)).status).toBe(403);
    const draft = (await (await pe.post(`/api/v1/model-versions/${v2}/drafts`)).json()) as { version: Version };
    expect(draft.version).toMatchObject({ number: 3, status: 'draft' });
    expect((await designer.patch(`/api/v1/model-versions/${draft.version.id}`, { note: 'mine' })).status).toBe(403);
    expect((await designer.post(`/api/v1/model-versions/${draft.version.id}/publish`)).status).toBe(403);
    // Per-field validation messages of a bad document.
    const bad = await pe.patch(`/api/v1/model-versions/${draft.version.id}`, { document: { ...draft.version.document, openRateUmPerMin: -1, etch: { timeMin: 20, targetDepthUm: 60, toleranceUm: 70, maxAspectRatio: 40 } } });
    expect(bad.status).toBe(400);
    const body = (await bad.json()) as { error: { fieldErrors: Record<string, string[]> } };
    expect(body.error.fieldErrors['document.openRateUmPerMin']).toEqual(['openRateUmPerMin must be > 0 µm/min']);
    expect(body.error.fieldErrors['document.etch.toleranceUm']).toEqual(['etch.toleranceUm must be smaller than etch.targetDepthUm']);
    expect((await pe.request(`/api/v1/model-versions/${draft.version.id}`, { method: 'DELETE' })).status).toBe(204);
  });

  it('width rules download as CSV and JSON; a target below the stop layer is refused by field', async () => {
    const v2 = (await trenchVersions(pe))[0]!.id;
    const json = (await (await designer.get(`/api/v1/model-versions/${v2}/width-rules?kind=trench&targetDepthUm=40`)).json()) as { minimumWidthUm: number; rows: { widthUm: number; depthUm: number; pass: boolean; status: string; depthSigmaUm: number | null }[]; uncertaintyBandK: number };
    expect(json.minimumWidthUm).toBeGreaterThan(0);
    // The minimum width is where the depth reaches target − tolerance: rows on either side agree with it.
    for (const r of json.rows) if (r.status !== 'deep') expect(r.pass, `width ${r.widthUm}`).toBe(r.widthUm >= json.minimumWidthUm);
    expect(json.uncertaintyBandK).toBe(1.96);
    expect(json.rows.every((r) => (r.depthSigmaUm ?? -1) >= 0)).toBe(true);
    const csv = await designer.get(`/api/v1/model-versions/${v2}/width-rules?kind=trench&targetDepthUm=40&format=csv`);
    expect(csv.headers.get('content-type')).toMatch(/text\/csv/);
    expect(csv.headers.get('content-disposition')).toMatch(/attachment; filename="width-rules-deep-trench-continuous-v2-trench-40um.csv"/);
    const text = await csv.text();
    expect(text).toMatch(/^width_um,depth_um,aspect_ratio,margin_um,status,time_to_target_min,over_etch_um,depth_sigma_um,warnings$/m);
    const deep = await designer.get(`/api/v1/model-versions/${v2}/width-rules?targetDepthUm=90`);
    expect(deep.status).toBe(400);
    expect(((await deep.json()) as { error: { fieldErrors: Record<string, string[]> } }).error.fieldErrors.targetDepthUm?.[0]).toMatch(/below the stop layer/);
  });

  it('density limits: the band per width matches the depth grid, CSV download, bad widths refused by item, shown on the version page', async () => {
    const v2 = (await trenchVersions(pe))[0]!.id;
    type Limits = { densities: number[]; targetDepthUm: number; toleranceUm: number; rows: { widthUm: number; depthsUm: number[]; maxDensity: number | null; minDensity: number | null }[]; caution: string };
    const json = (await (await designer.get(`/api/v1/model-versions/${v2}/density-limits?kind=trench&targetDepthUm=40&widthsUm=3,10,30`)).json()) as Limits;
    expect(json.rows.map((r) => r.widthUm)).toEqual([3, 10, 30]);
    const need = json.targetDepthUm - json.toleranceUm;
    for (const r of json.rows) {
      // Grid densities inside the band reach target − tolerance; those above the upper limit do not.
      json.densities.forEach((rho, i) => expect(r.depthsUm[i]! >= need, `w ${r.widthUm} ρ ${rho}`).toBe(r.maxDensity !== null && rho <= r.maxDensity));
    }
    expect(json.caution).toMatch(/process of record/);
    const csv = await designer.get(`/api/v1/model-versions/${v2}/density-limits?kind=trench&targetDepthUm=40&format=csv`);
    expect(csv.headers.get('content-disposition')).toMatch(/attachment; filename="density-limits-deep-trench-continuous-v2-trench-40um.csv"/);
    expect(await csv.text()).toMatch(/^width_um,min_density,max_density,depth_um_at_0,/m);
    const bad = await designer.get(`/api/v1/model-versions/${v2}/density-limits?widthsUm=3,abc`);
    expect(bad.status).toBe(400);
    expect(JSON.stringify(await bad.json())).toMatch(/item 2 \('abc'\)/);
    const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const p = await ctx.newPage();
    await p.goto(`${server.baseUrl}/sign-in`);
    await p.getByLabel('E-mail').fill('process@larkspur.example');
    await p.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await p.getByRole('button', { name: 'Sign in' }).click();
    await p.waitForURL(/\/projects$/);
    await p.goto(`${server.baseUrl}/models/versions/${v2}`);
    await p.getByTestId('dl-widths').fill('2, 8, 40');
    await p.getByTestId('dl-table').locator('tbody tr').nth(2).waitFor();
    expect(await p.getByTestId('dl-table').locator('tbody tr').count()).toBe(3);
    await p.getByTestId('density-limits').scrollIntoViewIfNeeded();
    await screenshot(p, 'models-density-limits');
    await ctx.close();
  });
});

describe('who may keep rule sets and models (model.publish, lib/auth/permissions.ts)', () => {
  it('admin and process engineer create rule sets; designer and reviewer get 403; anonymous 401; other teams see 404 for a version', async () => {
    const users = { admin: 'admin@larkspur.example', process_engineer: 'process@larkspur.example', designer: 'designer@larkspur.example', reviewer: 'reviewer@larkspur.example' } as const;
    let n = 0;
    for (const [role, email] of Object.entries(users)) {
      const c = await signIn(server.baseUrl, email, DEMO_PASSWORD_DEFAULT);
      const res = await c.post(`/api/v1/teams/${DEMO_TEAM.id}/rule-sets`, { name: `Matrix ${++n}`, rules: { limits: { maxDensity: 0.5 } } });
      expect(res.status, role).toBe(role === 'admin' || role === 'process_engineer' ? 201 : 403);
      expect((await c.get(`/api/v1/teams/${DEMO_TEAM.id}/rule-sets`)).status, role).toBe(200);
    }
    const anonymous = await fetch(`${server.baseUrl}/api/v1/teams/${DEMO_TEAM.id}/rule-sets`);
    expect(anonymous.status).toBe(401);
    const outsider = new (pe.constructor as new (b: string) => TestClient)(server.baseUrl);
    await outsider.post('/api/v1/auth/sign-up', { name: 'Outsider', email: 'outsider-models@example.com', password: 'outsider-password', teamName: 'Elsewhere Fab' });
    const v2 = (await trenchVersions(pe))[0]!.id;
    expect((await outsider.get(`/api/v1/model-versions/${v2}`)).status).toBe(404);
    expect((await outsider.get(`/api/v1/model-versions/${v2}/width-rules`)).status).toBe(404);
    // A bad rule is refused with the field named.
    const bad = await pe.post(`/api/v1/teams/${DEMO_TEAM.id}/rule-sets`, { name: 'Bad', rules: { densityWindows: [{ windowUm: 50, stepUm: 100 }] } });
    expect(bad.status).toBe(400);
    expect(Object.keys(((await bad.json()) as { error: { fieldErrors: Record<string, string[]> } }).error.fieldErrors)).toEqual(['rules.densityWindows.0.stepUm']);
  });
});

describe('calibration in the browser (issue 11)', () => {
  async function page(email: string): Promise<Page> {
    const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const p = await ctx.newPage();
    p.on('dialog', (d) => void d.accept());
    await p.goto(`${server.baseUrl}/sign-in`);
    await p.getByLabel('E-mail').fill(email);
    await p.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await p.getByRole('button', { name: 'Sign in' }).click();
    await p.waitForURL(/\/projects$/);
    return p;
  }

  let publishedId = '';
  it('process engineer: bad rows are listed by line, the sample measurements fit, plots and parameters show, publish', async () => {
    const p = await page('process@larkspur.example');
    await p.goto(`${server.baseUrl}/models`);
    await p.getByTestId('versions-deep-trench-continuous').getByRole('link', { name: 'v1' }).click();
    await p.getByTestId('new-draft').click();
    await p.getByTestId('draft-form').waitFor();
    await p.getByTestId('calibration-file').setInputFiles({ name: 'bad.csv', mimeType: 'text/csv', buffer: Buffer.from('width_um,kind,density,time_min,depth_um\n2,trench,0.3,10,20\n2,slot,0.3,10,20\n-1,hole,0.3,10,20\n') });
    const errors = p.getByTestId('calibration-errors');
    await errors.waitFor();
    expect(await errors.locator('li').allTextContents()).toEqual(['line 3: kind must be trench or hole, got "slot"', 'line 4: width_um must be a number > 0, got "-1"']);
    expect(await p.getByTestId('run-fit').count()).toBe(0);

    // One width only: the fit is refused with what is missing.
    await p.getByTestId('calibration-file').setInputFiles({ name: 'one-width.csv', mimeType: 'text/csv', buffer: Buffer.from('width_um,kind,density,time_min,depth_um\n2,trench,0.3,10,20\n2,trench,0.3,12,23\n2,trench,0.3,15,27\n') });
    await p.getByTestId('run-fit').click();
    expect(await p.getByTestId('fit-refused').textContent()).toBe('Cannot calibrate: need at least two distinct widths to separate open rate from reaction probability.');

    await p.getByTestId('calibration-file').setInputFiles(path.join(PROJECT_ROOT, 'samples', 'calibration', 'demo-trench-lag.csv'));
    await p.getByTestId('run-fit').click();
    await p.getByTestId('save-fit').waitFor({ timeout: 60_000 });
    const params = p.getByTestId('fit-parameters');
    expect(await params.textContent()).toMatch(/Open-field etch rate.*±/);
    for (const id of ['plot-depth-width', 'plot-depth-density', 'plot-residuals', 'plot-arde', 'plot-loading']) {
      expect(await p.getByTestId(id).locator('svg.recharts-surface').count(), id).toBeGreaterThan(0);
    }
    expect(await p.getByTestId('fit-statistics').textContent()).toMatch(/R²0\.99/);
    await screenshot(p, 'models-calibration-fit');
    await p.getByTestId('save-fit').click();
    await p.getByTestId('form-message').filter({ hasText: 'saved in this draft' }).waitFor();
    // The draft form now holds the fitted open rate (not the value it showed before the fit).
    await p.waitForFunction(() => (document.querySelector('#param-openRateUmPerMin') as HTMLInputElement | null)?.value !== '3.6');
    expect(Number(await p.locator('#param-openRateUmPerMin').inputValue())).toBeCloseTo(DEMO_TRUTH.openRateUmPerMin, 0); // the invented truth behind the sample (make-demo-csv.ts)
    await p.getByTestId('publish-version').click();
    await p.getByTestId('version-status').filter({ hasText: /Published — read only/ }).waitFor();
    await p.getByTestId('parameter-table').waitFor();
    expect(await p.getByTestId('parameter-table').count()).toBe(1);
    publishedId = p.url().split('/').pop() ?? '';
    await screenshot(p, 'models-published');
  });

  it('designer: reads the version without edit controls, picks it for an analysis; the analysis records it', async () => {
    expect(publishedId).toMatch(/^[0-9a-f-]{36}$/);
    const p = await page('designer@larkspur.example');
    await p.goto(`${server.baseUrl}/models/versions/${publishedId}`);
    await p.getByTestId('parameter-table').waitFor();
    expect(await p.getByTestId('draft-form').count()).toBe(0);
    expect(await p.getByTestId('new-draft').count()).toBe(0);
    expect(await p.getByTestId('publish-version').count()).toBe(0);
    expect(await p.getByTestId('calibration-file').count()).toBe(0);
    expect(await p.getByTestId('calibration-plots').count()).toBe(1);

    const kestrel = DEMO_PROJECTS[0]!.id;
    await p.goto(`${server.baseUrl}/projects/${kestrel}/analyses/new`);
    const select = p.locator('#model');
    // Trench project: a continuous trench model is preselected, and the demo rule set turns on density checks.
    expect(await select.locator('option:checked').textContent()).toMatch(/Demo deep trench, continuous etch v3/);
    expect(await p.getByTestId('model-default-reason').textContent()).toMatch(/used last|trench project/);
    expect(await p.getByTestId('rule-set-select').locator('option:checked').textContent()).toMatch(/Larkspur deep-etch rules \(demo\)/);
    expect(await p.locator('input[name="maxDensity"]').inputValue()).toBe('60%');
    await select.selectOption(publishedId);
    await screenshot(p, 'models-new-analysis');
    await p.getByTestId('start-analysis').click();
    await p.waitForURL(/\/analyses\/[0-9a-f-]{36}$/);
    const analysisId = p.url().split('/').pop()!;
    const db = new Database(server.dbFile, { readonly: true });
    const row = db.prepare('SELECT model_version_id, rule_set_id, model_version, settings FROM analyses WHERE id = ?').get(analysisId) as { model_version_id: string; rule_set_id: string | null; model_version: string; settings: string };
    db.close();
    expect(row.model_version_id).toBe(publishedId);
    expect(row.model_version).toBe('v3');
    expect(row.rule_set_id).not.toBeNull();
    expect(JSON.parse(row.settings).limits).toMatchObject({ maxDensity: 0.6, minDensity: 0.05 });
    // The designer cannot change the published version through the API either.
    expect((await designer.patch(`/api/v1/model-versions/${publishedId}`, { note: 'x' })).status).toBe(403);
    // The analysis of a calibrated version carries per-opening σ and the depth-uncertainty map.
    let status = '';
    for (let i = 0; i < 120 && status !== 'done' && status !== 'failed'; i++) {
      status = ((await (await designer.get(`/api/v1/analyses/${analysisId}`)).json()) as { analysis: { status: string } }).analysis.status;
      if (status !== 'done') await new Promise((r) => setTimeout(r, 500));
    }
    expect(status).toBe('done');
    const results = (await (await designer.get(`/api/v1/analyses/${analysisId}/results?limit=500`)).json()) as { maps: { kind: string }[]; features: { items: { depthSigmaUm: number | null }[] } };
    expect(results.maps.map((m) => m.kind)).toContain('depth-uncertainty');
    // Every opening has a σ; openings that reach the stop layer have σ = 0 (their depth is the stop depth).
    const sigmas = results.features.items.map((f) => f.depthSigmaUm);
    expect(sigmas.every((v) => typeof v === 'number' && v >= 0)).toBe(true);
    expect(Math.max(...(sigmas as number[]))).toBeGreaterThan(0);
  });
});
