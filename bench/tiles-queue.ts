/**
 * By hand: the app's tiled analysis (lib/pipeline/worker.ts above the whole-read size) with its tiles in this
 * process, then on the `tiles` queue with 1, 2, … `npm run worker` processes (TRENCHANT_WORKER_DB=none, local data
 * folder shared on this machine), on a redis-server of its own. Prints one JSON line per run (wall seconds, tiles,
 * the load average before) and checks every run wrote the same files as the first.
 * Usage: nice -n 10 node --import tsx bench/tiles-queue.ts FILE.gds [workers,… default 1,2] (memory budget per
 * analysis: TRENCHANT_ANALYSIS_MEMORY_MB, default here 300, so a 1 M-polygon layout gets a few dozen tiles).
 */
import { copyFileSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { startWorker, type TestWorker } from '../tests/jobs/queue-workers';
import { startTestRedis } from '../tests/jobs/redis-server';

const [file, counts = '1,2'] = process.argv.slice(2);
if (!file) throw new Error('usage: bench/tiles-queue.ts FILE.gds [1,2]');
const home = mkdtempSync(join(tmpdir(), 'trenchant-bench-tq-'));
const dataDir = join(home, 'data');
const KEY = 'layouts/bench/layout.gds';
mkdirSync(join(dataDir, 'layouts', 'bench'), { recursive: true });
copyFileSync(file, join(dataDir, KEY));
const redis = await startTestRedis();
Object.assign(process.env, { TRENCHANT_DATA_DIR: dataDir, TRENCHANT_ANALYSIS_MEMORY_MB: process.env.TRENCHANT_ANALYSIS_MEMORY_MB ?? '300', TRENCHANT_TILE_THREADS: '0', TRENCHANT_REDIS_PREFIX: 'trenchant-bench-tiles' });
// Loaded after TRENCHANT_DATA_DIR is set (lib/jobs/paths.ts reads it once).
const { default: analyse } = await import('../lib/pipeline/worker');
const { storage } = await import('../lib/storage');
const model = JSON.parse(readFileSync('samples/models/deep-trench-continuous.json', 'utf8')) as unknown;
const settings = { etchLayers: [{ layer: 1, datatype: 0 }] };
const workers: TestWorker[] = [];
let reference: string | null = null;
try {
  for (const n of [0, ...counts.split(',').map(Number)]) {
    while (workers.length < n) workers.push(await startWorker(`bench-${workers.length}`, { TRENCHANT_REDIS_URL: redis.url, TRENCHANT_REDIS_PREFIX: 'trenchant-bench-tiles', TRENCHANT_WORKER_DB: 'none', TRENCHANT_DATA_DIR: dataDir, TRENCHANT_DB: join(home, 'none.db'), TRENCHANT_TILE_THREADS: '1' }));
    if (n > 0) process.env.TRENCHANT_REDIS_URL = redis.url;
    const outDir = join(home, `out-${n}`);
    const load = loadavg()[0]!.toFixed(1);
    const t0 = performance.now();
    const r = await analyse({ layoutPath: join(dataDir, KEY), settings, model, outDir, wholeReadBytes: 0, storedLayout: { key: KEY, where: storage().where } });
    const seconds = Math.round((performance.now() - t0) / 100) / 10;
    if (!r.ok) throw new Error(`${r.code}: ${r.message}`);
    let same = true;
    if (reference === null) reference = outDir;
    else for (const f of readdirSync(reference)) same &&= readFileSync(join(outDir, f)).equals(readFileSync(join(reference, f)));
    const t = r.summary.tiled!;
    console.log(JSON.stringify({ queueWorkers: n, via: t.via, seconds, tiles: t.tiles, rereads: t.rereads, tilePhaseMs: r.summary.timingsMs.tiles, openings: r.summary.features.count, sameFiles: same, loadBefore: load, loadAfter: loadavg()[0]!.toFixed(1) }));
  }
} finally {
  for (const w of workers) await w.stop();
  await redis.stop();
  rmSync(home, { recursive: true, force: true });
}
