/**
 * Job-system figures (by hand: `npm run bench -- jobs`, or npx tsx bench/jobs.bench.ts):
 *  1. Result hand-off for 1 M openings: before = structured clone of the result objects (what postMessage did) +
 *     row-by-row inserts into analysis_features; after = the worker's column file (encode + write) + one index row
 *     on the server + reading it back through readFeatureColumns.
 *  2. Upload bomb: a few-hundred-byte GDSII with one 4999 × 4999 AREF, checked in the upload worker pool; time to
 *     the refusal, the server thread's largest event-loop stall meanwhile, and memory (RSS) growth.
 *  3. Cancel latency: time from setting the shared cancel flag to the worker's "cancelled" result, at each stage
 *     of a ~100 k-opening analysis, through a piscina pool running the bundled worker.
 * Invented inputs only. Timings swing with machine load; the load average is printed.
 */
import { closeSync, mkdirSync, mkdtempSync, openSync, rmSync, writeFileSync, writeSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { MessageChannel } from 'node:worker_threads';
import { execFileSync } from 'node:child_process';
import Piscina from 'piscina';
import { readFeatureColumns } from '../lib/jobs/feature-columns';
import { encodeFeatureFile, FEATURE_FILE_NAME } from '../lib/jobs/feature-file';
import type { FeatureResult } from '../lib/pipeline/predict-features';
import { saveResultRows } from '../lib/jobs/save-results';
import { GdsiiWriter } from '../lib/layout/gdsii-writer';
import { checkUploadInWorker, closeUploadPool } from '../lib/uploads/check-pool';
import type { AnalysisTaskResult, WorkerMessage } from '../lib/pipeline/worker';
import { arefBombGds } from '../tests/jobs/bombs';
import { insertDoneAnalysis, inventedResults, saveAsRows, tempDb } from '../tests/jobs/results-store';

const s = (ms: number) => `${(ms / 1000).toFixed(2)} s`;
const mb = (b: number) => `${(b / 2 ** 20).toFixed(0)} MiB`;

async function handOff(dir: string, n: number): Promise<void> {
  const db = tempDb(dir);
  insertDoneAnalysis(db, 'before');
  insertDoneAnalysis(db, 'after');
  let results: FeatureResult[] | null = inventedResults(n);
  // After (first, on a clean heap): the worker encodes and writes one file; the server writes one index row.
  let t = performance.now();
  const enc = encodeFeatureFile(results);
  const encodeOnlyMs = performance.now() - t;
  const out = path.join(dir, 'analyses', 'after');
  mkdirSync(out, { recursive: true });
  const fd = openSync(path.join(out, FEATURE_FILE_NAME), 'w');
  writeSync(fd, enc.body);
  writeSync(fd, enc.tables);
  closeSync(fd);
  const encodeMs = performance.now() - t;
  t = performance.now();
  await saveResultRows(db, 'after', { ok: true, summary: {} as never, flags: [], maps: [], featureFile: { file: FEATURE_FILE_NAME, count: n, bytes: enc.byteLength } });
  const saveMs = performance.now() - t;
  t = performance.now();
  const cols = readFeatureColumns(db, 'after');
  const readFileMs = performance.now() - t;
  if (cols.count !== n) throw new Error('read back the wrong count');
  // Before: postMessage structured-clones the array of objects, then the server inserts each row.
  t = performance.now();
  const cloned = structuredClone(results);
  const cloneMs = performance.now() - t;
  results = null;
  t = performance.now();
  saveAsRows(db, 'before', cloned);
  const insertMs = performance.now() - t;
  t = performance.now();
  readFeatureColumns(db, 'before');
  const readRowsMs = performance.now() - t;
  db.$client.close();
  console.log(`result hand-off, ${n.toLocaleString('en')} openings:`);
  console.log(`  before: structured clone ${s(cloneMs)} + ${n.toLocaleString('en')} inserts ${s(insertMs)} = ${s(cloneMs + insertMs)} (bulk read back ${s(readRowsMs)})`);
  console.log(`  after:  encode ${s(encodeOnlyMs)} + write ${mb(enc.byteLength)} ${s(encodeMs - encodeOnlyMs)} (worker) + save index ${s(saveMs)} (server) = ${s(encodeMs + saveMs)} (bulk read back ${s(readFileMs)})`);
}

async function bomb(dir: string): Promise<void> {
  const bytes = arefBombGds();
  const file = path.join(dir, 'bomb.gds');
  writeFileSync(file, bytes);
  const rss0 = process.memoryUsage().rss;
  // Warm the pool (thread start-up is not the check).
  await checkUploadInWorker(file, { maxPolygons: 1000, maxPoints: 4000 });
  const h = monitorEventLoopDelay({ resolution: 5 });
  h.enable();
  let peak = process.memoryUsage().rss;
  const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 5);
  const t = performance.now();
  const r = await checkUploadInWorker(file, { maxPolygons: 10_000_000, maxPoints: 50_000_000 });
  const ms = performance.now() - t;
  clearInterval(sampler);
  h.disable();
  peak = Math.max(peak, process.memoryUsage().rss);
  console.log(`upload bomb (${bytes.length} bytes, 4999×4999 AREF = 24,990,001 polygons), checked in the upload pool:`);
  console.log(`  refused in ${ms.toFixed(1)} ms: ${r.ok ? 'ACCEPTED (unexpected)' : r.message}`);
  console.log(`  main-thread event-loop delay max ${(h.max / 1e6).toFixed(1)} ms; process RSS ${mb(rss0)} → peak ${mb(peak)} (+${mb(peak - rss0)})`);
}

