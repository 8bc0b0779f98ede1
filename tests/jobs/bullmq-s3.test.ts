/**
 * A queue worker that shares nothing with the server but Redis and the bucket: layouts and results on S3 (a fake S3
 * server, s3rver, in its own process), jobs on Redis (a redis-server of the test's own), and the worker started
 * with TRENCHANT_WORKER_DB=none, its own empty data folder, temp folder and cache, and a TRENCHANT_DB path that must
 * never be created. The job's data carries the task; the worker downloads the layout, runs it, uploads the results
 * and returns the summary, flags and map index, which the server records when BullMQ reports the completion.
 * Checks: results as with the embedded pool, progress relayed in order, the pick-up counted once, a running job
 * cancelled, nothing left in any of the worker's folders.
 * Expected figures: open area = Σ width × 400 µm over a 1 mm × 1 mm die (exact rectangle areas; common practice,
 * no source) — the same check as tests/pipeline-server/flow.test.ts.
 */
import { existsSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analysisState, json, PROJECT, readEvents, signInAs, slowLayoutGds, startAnalysis, TEST_MODEL, TRENCH_SETTINGS, TRENCH_WIDTHS_UM, trenchLayoutGds, uploadRevision, waitFor } from '../pipeline-server/support';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { startWorker, type TestWorker } from './queue-workers';
import { startTestRedis, type TestRedis } from './redis-server';

function filesUnder(dir: string): string[] {
  if (!existsSync(dir)) return [];
  return (readdirSync(dir, { recursive: true }) as string[]).filter((e) => statSync(path.join(dir, e)).isFile()).sort();
}

