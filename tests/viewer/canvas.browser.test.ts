// The canvas viewer in headless Chromium (WebGL through SwiftShader) on the seeded demo analysis.
import { randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import Database from 'better-sqlite3';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT } from '@/lib/data/demo';
import { decodeGrid } from '@/lib/pipeline/grid-file';
import { finiteRange } from '@/lib/viewer/color-scale';
import { decodeFeatures } from '@/lib/viewer/feature-wire';
import { decodeFlags, flagAt } from '@/lib/viewer/flag-wire';
import { decodePolygons } from '@/lib/viewer/polygon-wire';
import { layoutToScreen, type View } from '@/lib/viewer/view-transform';
import { CHROMIUM_PATH, launchBrowser, screenshot } from '../support/browser';
import { startTestServer, type TestServer } from '../support/server';
import { chromium } from 'playwright-core';

/** Pixels of the WebGL canvas as RGBA (the scene keeps its drawing buffer, so a 2D copy reads what is shown). */
async function canvasPixels(page: Page): Promise<{ differ: number; total: number; hash: number }> {
  return page.evaluate(() => {
    const c = document.querySelector('canvas[data-testid=viewer-canvas]') as HTMLCanvasElement;
    const copy = document.createElement('canvas');
    copy.width = c.width;
    copy.height = c.height;
    const ctx = copy.getContext('2d')!;
    ctx.drawImage(c, 0, 0);
    const d = ctx.getImageData(0, 0, c.width, c.height).data;
    const bg = [0xf4, 0xf2, 0xee];
    let differ = 0;
    let hash = 0;
    for (let p = 0; p < d.length; p += 4) {
      if (Math.abs(d[p]! - bg[0]!) + Math.abs(d[p + 1]! - bg[1]!) + Math.abs(d[p + 2]! - bg[2]!) > 12) differ++;
      hash = (Math.imul(hash, 31) + d[p]! + 3 * d[p + 1]! + 7 * d[p + 2]!) | 0;
    }
    return { differ, total: d.length / 4, hash };
  });
}

const viewOf = async (page: Page): Promise<View> => JSON.parse((await page.getByTestId('canvas-viewer').getAttribute('data-view')) ?? 'null') as View;

