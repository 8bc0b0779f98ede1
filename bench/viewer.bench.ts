/**
 * Canvas viewer benchmark (by hand, never a test): the 1 M-polygon layout of bench/geometry-layout.ts (10 mm ×
 * 10 mm, plus a die outline on 0/0) is uploaded to a started production server and analysed; then the analysis
 * page is opened in headless Chromium (WebGL on SwiftShader) and measured:
 *   - time to first paint: page.goto → the canvas shows the die (sampled pixels differ from the background);
 *   - frame time while panning at overview (fit), mid (3× fit) and close (1 px/µm) zoom: rAF intervals while the
 *     view moves every frame through the viewer's own state path, and "sync" frames (render + 1-pixel readPixels).
 * The page is opened with ?bench=1, which exposes the view setter and the scene on window for this script only.
 * Run: npx tsx bench/viewer.bench.ts (or npm run bench -- viewer). Set VIEWER_BENCH_BASE=http://... and
 * VIEWER_BENCH_ANALYSIS=<id> to measure an analysis on a server that is already running.
 */
import { pathToFileURL } from 'node:url';
import type { Page } from 'playwright-core';
import { DEMO_PASSWORD_DEFAULT } from '../lib/data/demo';
import { launchBrowser } from '../tests/support/browser';
import { signIn } from '../tests/support/http';
import { startTestServer } from '../tests/support/server';
import { BENCH_MODEL, benchLayoutGds } from './geometry-layout';

async function analyse(base: string, output: () => string): Promise<string> {
  const client = await signIn(base, 'designer@larkspur.example', DEMO_PASSWORD_DEFAULT);
  const { bytes, polygons } = benchLayoutGds('VIEW1M');
  const form = new FormData();
  form.set('name', 'viewer bench 1M');
  form.set('file', new Blob([bytes as Uint8Array<ArrayBuffer>]), 'viewer-bench-1m.gds');
  const up = await client.request('/api/v1/projects/demo-kestrel/layouts', { method: 'POST', body: form });
  if (up.status !== 201) throw new Error(`upload failed: ${up.status} ${await up.text()}`);
  const { revision } = (await up.json()) as { revision: { id: string } };
  const created = await client.post('/api/v1/projects/demo-kestrel/analyses', {
    revisionId: revision.id,
    settings: { etchLayers: [{ layer: 1, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }, { windowUm: 700, stepUm: 70 }], limits: { minDensity: 0.05, maxDensity: 0.5, minWidthUm: 1 } },
    model: BENCH_MODEL,
  });
  if (created.status !== 202) throw new Error(`create failed: ${created.status} ${await created.text()}`);
  const id = ((await created.json()) as { analysis: { id: string } }).analysis.id;
  const t = performance.now();
  let failures = 0;
  for (;;) {
    await new Promise((r) => setTimeout(r, 2000));
    let res: Response;
    try {
      res = await client.get(`/api/v1/analyses/${id}`);
      failures = 0;
    } catch (err) {
      // Saving 1M result rows blocks the server's event loop for seconds; a kept-alive socket it closed
      // meanwhile answers ECONNRESET. Retry for a while before giving up.
      if (++failures < 60) continue;
      throw new Error(`server stopped answering while analysing: ${String(err)}\n${output().slice(-3000)}`);
    }
    const a = (await res.json()) as { analysis: { status: string; errorMessage: string | null } };
    if (a.analysis.status === 'done') break;
    if (a.analysis.status === 'failed' || a.analysis.status === 'cancelled') throw new Error(`analysis ${a.analysis.status}: ${a.analysis.errorMessage}`);
  }
  console.log(`  layout: ${polygons.toLocaleString('en')} polygons; analysis took ${((performance.now() - t) / 1000).toFixed(1)} s (not counted)`);
  return id;
}

/** Share of canvas pixels that differ from the background. */
const drawnShare = (page: Page) =>
  page.evaluate(() => {
    const c = document.querySelector('canvas[data-testid=viewer-canvas]') as HTMLCanvasElement | null;
    if (!c) return 0;
    const copy = document.createElement('canvas');
    copy.width = c.width;
    copy.height = c.height;
    const ctx = copy.getContext('2d')!;
    ctx.drawImage(c, 0, 0);
    const d = ctx.getImageData(0, 0, c.width, c.height).data;
    let n = 0;
    for (let p = 0; p < d.length; p += 16) if (Math.abs(d[p]! - 0xf4) + Math.abs(d[p + 1]! - 0xf2) + Math.abs(d[p + 2]! - 0xee) > 12) n++;
    return n / (d.length / 16);
  });