describe('a BullMQ worker without the database or a shared folder (storage on S3)', () => {
  let redis: TestRedis | undefined;
  let s3: TestS3 | undefined;
  let server: TestServer | undefined;
  let worker: TestWorker | undefined;
  let second: TestWorker | undefined;
  let workerEnv: Record<string, string> = {};
  let designer: TestClient;
  const workerHome = mkdtempSync(path.join(tmpdir(), 'trenchant-worker-home-'));
  const workerData = path.join(workerHome, 'data');
  const workerTmp = path.join(workerHome, 'tmp');
  const workerCache = path.join(workerHome, 'cache');
  const workerDb = path.join(workerHome, 'db', 'must-not-exist.db');

  beforeAll(async () => {
    redis = await startTestRedis();
    s3 = await startTestS3();
    const queueEnv = { TRENCHANT_REDIS_URL: redis.url, TRENCHANT_REDIS_PREFIX: 'trenchant-s3-test', TRENCHANT_JOB_CONCURRENCY: '1', TRENCHANT_QUEUE_LOCK_MS: '2000' };
    server = await startTestServer({ env: { ...queueEnv, ...s3.env } });
    designer = await signInAs(server.baseUrl, 'designer');
    // The seeded demo analysis would keep the only worker busy first; cancel it while it is only queued.
    const admin = await signInAs(server.baseUrl, 'admin');
    const list = await json<{ analyses: { id: string; status: string }[] }>(await admin.get(`/api/v1/projects/${PROJECT}/analyses`));
    for (const a of list.analyses.filter((x) => x.status === 'queued')) expect((await admin.post(`/api/v1/analyses/${a.id}/cancel`, {})).status).toBe(202);
    for (const d of [workerData, workerTmp, workerCache]) rmSync(d, { recursive: true, force: true });
    const { mkdirSync } = await import('node:fs');
    for (const d of [workerData, workerTmp, workerCache]) mkdirSync(d, { recursive: true });
    workerEnv = {
      ...queueEnv,
      ...s3.env,
      TRENCHANT_WORKER_DB: 'none',
      TRENCHANT_DB: workerDb,
      TRENCHANT_DATA_DIR: workerData,
      TRENCHANT_CACHE_DIR: workerCache,
      TMPDIR: workerTmp,
    };
    worker = await startWorker('s3-worker', workerEnv);
  });
  afterAll(async () => {
    await worker?.stop();
    await second?.stop();
    await server?.stop();
    await s3?.stop();
    await redis?.stop();
    rmSync(workerHome, { recursive: true, force: true });
  });

  it('runs an analysis from the bucket and stores its results there', async () => {
    const revisionId = (await uploadRevision(designer, trenchLayoutGds(), 'S3 queue trenches')).id;
    const id = await startAnalysis(designer, { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL });
    expect(worker!.output()).toContain('without a database');
    const events = await readEvents(designer, id, 180_000);
    expect(events.at(-1), worker!.output().slice(-2000)).toMatchObject({ event: 'end', data: { status: 'done' } });
    const running = events.filter((e) => e.event === 'progress' && e.data.status === 'running');
    expect(running.some((e) => e.data.stage === 'reading' || e.data.stage === 'coverage')).toBe(true);
    const fractions = running.map((e) => e.data.progress as number);
    expect(fractions).toEqual([...fractions].sort((a, b) => a - b));
    const s = await waitFor(designer, id, ['done', 'failed', 'cancelled'], 10_000);
    expect(s).toMatchObject({ status: 'done', errorMessage: null });
    expect(worker!.output()).toContain(`analysis ${id} started`);
    expect((await analysisState(designer, id)).attempts).toBe(1);
    expect(await s3!.keys(`analyses/${id}/`)).toEqual(expect.arrayContaining([`analyses/${id}/features.trfeat`, `analyses/${id}/risk.trgrid`]));

    const r = await json<{ summary: { globalDensity: number }; features: { items: { widthUm: number }[] } }>(await designer.get(`/api/v1/analyses/${id}/results`));
    const open = TRENCH_WIDTHS_UM.reduce((sum, w) => sum + w * 400, 0);
    expect(r.summary.globalDensity).toBeCloseTo(open / 1e6, 6);
    expect(r.features.items.map((f) => f.widthUm).sort((a, b) => a - b)).toEqual(TRENCH_WIDTHS_UM.map((w) => expect.closeTo(w, 6)));

    const maps = await designer.get(`/api/v1/analyses/${id}/maps/risk`);
    expect(maps.status).toBe(200);
    // Nothing of the job is left on the worker's side: no database, no data folder files, no downloaded layout, no
    // staged results.
    expect(existsSync(workerDb)).toBe(false);
    expect(filesUnder(workerData)).toEqual([]);
    expect(readdirSync(workerTmp).filter((e) => e.startsWith('trenchant-job-') || e.startsWith('trenchant-results-'))).toEqual([]);
    // Nor on the server's: its folder holds only the database.
    expect(filesUnder(server!.dataDir).filter((f) => !/^trenchant\.db(-wal|-shm|-journal)?$/.test(f))).toEqual([]);
  }, 240_000);

  it('cancels a running job in the worker; its partial results do not stay in the bucket', async () => {
    const revisionId = (await uploadRevision(designer, slowLayoutGds(), 'S3 queue holes')).id;
    const id = await startAnalysis(designer, { revisionId, settings: { etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }] }, model: TEST_MODEL });
    const deadline = Date.now() + 120_000;
    while ((await analysisState(designer, id)).status !== 'running') {
      if (Date.now() > deadline) throw new Error('the job never started');
      await new Promise((r) => setTimeout(r, 100));
    }
    const res = await designer.post(`/api/v1/analyses/${id}/cancel`, {});
    expect(res.status).toBe(202);
    const s = await waitFor(designer, id, ['done', 'failed', 'cancelled'], 60_000);
    expect(s.status).toBe('cancelled');
    expect(s.attempts).toBe(1);
    expect(await s3!.keys(`analyses/${id}/`)).toEqual([]);
    expect((await designer.get(`/api/v1/analyses/${id}/results`)).status).toBe(409);
    expect(existsSync(workerDb)).toBe(false);
  }, 240_000);

  it('a worker killed mid-job loses it to another, which finishes it; the server counts both pick-ups', async () => {
    second = await startWorker('s3-worker-2', workerEnv);
    const revisionId = (await uploadRevision(designer, slowLayoutGds(), 'S3 queue holes again')).id;
    const id = await startAnalysis(designer, { revisionId, settings: { etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }] }, model: TEST_MODEL });
    const deadline = Date.now() + 120_000;
    for (;;) {
      const st = await analysisState(designer, id);
      if (st.status === 'running' && st.progress > 0.05) break;
      if (Date.now() > deadline || st.status !== 'queued' && st.status !== 'running') throw new Error(`the job did not get going: ${JSON.stringify(st)}`);
      await new Promise((r) => setTimeout(r, 50));
    }
    const victim = [worker!, second].find((w) => w.output().includes(`analysis ${id} started`))!;
    expect(victim).toBeDefined();
    const survivor = victim === worker ? second : worker!;
    victim.child.kill('SIGKILL');
    await new Promise((r) => victim.child.once('exit', r));
    const s = await waitFor(designer, id, ['done', 'failed', 'cancelled'], 180_000);
    expect(s, survivor.output().slice(-2000)).toMatchObject({ status: 'done', attempts: 2 });
    expect(survivor.output()).toContain(`analysis ${id} started`);
    const r = await json<{ features: { total: number } }>(await designer.get(`/api/v1/analyses/${id}/results?limit=1`));
    expect(r.features.total).toBe(3600); // the 60 × 60 hole array
    expect(existsSync(workerDb)).toBe(false);
  }, 300_000);
});
