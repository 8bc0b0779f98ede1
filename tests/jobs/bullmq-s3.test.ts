/**
 * A queue worker that shares no folder with the server: layouts and results on S3 (a fake S3 server, s3rver, in its
 * own process), jobs on Redis (a redis-server of the test's own). The worker gets the server's database file (still
 * needed, see README) but its own empty data folder, temp folder and cache; it downloads the layout, runs the job
 * and uploads the results, and afterwards none of its folders holds a layout or result file.
 * Expected figures: open area = Σ width × 400 µm over a 1 mm × 1 mm die (exact rectangle areas; common practice,
 * no source) — the same check as tests/pipeline-server/flow.test.ts.
 */
import { existsSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analysisState, json, PROJECT, signInAs, startAnalysis, TEST_MODEL, TRENCH_SETTINGS, TRENCH_WIDTHS_UM, trenchLayoutGds, uploadRevision, waitFor } from '../pipeline-server/support';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { startWorker, type TestWorker } from './queue-workers';
import { startTestRedis, type TestRedis } from './redis-server';

function filesUnder(dir: string): string[] {
  if (!existsSync(dir)) return [];
  return (readdirSync(dir, { recursive: true }) as string[]).filter((e) => statSync(path.join(dir, e)).isFile()).sort();
}

describe('a BullMQ worker with storage on S3 needs no shared data folder', () => {
  let redis: TestRedis | undefined;
  let s3: TestS3 | undefined;
  let server: TestServer | undefined;
  let worker: TestWorker | undefined;
  let designer: TestClient;
  const workerHome = mkdtempSync(path.join(tmpdir(), 'trenchant-worker-home-'));
  const workerData = path.join(workerHome, 'data');
  const workerTmp = path.join(workerHome, 'tmp');
  const workerCache = path.join(workerHome, 'cache');

  beforeAll(async () => {
    redis = await startTestRedis();
    s3 = await startTestS3();
    const queueEnv = { TRENCHANT_REDIS_URL: redis.url, TRENCHANT_REDIS_PREFIX: 'trenchant-s3-test', TRENCHANT_JOB_CONCURRENCY: '1' };
    server = await startTestServer({ env: { ...queueEnv, ...s3.env } });
    designer = await signInAs(server.baseUrl, 'designer');
    // The seeded demo analysis would keep the only worker busy first; cancel it while it is only queued.
    const admin = await signInAs(server.baseUrl, 'admin');
    const list = await json<{ analyses: { id: string; status: string }[] }>(await admin.get(`/api/v1/projects/${PROJECT}/analyses`));
    for (const a of list.analyses.filter((x) => x.status === 'queued')) expect((await admin.post(`/api/v1/analyses/${a.id}/cancel`, {})).status).toBe(202);
    for (const d of [workerData, workerTmp, workerCache]) rmSync(d, { recursive: true, force: true });
    const { mkdirSync } = await import('node:fs');
    for (const d of [workerData, workerTmp, workerCache]) mkdirSync(d, { recursive: true });
    worker = await startWorker('s3-worker', {
      ...queueEnv,
      ...s3.env,
      TRENCHANT_DB: server.dbFile,
      TRENCHANT_DATA_DIR: workerData,
      TRENCHANT_CACHE_DIR: workerCache,
      TMPDIR: workerTmp,
    });
  });
  afterAll(async () => {
    await worker?.stop();
    await server?.stop();
    await s3?.stop();
    await redis?.stop();
    rmSync(workerHome, { recursive: true, force: true });
  });

  it('runs an analysis from the bucket and stores its results there', async () => {
    const revisionId = (await uploadRevision(designer, trenchLayoutGds(), 'S3 queue trenches')).id;
    const id = await startAnalysis(designer, { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL });
    const s = await waitFor(designer, id, ['done', 'failed', 'cancelled'], 180_000);
    expect(s, worker!.output().slice(-2000)).toMatchObject({ status: 'done', errorMessage: null });
    expect(worker!.output()).toContain(`analysis ${id} started`);
    expect((await analysisState(designer, id)).attempts).toBe(1);
    expect(await s3!.keys(`analyses/${id}/`)).toEqual(expect.arrayContaining([`analyses/${id}/features.trfeat`, `analyses/${id}/risk.trgrid`]));

    const r = await json<{ summary: { globalDensity: number }; features: { items: { widthUm: number }[] } }>(await designer.get(`/api/v1/analyses/${id}/results`));
    const open = TRENCH_WIDTHS_UM.reduce((sum, w) => sum + w * 400, 0);
    expect(r.summary.globalDensity).toBeCloseTo(open / 1e6, 6);
    expect(r.features.items.map((f) => f.widthUm).sort((a, b) => a - b)).toEqual(TRENCH_WIDTHS_UM.map((w) => expect.closeTo(w, 6)));

    // Nothing of the job is left on the worker's side: no data folder files, no downloaded layout, no staged results.
    expect(filesUnder(workerData)).toEqual([]);
    expect(readdirSync(workerTmp).filter((e) => e.startsWith('trenchant-job-') || e.startsWith('trenchant-results-'))).toEqual([]);
    // Nor on the server's: its folder holds only the database.
    expect(filesUnder(server!.dataDir).filter((f) => !/^trenchant\.db(-wal|-shm|-journal)?$/.test(f))).toEqual([]);
  }, 240_000);
});