/** In-page pan loop, as source text: tsx wraps named functions in a helper the page does not have. */
const PAN_LOOP = `(async () => {
  const h = window.__trenchantViewer;
  const pan = PAN_PX;
  const frame = () => new Promise((res) => requestAnimationFrame(res));
  const intervals = [];
  let last = await frame();
  for (let k = 0; k < 90; k++) {
    const v = h.view();
    const dir = Math.floor(k / 15) % 2 === 0 ? 1 : -1;
    h.applyView({ ...v, cx: v.cx + (dir * pan) / v.scale });
    const now = await frame();
    intervals.push(now - last);
    last = now;
  }
  const gl = h.scene.app.renderer.gl;
  const px = new Uint8Array(4);
  const sync = [];
  for (let k = 0; k < 60; k++) {
    const v = h.view();
    const dir = Math.floor(k / 15) % 2 === 0 ? 1 : -1;
    h.applyView({ ...v, cx: v.cx + (dir * pan) / v.scale });
    const t = performance.now();
    h.scene.renderNow();
    gl.readPixels(0, 0, 1, 1, gl.RGBA, gl.UNSIGNED_BYTE, px);
    sync.push(performance.now() - t);
    await frame();
  }
  const sorted = (a) => [...a].sort((x, y) => x - y);
  return { rafMs: sorted(intervals)[45], rafP90: sorted(intervals)[81], fps: 1000 / (intervals.reduce((a, b) => a + b, 0) / intervals.length), syncMs: sorted(sync)[30], syncP90: sorted(sync)[54], scale: h.view().scale };
})()`;

/** Sets the zoom, waits for the level-of-detail choice to settle, then pans and times frames. */
async function measureAt(page: Page, name: string, scaleOf: (fit: number) => number, panPx: number) {
  const fitScale = (await page.evaluate('window.__fitScale')) as number;
  await page.evaluate(`(() => { const h = window.__trenchantViewer; h.applyView({ ...h.view(), cx: 5000, cy: 5000, scale: ${scaleOf(fitScale)} }); })()`);
  await page.waitForFunction(() => document.querySelector('[data-testid=canvas-viewer]')?.getAttribute('data-mode') !== 'loading');
  await page.waitForTimeout(2500);
  const mode = await page.getByTestId('canvas-viewer').getAttribute('data-mode');
  const r = (await page.evaluate(PAN_LOOP.replace('PAN_PX', String(panPx)))) as { rafMs: number; rafP90: number; fps: number; syncMs: number; syncP90: number; scale: number };
  const modeAfter = await page.getByTestId('canvas-viewer').getAttribute('data-mode');
  console.log(
    `  ${name.padEnd(8)} ${r.scale.toFixed(3).padStart(7)} px/µm  drawn as ${mode}${modeAfter !== mode ? `→${modeAfter}` : ''}  rAF median ${r.rafMs.toFixed(1)} ms (p90 ${r.rafP90.toFixed(1)}), ${r.fps.toFixed(1)} fps  sync frame median ${r.syncMs.toFixed(1)} ms (p90 ${r.syncP90.toFixed(1)})`,
  );
}

export default async function viewerBench(): Promise<void> {
  const external = process.env.VIEWER_BENCH_BASE;
  const server = external ? null : await startTestServer({ env: { TRENCHANT_JOB_CONCURRENCY: '1' }, readyTimeoutMs: 600_000 });
  const base = external ?? server!.baseUrl;
  const browser = await launchBrowser();
  try {
    const id = process.env.VIEWER_BENCH_ANALYSIS ?? (await analyse(base, server ? server.output : () => ''));
    console.log(`  analysis ${id} on ${base}`);
    const page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await page.goto(`${base}/sign-in`);
    await page.getByLabel('E-mail').fill('designer@larkspur.example');
    await page.getByLabel('Password').fill(DEMO_PASSWORD_DEFAULT);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
    for (let run = 0; run < 2; run++) {
      // Run 0 is cold (the server builds the polygon index of the revision); run 1 is warm.
      const t0 = performance.now();
      await page.goto(`${base}/analyses/${id}?bench=1`);
      let first = 0;
      while (performance.now() - t0 < 60_000) {
        if ((await drawnShare(page)) > 0.05) {
          first = performance.now() - t0;
          break;
        }
        await page.waitForTimeout(25);
      }
      await page.waitForFunction(() => document.querySelector('[data-testid=canvas-viewer]')?.getAttribute('data-mode') !== 'loading', null, { timeout: 120_000 });
      const settled = performance.now() - t0;
      console.log(`  ${run === 0 ? 'cold' : 'warm'}: first paint ${first ? `${first.toFixed(0)} ms` : 'not within 60 s'} after page.goto (polling every 25 ms); level of detail settled at ${settled.toFixed(0)} ms`);
    }
    await page.waitForFunction(() => (window as unknown as { __trenchantViewer?: unknown }).__trenchantViewer);
    await page.evaluate('window.__fitScale = window.__trenchantViewer.view().scale');
    const load = (await import('node:os')).loadavg()[0]!.toFixed(2);
    console.log(`  frames (canvas ${await page.evaluate(() => (document.querySelector('canvas[data-testid=viewer-canvas]') as HTMLCanvasElement | null)?.width)} px wide; load average ${load}):`);
    await measureAt(page, 'overview', (fit) => fit, 8);
    await measureAt(page, 'mid', (fit) => fit * 3, 40);
    await measureAt(page, 'near', () => 0.45, 40);
    await measureAt(page, 'close', () => 1, 40);
  } finally {
    await browser.close();
    await server?.stop();
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await viewerBench();
