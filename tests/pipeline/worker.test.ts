/**
 * The worker entry: called directly with a MessageChannel (as piscina would hand it a transferred port), and once
 * through a real piscina pool running the TypeScript entry under tsx in a worker thread.
 */
import { mkdtemp, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { MessageChannel } from 'node:worker_threads';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFeatureRange } from '@/lib/jobs/feature-file';
import { readGridFile } from '@/lib/pipeline/grid-file-node';
import analyse, { type AnalysisTaskResult, type WorkerMessage } from '@/lib/pipeline/worker';
import { TEST_MODEL_JSON, trenchGdsii, type RectUm } from './fixtures';

let dir = '';
let gds = '';
let bigGds = '';
const settings = { etchLayers: [{ layer: 5, datatype: 0 }], limits: { targetDepthUm: 44, toleranceUm: 2 } };

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'trenchant-worker-'));
  gds = join(dir, 'trenches.gds');
  await writeFile(gds, trenchGdsii());
  bigGds = join(dir, 'many.gds');
  const many: RectUm[] = [];
  for (let j = 0; j < 200; j++) for (let i = 0; i < 500; i++) many.push([i * 2, j * 5, i * 2 + 1, j * 5 + 3]);
  await writeFile(bigGds, trenchGdsii(many));
});
afterAll(async () => {
  if (dir) await rm(dir, { recursive: true, force: true });
});

function collect(port: MessageChannel['port1']): WorkerMessage[] {
  const seen: WorkerMessage[] = [];
  port.on('message', (m: WorkerMessage) => seen.push(m));
  return seen;
}
const settle = () => new Promise((r) => setTimeout(r, 50));

describe('analyse (worker entry)', () => {
  it('writes every map, returns plain-JSON results and posts ordered progress ending at done/1', async () => {
    const { port1, port2 } = new MessageChannel();
    const seen = collect(port1);
    const outDir = join(dir, 'out');
    const r = await analyse({ layoutPath: gds, settings, model: TEST_MODEL_JSON, outDir, port: port2 });
    await settle();
    port1.close();
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.featureFile).toMatchObject({ file: 'features.trfeat', count: 3 });
    expect(readFeatureRange(join(outDir, r.featureFile.file), 0, 10).widthUm.length).toBe(3);
    expect(r.flags.filter((f) => f.kind === 'under-target-depth').map((f) => f.featureId)).toEqual([1]);
    expect(JSON.parse(JSON.stringify(r))).toEqual(r); // survives a JSON round trip unchanged
    expect((await readdir(outDir)).sort()).toEqual([...r.maps.map((m) => m.file), r.featureFile.file].sort());
    const depth = await readGridFile(join(outDir, 'predicted-depth.trgrid'));
    expect(depth.grid).toEqual(r.summary.grid);
    const stages = seen.map((m) => m.stage).filter((s, k, all) => all[k - 1] !== s);
    expect(stages[0]).toBe('reading');
    expect(stages.at(-1)).toBe('done');
    expect(stages).toContain('prediction');
    for (let k = 1; k < seen.length; k++) expect(seen[k]!.fraction).toBeGreaterThanOrEqual(seen[k - 1]!.fraction);
    expect(seen.at(-1)).toEqual({ type: 'progress', stage: 'done', fraction: 1 });
  });

  it('resolves cancelled when the parent posts { type: "cancel" }', async () => {
    const { port1, port2 } = new MessageChannel();
    // The analysis itself is synchronous, so a cancel message is only seen while the worker awaits I/O; post it
    // before the call so it is waiting when the layout read yields.
    port1.postMessage({ type: 'cancel' });
    await settle();
    const r = await analyse({ layoutPath: gds, settings, model: TEST_MODEL_JSON, outDir: join(dir, 'cancelled'), port: port2 });
    port1.close();
    expect(r).toEqual({ ok: false, code: 'cancelled', message: 'analysis cancelled' });
  });

  it('returns expected failures as { ok: false, code } with field issues', async () => {
    const badSettings = await analyse({ layoutPath: gds, settings: { etchLayers: [] }, model: TEST_MODEL_JSON, outDir: join(dir, 'x') });
    expect(badSettings).toMatchObject({ ok: false, code: 'bad-settings', issues: [{ path: 'etchLayers' }] });
    const badModel = await analyse({ layoutPath: gds, settings, model: { ...TEST_MODEL_JSON, mode: 'pulsed' }, outDir: join(dir, 'x') });
    expect(badModel).toMatchObject({ ok: false, code: 'bad-model', issues: [{ path: 'mode' }] });
    const missing = await analyse({ layoutPath: join(dir, 'none.gds'), settings, model: TEST_MODEL_JSON, outDir: join(dir, 'x') });
    expect(missing).toMatchObject({ ok: false, code: 'layout-unreadable' });
    const layer = await analyse({ layoutPath: gds, settings: { etchLayers: [{ layer: 7, datatype: 0 }] }, model: TEST_MODEL_JSON, outDir: join(dir, 'x') });
    expect(layer).toEqual({ ok: false, code: 'bad-input', message: 'layer 7/0 is not in the layout; layers present: 0/0, 5/0' });
  });
});

describe('analyse through piscina', () => {
  it('a shared cancel flag set while the worker runs stops it mid-analysis', async () => {
    const pool = new Piscina({ filename: fileURLToPath(new URL('../../lib/pipeline/worker.ts', import.meta.url)), execArgv: ['--import', 'tsx'], maxThreads: 1 });
    const flag = new Int32Array(new SharedArrayBuffer(4));
    const { port1, port2 } = new MessageChannel();
    const seen: WorkerMessage[] = [];
    // Cancel as soon as the analysis reports its first stage: the worker is then inside runAnalysis.
    port1.on('message', (m: WorkerMessage) => {
      seen.push(m);
      if (m.stage === 'coverage') Atomics.store(flag, 0, 1);
    });
    try {
      // 100 000 trenches make the analysis long enough (seconds) for the flag to land before it ends.
      const r = (await pool.run({ layoutPath: bigGds, settings, model: TEST_MODEL_JSON, outDir: join(dir, 'big'), port: port2, cancelFlag: flag }, { transferList: [port2] })) as AnalysisTaskResult;
      expect(r).toEqual({ ok: false, code: 'cancelled', message: 'analysis cancelled' });
      expect(seen.map((m) => m.stage)).toContain('coverage');
      expect(seen.map((m) => m.stage)).not.toContain('done');
    } finally {
      port1.close();
      await pool.destroy();
    }
  });

  it('runs in a worker thread (tsx loader) with a transferred progress port', async () => {
    const pool = new Piscina({ filename: fileURLToPath(new URL('../../lib/pipeline/worker.ts', import.meta.url)), execArgv: ['--import', 'tsx'], maxThreads: 1 });
    const { port1, port2 } = new MessageChannel();
    const seen = collect(port1);
    try {
      const r = (await pool.run({ layoutPath: gds, settings, model: TEST_MODEL_JSON, outDir: join(dir, 'pool'), port: port2 }, { transferList: [port2] })) as AnalysisTaskResult;
      await settle();
      expect(r.ok).toBe(true);
      if (r.ok) expect(r.summary.features.count).toBe(3);
      expect(seen.at(-1)).toEqual({ type: 'progress', stage: 'done', fraction: 1 });
    } finally {
      port1.close();
      await pool.destroy();
    }
  });
});