describe('canvas viewer in Chromium', () => {
  let server: TestServer;
  let browser: Browser;
  let page: Page;
  let analysisId = '';

  beforeAll(async () => {
    [server, browser] = await Promise.all([startTestServer(), launchBrowser()]);
    page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel('E-mail').fill('designer@larkspur.example');
    await page.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    // The seeded demo analysis (Kestrel-3) runs at start-up; wait for it.
    const deadline = Date.now() + 200_000;
    while (!analysisId && Date.now() < deadline) {
      const { projects } = (await (await page.request.get(`${server.baseUrl}/api/v1/projects`)).json()) as { projects: { id: string }[] };
      for (const p of projects) {
        const { analyses } = (await (await page.request.get(`${server.baseUrl}/api/v1/projects/${p.id}/analyses`)).json()) as { analyses: { id: string; status: string }[] };
        const done = analyses.find((a) => a.status === 'done');
        if (done) analysisId = done.id;
      }
      if (!analysisId) await new Promise((r) => setTimeout(r, 2000));
    }
    expect(analysisId).not.toBe('');
    await page.goto(`${server.baseUrl}/analyses/${analysisId}?view=flat`);
    await page.waitForSelector('[data-testid=canvas-viewer][data-ready=yes]', { timeout: 60_000 });
    await page.waitForFunction(() => document.querySelector('[data-testid=canvas-viewer]')?.getAttribute('data-mode') !== 'loading', null, { timeout: 30_000 });
    await page.waitForTimeout(500);
  }, 300_000);
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('draws the die: sampled pixels differ from the background', async () => {
    const px = await canvasPixels(page);
    await screenshot(page, 'viewer-demo');
    expect(px.differ / px.total).toBeGreaterThan(0.2);
  });

  it('switching maps changes the pixels and the legend follows the map (name, unit, data range)', async () => {
    const before = await canvasPixels(page);
    await page.getByTestId('map-predicted-depth').click();
    await page.waitForFunction(() => document.querySelector('[data-testid=legend]')?.getAttribute('data-map') === 'predicted-depth');
    await page.waitForTimeout(300);
    const after = await canvasPixels(page);
    expect(after.hash).not.toBe(before.hash);
    expect(await page.getByTestId('legend-title').textContent()).toContain('Predicted depth');
    expect(await page.getByTestId('legend-unit').textContent()).toContain('µm');
    // Auto limits = the map's finite range, read independently from the map endpoint.
    const grid = decodeGrid(new Uint8Array(await (await page.request.get(`${server.baseUrl}/api/v1/analyses/${analysisId}/maps/predicted-depth`)).body()));
    const range = finiteRange(grid.values)!;
    expect(Number(await page.getByTestId('legend-lo').inputValue())).toBeCloseTo(Number(range[0].toPrecision(4)), 6);
    expect(Number(await page.getByTestId('legend-hi').inputValue())).toBeCloseTo(Number(range[1].toPrecision(4)), 6);
  });

  it('hover readout shows the map value at a known point', async () => {
    const grid = decodeGrid(new Uint8Array(await (await page.request.get(`${server.baseUrl}/api/v1/analyses/${analysisId}/maps/predicted-depth`)).body()));
    const g = grid.grid;
    const v = await viewOf(page);
    // The finite pixel nearest the view centre whose screen position is inside the canvas.
    let best: { x: number; y: number; value: number } | null = null;
    for (let j = 0; j < g.ny && !best; j += 1) {
      for (let i = 0; i < g.nx; i++) {
        const value = grid.values[j * g.nx + i]!;
        if (!Number.isFinite(value)) continue;
        const x = g.x0Um + (i + 0.5) * g.pixelUm;
        const y = g.y0Um + (j + 0.5) * g.pixelUm;
        const [sx, sy] = layoutToScreen(v, x, y);
        if (sx > 40 && sy > 40 && sx < v.width - 40 && sy < v.height - 40) {
          best = { x, y, value };
          break;
        }
      }
    }
    expect(best).not.toBeNull();
    await page.getByTestId('viewer-host').scrollIntoViewIfNeeded();
    const box = (await page.getByTestId('viewer-host').boundingBox())!;
    // Zoom in about the point (wheel zooms about the cursor) until one map pixel spans several screen pixels.
    let [sx, sy] = layoutToScreen(v, best!.x, best!.y);
    await page.mouse.move(box.x + sx, box.y + sy);
    for (let k = 0; k < 3; k++) {
      await page.mouse.wheel(0, -800);
      await page.waitForTimeout(150);
    }
    const zoomed = await viewOf(page);
    expect(zoomed.scale * g.pixelUm).toBeGreaterThan(8);
    [sx, sy] = layoutToScreen(zoomed, best!.x, best!.y);
    await page.mouse.move(box.x + sx + 1, box.y + sy + 1);
    await page.mouse.move(box.x + sx, box.y + sy);
    await page.waitForFunction(() => document.querySelector('[data-testid=readout-predicted-depth]')?.getAttribute('data-value') !== '');
    const shown = Number(await page.getByTestId('readout-predicted-depth').getAttribute('data-value'));
    expect(shown).toBeCloseTo(best!.value, 5);
    const um = (await page.getByTestId('cursor-um').textContent())!;
    const [, cx, cy] = /x (-?[\d.]+) µm, y (-?[\d.]+) µm/.exec(um)!;
    expect(Math.abs(Number(cx) - best!.x)).toBeLessThan(1 / zoomed.scale + 0.01);
    expect(Math.abs(Number(cy) - best!.y)).toBeLessThan(1 / zoomed.scale + 0.01);
    await screenshot(page, 'viewer-hover');
  });

  it('clicking a flag row centres the view on it and highlights it; clicking its mark selects it back', async () => {
    const before = await viewOf(page);
    const pixelsBefore = await canvasPixels(page);
    const row = page.getByTestId('finding-row').nth(3);
    const key = (await row.getAttribute('data-flag-key'))!;
    const flags = (await (await page.request.get(`${server.baseUrl}/api/v1/analyses/${analysisId}/flags?limit=5000`)).json()) as { items: { key: string; atUm: [number, number] }[] };
    const flag = flags.items.find((f) => f.key === key)!;
    await row.click();
    await page.waitForFunction((k) => document.querySelector('[data-testid=canvas-viewer]')?.getAttribute('data-selected') === k, key);
    await page.waitForTimeout(400);
    const after = await viewOf(page);
    expect(after.cx).toBeCloseTo(flag.atUm[0], 6);
    expect(after.cy).toBeCloseTo(flag.atUm[1], 6);
    expect(after.cx !== before.cx || after.cy !== before.cy || after.scale !== before.scale).toBe(true);
    expect((await canvasPixels(page)).hash).not.toBe(pixelsBefore.hash);
    await screenshot(page, 'viewer-flag-selected');

    // Canvas → selection: clear, then click the mark at the view centre (where the flag now is).
    await page.keyboard.press('Escape');
    await page.getByTestId('viewer-host').focus();
    await page.keyboard.press('Escape');
    await page.waitForFunction(() => document.querySelector('[data-testid=canvas-viewer]')?.getAttribute('data-selected') === '');
    await page.getByTestId('viewer-host').scrollIntoViewIfNeeded();
    const box = (await page.getByTestId('viewer-host').boundingBox())!;
    await page.mouse.move(box.x + after.width / 2, box.y + after.height / 2);
    await page.waitForSelector('[data-testid=flag-tooltip]');
    await page.mouse.down();
    await page.mouse.up();
    const selectedKey = await page.getByTestId('canvas-viewer').getAttribute('data-selected');
    const selectedFlag = flags.items.find((f) => f.key === selectedKey);
    expect(selectedFlag).toBeDefined();
    expect(Math.hypot(selectedFlag!.atUm[0] - flag.atUm[0], selectedFlag!.atUm[1] - flag.atUm[1]) * after.scale).toBeLessThan(11);
  });

  it('exports the current view as a PNG of the canvas size', async () => {
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-png').click()]);
    const bytes = new Uint8Array(readFileSync((await download.path())!));
    expect([...bytes.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature (ISO/IEC 15948)
    const dv = new DataView(bytes.buffer, bytes.byteOffset);
    const v = await viewOf(page);
    expect([dv.getUint32(16), dv.getUint32(20)]).toEqual([v.width, v.height]); // IHDR width, height
  });

  it('serves the viewer data: per-opening columns, polygons in a box, clear errors for bad boxes', async () => {
    const get = (path: string) => page.request.get(`${server.baseUrl}/api/v1/analyses/${analysisId}${path}`);
    const results = (await (await get('/results?limit=5')).json()) as { features: { total: number; items: { id: number; widthUm: number; depthUm: number }[] } };
    const cols = decodeFeatures(new Uint8Array(await (await get('/features.bin')).body()));
    expect(cols.count).toBe(results.features.total);
    for (const item of results.features.items) {
      const k = Array.from(cols.featureId).indexOf(item.id);
      expect(cols.widthUm[k]).toBe(item.widthUm);
      expect(cols.depthUm[k]).toBe(item.depthUm);
    }
    const info = (await (await get('/viewer')).json()) as { polygonCount: number; dieBboxUm: [number, number, number, number] };
    const b = info.dieBboxUm;
    const all = decodePolygons(new Uint8Array(await (await get(`/polygons?box=${b[0] - 1},${b[1] - 1},${b[2] + 1},${b[3] + 1}`)).body()));
    expect(all.total).toBe(info.polygonCount);
    expect(all.polyLayer.length).toBe(info.polygonCount);
    const few = decodePolygons(new Uint8Array(await (await get(`/polygons?box=${b[0] - 1},${b[1] - 1},${b[2] + 1},${b[3] + 1}&max=3`)).body()));
    expect(few.polyLayer.length).toBe(0);
    expect(few.total).toBeGreaterThan(3);
    for (const path of ['/viewer', '/features.bin', `/polygons?box=${b.join(',')}`]) {
      const anonymous = await fetch(`${server.baseUrl}/api/v1/analyses/${analysisId}${path}`);
      expect(anonymous.status, path).toBe(401); // no session, no token
    }
    const bad = await get('/polygons?box=10,10,5,5');
    expect(bad.status()).toBe(400);
    expect(((await bad.json()) as { error: { message: string } }).error.message).toContain('x0 < x1');
  });

  it('without WebGL the page says so and shows the static preview and the table', async () => {
    const noGl = await chromium.launch({ executablePath: CHROMIUM_PATH, headless: true, args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-webgl', '--disable-3d-apis'] });
    try {
      const ctx = await noGl.newContext();
      await ctx.addCookies((await page.context().cookies()).map((c) => ({ ...c })));
      const p = await ctx.newPage();
      await p.goto(`${server.baseUrl}/analyses/${analysisId}`);
      await p.waitForSelector('[data-testid=no-webgl]', { timeout: 30_000 });
      expect(await p.getByTestId('no-webgl').textContent()).toContain('no WebGL');
      const img = p.getByTestId('preview');
      await img.waitFor();
      await p.waitForFunction(() => ((document.querySelector("[data-testid=preview]") as HTMLImageElement | null)?.naturalWidth ?? 0) > 0);
      expect(await p.getByTestId('findings-table').count()).toBe(1);
      await screenshot(p, 'viewer-no-webgl');
    } finally {
      await noGl.close();
    }
  });

  it('a what-if saved as a new analysis queues the same revision and settings with the derived model', async () => {
    await page.goto(`${server.baseUrl}/analyses/${analysisId}?view=flat`);
    await page.waitForSelector('[data-testid=canvas-viewer][data-ready=yes]', { timeout: 60_000 });
    await page.waitForFunction(() => /openings loaded/.test(document.querySelector('[data-testid=whatif-status]')?.textContent ?? ''), null, { timeout: 60_000 });
    const slider = page.getByTestId('whatif-timeMin');
    const max = Number(await slider.getAttribute('max'));
    const min = Number(await slider.getAttribute('min'));
    await slider.fill(String(min + 0.8 * (max - min)));
    await page.waitForSelector('[data-testid=whatif-banner]');
    // The recomputation ran split over the worker and its helper (the demo has more than 256 distinct openings).
    await page.waitForFunction(() => /in \d+ ms \(2 threads\)/.test(document.querySelector('[data-testid=whatif-status]')?.textContent ?? ''), null, { timeout: 30_000 });
    const wanted = Number(await slider.inputValue());
    await page.getByTestId('whatif-save-button').click();
    const saved = page.getByTestId('whatif-saved');
    await saved.waitFor({ timeout: 20_000 });
    await screenshot(page, 'viewer-whatif-saved');
    const newId = (await saved.getAttribute('data-analysis-id'))!;
    expect(newId).not.toBe(analysisId);
    expect(await saved.textContent()).toContain('etch.timeMin');
    const db = new Database(server.dbFile, { readonly: true });
    try {
      const row = (id: string) => db.prepare('select revision_id as rev, settings, model, model_version as version from analyses where id = ?').get(id) as { rev: string; settings: string; model: string; version: string };
      const before = row(analysisId);
      const after = row(newId);
      expect(after.rev).toBe(before.rev);
      expect(JSON.parse(after.settings)).toEqual(JSON.parse(before.settings));
      const m0 = JSON.parse(before.model) as { etch: { timeMin: number }; openRateUmPerMin: number };
      const m1 = JSON.parse(after.model) as { etch: { timeMin: number }; openRateUmPerMin: number; description: string };
      expect(m1.etch.timeMin).toBeCloseTo(wanted, 9);
      expect(m1.etch.timeMin).not.toBeCloseTo(m0.etch.timeMin, 6);
      expect(m1.openRateUmPerMin).toBe(m0.openRateUmPerMin);
      expect(after.version).toBe(`${before.version}+what-if`);
      expect(m1.description).toContain(`version ${before.version} (analysis ${analysisId})`);
      expect(m1.description).toContain('etch.timeMin');
    } finally {
      db.close();
    }
  }, 120_000);

  // Runs last: it adds flags to the analysis, beyond the JSON flags API's page of 5,000.
  it('every flag reaches the canvas (> 5,000): flags.bin serves all, a far-down flag is drawn when zoomed to and selects on click', async () => {
    const info = (await (await page.request.get(`${server.baseUrl}/api/v1/analyses/${analysisId}/viewer`)).json()) as { dieBboxUm: [number, number, number, number] };
    const [bx0, by0, bx1, by1] = info.dieBboxUm;
    const db = new Database(server.dbFile);
    const extra = 7000;
    try {
      const rank0 = (db.prepare('select coalesce(max(rank), -1) + 1 as r from analysis_flags where analysis_id = ?').get(analysisId) as { r: number }).r;
      const ins = db.prepare(`insert into analysis_flags (id, analysis_id, flag_key, rank, kind, severity, x0_um, y0_um, x1_um, y1_um, x_um, y_um, measured, limit_value, unit, message)
        values (?, ?, ?, ?, 'window-density-high', 'info', ?, ?, ?, ?, ?, ?, 0.9, 0.8, 'fraction', ?)`);
      db.transaction(() => {
        for (let k = 0; k < extra; k++) {
          // A 100 × 70 lattice over the die, 1 µm boxes.
          const x = bx0 + ((k % 100) + 0.5) * ((bx1 - bx0) / 100);
          const y = by0 + (Math.floor(k / 100) + 0.5) * ((by1 - by0) / 70);
          ins.run(randomUUID(), analysisId, `test-extra:${k}`, rank0 + k, x - 0.5, y - 0.5, x + 0.5, y + 0.5, x, y, `synthetic test flag ${k}`);
        }
      })();
    } finally {
      db.close();
    }
    const json = (await (await page.request.get(`${server.baseUrl}/api/v1/analyses/${analysisId}/flags?limit=1`)).json()) as { total: number };
    expect(json.total).toBeGreaterThan(5000);
    const bin = await page.request.get(`${server.baseUrl}/api/v1/analyses/${analysisId}/flags.bin`);
    expect(bin.headers()['content-type']).toBe('application/vnd.trenchant.flags');
    const cols = decodeFlags(new Uint8Array(await bin.body()));
    expect(cols.count).toBe(json.total);
    const last = flagAt(cols, cols.count - 1);
    expect(last.key).toBe(`test-extra:${extra - 1}`);

    // A fresh context (flags.bin is cached as immutable) with the bench hook to set the view.
    const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    try {
      await ctx.addCookies(await page.context().cookies());
      const p = await ctx.newPage();
      await p.goto(`${server.baseUrl}/analyses/${analysisId}?view=flat&bench=1`);
      await p.waitForSelector('[data-testid=canvas-viewer][data-ready=yes]', { timeout: 60_000 });
      await p.waitForFunction((n) => document.querySelector('[data-testid=mark-count]')?.getAttribute('data-total') === String(n), cols.count, { timeout: 30_000 });
      // At fit, the marks are thinned: fewer drawn than in view, and the panel says so.
      const fitCount = p.getByTestId('mark-count');
      expect(Number(await fitCount.getAttribute('data-in-view'))).toBeGreaterThan(5000);
      expect(Number(await fitCount.getAttribute('data-drawn'))).toBeLessThan(Number(await fitCount.getAttribute('data-in-view')));
      // Zoom to the last-ranked flag: it gets its own mark; hovering explains it, clicking selects it.
      await p.waitForFunction(() => Boolean((window as unknown as { __trenchantViewer?: unknown }).__trenchantViewer));
      const v0 = await viewOf(p);
      await p.evaluate(([x, y, w, h]) => (window as unknown as { __trenchantViewer: { applyView: (v: View) => void } }).__trenchantViewer.applyView({ cx: x!, cy: y!, scale: 20, width: w!, height: h! }), [last.xUm, last.yUm, v0.width, v0.height]);
      await p.waitForTimeout(300);
      const v = await viewOf(p);
      const [sx, sy] = layoutToScreen(v, last.xUm, last.yUm);
      // The page above the map may still grow while it loads (moving the map): hover again until the tooltip shows.
      let host = await p.getByTestId('viewer-host').boundingBox();
      let dx = 1;
      for (let attempt = 0; attempt < 10; attempt++) {
        await p.getByTestId('viewer-host').scrollIntoViewIfNeeded();
        host = await p.getByTestId('viewer-host').boundingBox();
        dx = 1 + (attempt % 2);
        await p.mouse.move(host!.x + sx + dx, host!.y + sy + 1);
        if (await p.waitForSelector('[data-testid=flag-tooltip]', { timeout: 1500 }).then(() => true, () => false)) break;
      }
      await p.waitForSelector('[data-testid=flag-tooltip]', { timeout: 1000 });
      await p.waitForFunction((k) => document.querySelector('[data-testid=flag-tooltip]')?.textContent?.includes(`synthetic test flag ${k}`), extra - 1, { timeout: 10_000 });
      await screenshot(p, 'viewer-many-flags-zoomed');
      // click where the tooltip answered, on the host's position now (the page may have moved since the hover)
      host = await p.getByTestId('viewer-host').boundingBox();
      await p.mouse.click(host!.x + sx + dx, host!.y + sy + 1);
      await p.waitForFunction((k) => document.querySelector('[data-testid=canvas-viewer]')?.getAttribute('data-selected') === k, last.key, { timeout: 10_000 });
    } finally {
      await ctx.close();
    }
  }, 120_000);
});
