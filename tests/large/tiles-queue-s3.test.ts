/**
 * The app's analysis of a layout above the whole-read size with its tiles on the `tiles` queue: tile workers are
 * real `npm run worker` processes (TRENCHANT_WORKER_DB=none) that share nothing with the analysing process but
 * Redis (a redis-server of the test's own) and the bucket (the s3rver fake): each fetches the stored layout into
 * its own read cache and indexes it there. The result must be exactly the in-process tiled result and the whole
 * read's (summary apart from timings and the record of the tiling, flags, per-opening column file and maps, byte
 * for byte) — the reference is the project's own untiled pipeline, checked against outside sources in
 * tests/pipeline and tests/geometry; what is checked here is that moving tiles to other processes changes nothing.
 * Also: a tile worker killed (SIGKILL) in the middle of a tile → the tile is run again by another worker and the
 * analysis ends with the same files; progress per tile; cancel leaves no tile jobs waiting.
 */
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { MessageChannel } from 'node:worker_threads';
import { Queue } from 'bullmq';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import analyse, { type AnalysisTaskResult, type WorkerMessage } from '@/lib/pipeline/worker';
import { storage } from '@/lib/storage';
import { localInput } from '@/lib/storage/job-files';
import { openRedis } from '@/lib/jobs/bullmq-shared';
import { TILE_QUEUE_NAME } from '@/lib/pipeline/tiled/tile-queue';
import { startWorker, type TestWorker } from '../jobs/queue-workers';
import { redisServerBinary, startTestRedis, type TestRedis } from '../jobs/redis-server';
import { flatDie } from '../layout/tile-fixtures';
import { startTestS3, type TestS3 } from '../support/fake-s3';

const hasRedis = redisServerBinary() !== null;
const home = mkdtempSync(join(tmpdir(), 'trenchant-tiles-queue-'));
const model = JSON.parse(readFileSync('samples/models/deep-trench-continuous.json', 'utf8')) as unknown;
const settings = { etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 2 } };
const KEY = 'layouts/viaduct/rev-tiles.gds';
const PREFIX = 'trenchant-tiles-test';

let redis: TestRedis | undefined;
let s3: TestS3 | undefined;
let layoutPath = '';
const workers: TestWorker[] = [];
let workerNo = 0;

function workerEnv(): Record<string, string> {
  const own = join(home, `worker-${++workerNo}`);
  for (const d of ['data', 'tmp', 'cache']) mkdirSync(join(own, d), { recursive: true });
  return {
    ...s3!.env,
    TRENCHANT_REDIS_URL: redis!.url,
    TRENCHANT_REDIS_PREFIX: PREFIX,
    TRENCHANT_QUEUE_LOCK_MS: '2000',
    TRENCHANT_WORKER_DB: 'none',
    TRENCHANT_DB: join(own, 'db', 'must-not-exist.db'),
    TRENCHANT_DATA_DIR: join(own, 'data'),
    TRENCHANT_CACHE_DIR: join(own, 'cache'),
    TRENCHANT_TILE_THREADS: '1',
    TMPDIR: join(own, 'tmp'),
  };
}

async function addWorker(): Promise<TestWorker> {
  const w = await startWorker(`tiles-${workerNo + 1}`, workerEnv());
  workers.push(w);
  return w;
}

beforeAll(async () => {
  if (!hasRedis) return;
  redis = await startTestRedis();
  s3 = await startTestS3();
  // This process analyses; its storage is the bucket too (the task names the key and the store).
  Object.assign(process.env, s3.env, { TRENCHANT_CACHE_DIR: join(home, 'server-cache'), TRENCHANT_ANALYSIS_MEMORY_MB: '20', TRENCHANT_TILE_THREADS: '0', TRENCHANT_REDIS_PREFIX: PREFIX, TRENCHANT_QUEUE_LOCK_MS: '2000' });
  const file = join(home, 'flat.gds');
  writeFileSync(file, flatDie(30_000));
  await storage().putFile(KEY, file);
  layoutPath = (await localInput(storage(), KEY)).path;
}, 120_000);
afterAll(async () => {
  for (const w of workers) await w.stop();
  await s3?.stop();
  await redis?.stop();
  rmSync(home, { recursive: true, force: true });
});

async function run(name: string, opts: { wholeReadBytes: number; queue: boolean; cancelAt?: (m: WorkerMessage) => boolean; onMessage?: (m: WorkerMessage) => void }) {
  if (opts.queue) process.env.TRENCHANT_REDIS_URL = redis!.url;
  else delete process.env.TRENCHANT_REDIS_URL;
  const { port1, port2 } = new MessageChannel();
  const seen: WorkerMessage[] = [];
  const flag = new Int32Array(new SharedArrayBuffer(4));
  port1.on('message', (m: WorkerMessage) => {
    seen.push(m);
    opts.onMessage?.(m);
    if (opts.cancelAt?.(m)) Atomics.store(flag, 0, 1);
  });
  const outDir = join(home, 'out', name);
  try {
    const r = await analyse({ layoutPath, settings, model, outDir, port: port2, cancelFlag: flag, wholeReadBytes: opts.wholeReadBytes, storedLayout: { key: KEY, where: storage().where } });
    await new Promise((res) => setTimeout(res, 50));
    return { r, seen, outDir };
  } finally {
    port1.close();
    delete process.env.TRENCHANT_REDIS_URL;
  }
}

