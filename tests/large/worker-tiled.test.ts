/**
 * The analysis worker (lib/pipeline/worker.ts) on a GDSII file above the whole-read size runs tiled from the on-disk
 * index (worker-tiled.ts) and must write exactly what the whole read writes: the same summary (apart from timings
 * and the record of the tiling), flags, per-opening column file and map files, byte for byte. The reference is the
 * project's own untiled pipeline (checked against outside sources in tests/pipeline and tests/geometry); what is
 * checked here is that the server's large-layout path changes nothing. Also: tiles sized from the memory budget,
 * progress per tile, cancel between and inside tiles, bad files named as by the whole read.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { MessageChannel } from 'node:worker_threads';
import { Piscina } from 'piscina';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import analyse, { type AnalysisTaskResult, type WorkerMessage } from '@/lib/pipeline/worker';
import { tileSizeForBudget, TILE_BYTES_PER_POLYGON, DENSITY_PEAK } from '@/lib/pipeline/tiled/tile-budget';
import { flatDie } from '../layout/tile-fixtures';

const dir = mkdtempSync(join(tmpdir(), 'trenchant-wtiled-'));
const gds = join(dir, 'flat.gds');
writeFileSync(gds, flatDie(30_000));
const model = JSON.parse(readFileSync('samples/models/deep-trench-continuous.json', 'utf8')) as unknown;
const settings = { etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 2 } };
const saved = { mem: process.env.TRENCHANT_ANALYSIS_MEMORY_MB, threads: process.env.TRENCHANT_TILE_THREADS };
afterEach(() => {
  for (const [k, v] of [['TRENCHANT_ANALYSIS_MEMORY_MB', saved.mem], ['TRENCHANT_TILE_THREADS', saved.threads]] as const) {
    if (v === undefined) delete process.env[k];
    else process.env[k] = v;
  }
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function run(name: string, wholeReadBytes: number, extra: { cancelAt?: (m: WorkerMessage) => boolean; layoutPath?: string } = {}) {
  const { port1, port2 } = new MessageChannel();
  const seen: WorkerMessage[] = [];
  const flag = new Int32Array(new SharedArrayBuffer(4));
  port1.on('message', (m: WorkerMessage) => {
    seen.push(m);
    if (extra.cancelAt?.(m)) Atomics.store(flag, 0, 1);
  });
  const outDir = join(dir, name);
  const r = await analyse({ layoutPath: extra.layoutPath ?? gds, settings, model, outDir, port: port2, cancelFlag: flag, wholeReadBytes });
  await new Promise((res) => setTimeout(res, 50));
  port1.close();
  return { r, seen, outDir };
}

function withoutRunFacts(r: AnalysisTaskResult) {
  if (!r.ok) throw new Error(`${r.code}: ${r.message}`);
  const { timingsMs: _t, tiled: _x, ...summary } = r.summary;
  return { ...r, summary };
}

describe('tiled analysis in the worker = whole read', () => {
  it('same summary, flags, column file and map files, with several tiles sized from a small memory budget', async () => {
    process.env.TRENCHANT_ANALYSIS_MEMORY_MB = '20';
    process.env.TRENCHANT_TILE_THREADS = '0';
    const whole = await run('whole', 1e12);
    const tiled = await run('tiled', 0);
    expect(whole.r.ok && whole.r.summary.tiled).toBeUndefined();
    if (!tiled.r.ok) throw new Error(tiled.r.message);
    const t = tiled.r.summary.tiled!;
    expect(t.tiles).toBeGreaterThan(4);
    expect(t.threads).toBe(0);
    expect(t.wholeReadBytes).toBe(0);
    expect(t.reason).toMatch(/per tile job/);
    expect(withoutRunFacts(tiled.r)).toEqual(withoutRunFacts(whole.r));
    expect(whole.r.ok && whole.r.summary.features.count).toBeGreaterThan(1000);
    const files = readdirSync(whole.outDir).sort();
    expect(readdirSync(tiled.outDir).sort()).toEqual(files);
    for (const f of files) expect(readFileSync(join(tiled.outDir, f)).equals(readFileSync(join(whole.outDir, f))), f).toBe(true);
    // Progress: the same stages, one 'coverage' step per tile, never decreasing, ending at done.
    const stages = tiled.seen.map((m) => m.stage).filter((s, k, all) => all[k - 1] !== s);
    expect(stages[0]).toBe('reading');
    expect(stages).toContain('coverage');
    expect(stages.at(-1)).toBe('done');
    const coverageSteps = new Set(tiled.seen.filter((m) => m.stage === 'coverage').map((m) => m.fraction)).size;
    expect(coverageSteps).toBeGreaterThanOrEqual(Math.min(t.tiles, 3));
    for (let k = 1; k < tiled.seen.length; k++) expect(tiled.seen[k]!.fraction).toBeGreaterThanOrEqual(tiled.seen[k - 1]!.fraction);
  }, 180_000);

  it('on two tile threads (the TypeScript tile-thread under tsx) gives the same files', async () => {
    process.env.TRENCHANT_ANALYSIS_MEMORY_MB = '20';
    process.env.TRENCHANT_TILE_THREADS = '2';
    const tiled = await run('threads', 0);
    if (!tiled.r.ok) throw new Error(tiled.r.message);
    expect(tiled.r.summary.tiled!.threads).toBe(2);
    for (const f of readdirSync(join(dir, 'whole'))) expect(readFileSync(join(dir, 'threads', f)).equals(readFileSync(join(dir, 'whole', f))), f).toBe(true);
  }, 180_000);

  it('stops between tiles when the cancel flag is set after the first tile (worker thread, as in the server)', async () => {
    const pool = new Piscina({ filename: fileURLToPath(new URL('../../lib/pipeline/worker.ts', import.meta.url)), execArgv: ['--import', 'tsx'], maxThreads: 1, env: { ...process.env, TRENCHANT_ANALYSIS_MEMORY_MB: '20', TRENCHANT_TILE_THREADS: '0' } });
    const flag = new Int32Array(new SharedArrayBuffer(4));
    const { port1, port2 } = new MessageChannel();
    const seen: WorkerMessage[] = [];
    port1.on('message', (m: WorkerMessage) => {
      seen.push(m);
      if (m.stage === 'coverage' && m.fraction > 0.16) Atomics.store(flag, 0, 1);
    });
    try {
      const r = (await pool.run({ layoutPath: gds, settings, model, outDir: join(dir, 'cancelled'), port: port2, cancelFlag: flag, wholeReadBytes: 0 }, { transferList: [port2] })) as AnalysisTaskResult;
      expect(r).toEqual({ ok: false, code: 'cancelled', message: 'analysis cancelled' });
      expect(seen.map((m) => m.stage)).toContain('coverage');
      expect(seen.map((m) => m.stage)).not.toContain('prediction');
    } finally {
      port1.close();
      await pool.destroy();
    }
  }, 120_000);

  it('a broken file above the whole-read size fails with the whole read\'s message', async () => {
    const bad = join(dir, 'bad.gds');
    const bytes = flatDie(2000);
    writeFileSync(bad, bytes.subarray(0, bytes.length - 37));
    const a = await run('bad-whole', 1e12, { layoutPath: bad });
    const b = await run('bad-tiled', 0, { layoutPath: bad });
    expect(a.r).toMatchObject({ ok: false, code: 'layout-unreadable' });
    expect(b.r).toEqual(a.r);
    expect(!a.r.ok && a.r.message).toMatch(/byte \d+/);
  });
});

describe('tile size from the memory budget', () => {
  const plan = (polygonCount: number, n = 5000) => ({ grid: { x0Um: 0, y0Um: 0, pixelUm: 2, nx: n, ny: n }, dieBboxUm: [0, 0, 2 * n, 2 * n] as [number, number, number, number], polygonCount, marginDbu: 25_000, dbuUm: 0.001 });
  it('reads at most the budget per job at the assumed peak density', () => {
    // 10 mm die, 10^7 polygons, 800 MB, one job: budget per job = 800 MiB − 8 B × 25 M pixels.
    const b = tileSizeForBudget(plan(1e7), 800, 1);
    const perJob = 800 * 2 ** 20 - 8 * 5000 * 5000;
    const density = (1e7 / 1e8) * DENSITY_PEAK;
    const read = (b.tileUm + 50) ** 2 * density * TILE_BYTES_PER_POLYGON;
    expect(read).toBeLessThanOrEqual(perJob);
    expect((b.tileUm + 2 + 50) ** 2 * density * TILE_BYTES_PER_POLYGON).toBeGreaterThan(perJob); // the largest whole-pixel tile
    expect(b.tileUm % 2).toBe(0);
  });
  it('more jobs at once → smaller tiles; few polygons → one tile; never below 16 pixels', () => {
    expect(tileSizeForBudget(plan(1e7), 800, 4).tileUm).toBeLessThan(tileSizeForBudget(plan(1e7), 800, 1).tileUm);
    expect(tileSizeForBudget(plan(1000), 800, 1).tileUm).toBe(10_000);
    expect(tileSizeForBudget(plan(1e10), 800, 1).tileUm).toBe(40);
  });
});