async function cancelLatency(dir: string): Promise<void> {
  const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..');
  execFileSync(process.execPath, [path.join(root, 'scripts', 'build-worker.mjs')], { stdio: 'ignore' });
  const w = new GdsiiWriter({ libraryName: 'CANCEL', dbuUm: 0.001 });
  w.beginCell('T');
  w.rect(5, 0, 0, 0, 1000, 3000);
  w.endCell();
  w.beginCell('TOP');
  w.rect(0, 0, 0, 0, 1_000_000, 1_000_000);
  w.aref('T', 320, 320, [0, 0], [320 * 3000, 0], [0, 320 * 3000]);
  w.endCell();
  const gds = path.join(dir, 'cancel.gds');
  writeFileSync(gds, w.finish());
  const pool = new Piscina({ filename: path.join(root, 'node_modules', '.cache', 'trenchant', 'analysis-worker.mjs'), maxThreads: 1 });
  const model = { name: 'bench (invented)', version: '1', openRateUmPerMin: 4, reactionProbability: 0.2, loading: { coefficient: 0.3, lengthUm: 500 }, etch: { timeMin: 15, targetDepthUm: 50, toleranceUm: 2, maxAspectRatio: 40 }, mode: 'continuous' };
  const settings = { etchLayers: [{ layer: 5, datatype: 0 }], pixel: { sizeUm: 1 } };
  console.log('cancel latency (shared flag → worker resolves "cancelled"), 102,400 openings, 1 mm die at 1 µm:');
  try {
    for (const stage of ['reading', 'coverage', 'window-density', 'effective-density', 'features', 'local-width', 'prediction', 'maps', 'flags']) {
      const flag = new Int32Array(new SharedArrayBuffer(4));
      const { port1, port2 } = new MessageChannel();
      let setAt = 0;
      port1.on('message', (m: WorkerMessage) => {
        if (!setAt && m.stage === stage) {
          setAt = performance.now();
          Atomics.store(flag, 0, 1);
        }
      });
      const r = (await pool.run({ layoutPath: gds, settings, model, outDir: path.join(dir, `c-${stage}`), port: port2, cancelFlag: flag }, { transferList: [port2] })) as AnalysisTaskResult;
      const ms = setAt ? performance.now() - setAt : Number.NaN;
      port1.close();
      console.log(`  flag set at ${`"${stage}"`.padEnd(20)} → ${r.ok ? 'finished anyway' : r.code} after ${ms.toFixed(0)} ms`);
    }
  } finally {
    await pool.destroy();
  }
}

export default async function jobsBench(): Promise<void> {
  console.log(`load average ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
  const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-jobs-bench-'));
  try {
    await handOff(dir, Number(process.env.BENCH_FEATURES ?? 1_000_000));
    await bomb(dir);
    await cancelLatency(dir);
  } finally {
    await closeUploadPool();
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await jobsBench();