function withoutRunFacts(r: AnalysisTaskResult) {
  if (!r.ok) throw new Error(`${r.code}: ${r.message}`);
  const { timingsMs: _t, tiled: _x, ...summary } = r.summary;
  return { ...r, summary };
}

function expectSameFiles(a: string, b: string) {
  const files = readdirSync(a).sort();
  expect(readdirSync(b).sort()).toEqual(files);
  expect(files.length).toBeGreaterThan(3);
  for (const f of files) expect(readFileSync(join(b, f)).equals(readFileSync(join(a, f))), f).toBe(true);
}

describe.skipIf(!hasRedis)('tiles of the app analysis on queue tile workers (layout on S3)', () => {
  it('two tile workers give the in-process tiled and the whole result exactly', async () => {
    const whole = await run('whole', { wholeReadBytes: 1e12, queue: false });
    const local = await run('local', { wholeReadBytes: 0, queue: false });
    // No tile worker listens yet: the tiles stay in this process rather than wait on an empty queue.
    const none = await run('no-workers', { wholeReadBytes: 0, queue: true });
    expect(none.r.ok && none.r.summary.tiled?.via).toBe('inline');
    const [a, b] = [await addWorker(), await addWorker()];
    const queued = await run('queued', { wholeReadBytes: 0, queue: true });
    if (!queued.r.ok || !local.r.ok || !whole.r.ok) throw new Error('analysis failed');
    const t = queued.r.summary.tiled!;
    expect(t).toMatchObject({ via: 'queue', threads: 8 });
    expect(t.tiles).toBeGreaterThan(4);
    expect(local.r.summary.tiled).toMatchObject({ via: 'inline', tiles: t.tiles, tileUm: t.tileUm, rereads: t.rereads });
    expect(withoutRunFacts(queued.r)).toEqual(withoutRunFacts(whole.r));
    expect(withoutRunFacts(local.r)).toEqual(withoutRunFacts(whole.r));
    expect(whole.r.summary.features.count).toBeGreaterThan(1000);
    expectSameFiles(whole.outDir, queued.outDir);
    expectSameFiles(whole.outDir, local.outDir);
    // Both workers ran tiles, each from its own cached copy of the stored layout.
    for (const w of [a, b]) expect(w.output()).toMatch(/tile worker \d+: job \S+ \(core of tile \d+\) started/);
    for (const n of [workerNo - 1, workerNo]) expect(readdirSync(join(home, `worker-${n}`, 'cache'), { recursive: true })).toContain(join('layouts', 'viaduct', 'rev-tiles.gds'));
    // Progress per tile, never decreasing.
    const coverageSteps = new Set(queued.seen.filter((m) => m.stage === 'coverage').map((m) => m.fraction)).size;
    expect(coverageSteps).toBeGreaterThanOrEqual(Math.min(t.tiles, 3));
    for (let k = 1; k < queued.seen.length; k++) expect(queued.seen[k]!.fraction).toBeGreaterThanOrEqual(queued.seen[k - 1]!.fraction);
  }, 300_000);

  it('a tile worker killed in the middle of a tile: the tile runs again elsewhere, same files', async () => {
    for (const w of workers.splice(0)) await w.stop();
    const victim = await addWorker();
    let killed = false;
    const queued = run('after-kill', {
      wholeReadBytes: 0,
      queue: true,
      onMessage: () => {
        // The first tile this worker took is in progress (its thread is indexing the file or running the tile).
        if (!killed && /\(core of tile \d+\) started/.test(victim.output())) {
          killed = true;
          victim.child.kill('SIGKILL');
        }
      },
    });
    const deadline = Date.now() + 60_000;
    while (!/\(core of tile \d+\) started/.test(victim.output()) && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
    if (!killed) {
      killed = true;
      victim.child.kill('SIGKILL');
    }
    const rescuer = await addWorker();
    const { r, outDir } = await queued;
    if (!r.ok) throw new Error(r.message);
    expect(victim.output()).not.toMatch(/ended|ran \d+/);
    // The killed worker's tile came back to the queue (BullMQ's stalled check) and was picked up a second time.
    expect(rescuer.output()).toMatch(/started \(pick-up 2\)/);
    expectSameFiles(join(home, 'out', 'whole'), outDir);
  }, 300_000);

  it('cancel between tiles stops the analysis and leaves no tile jobs waiting', async () => {
    const { r, seen } = await run('cancelled', { wholeReadBytes: 0, queue: true, cancelAt: (m) => m.stage === 'coverage' && m.fraction > 0.16 });
    expect(r).toEqual({ ok: false, code: 'cancelled', message: 'analysis cancelled' });
    expect(seen.map((m) => m.stage)).toContain('coverage'); // at least one tile came back from the queue first
    expect(seen.map((m) => m.stage)).not.toContain('prediction');
    const connection = openRedis(redis!.url, 'test-probe');
    const queue = new Queue(TILE_QUEUE_NAME, { connection, prefix: PREFIX });
    try {
      expect(await queue.getWaitingCount()).toBe(0);
    } finally {
      await queue.close();
      connection.disconnect();
    }
  }, 300_000);
});
