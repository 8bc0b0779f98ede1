/**
 * The BullMQ backend against a real Redis (a redis-server of the test's own on a free loopback port): the server
 * started with TRENCHANT_REDIS_URL only enqueues, two `npm run worker` processes sharing its database file and
 * data folder run the jobs. Checks: a job runs end to end with its progress reaching the browser's event stream;
 * a worker killed with SIGKILL mid-job loses the job to the other worker, which finishes it with the same results
 * as an uninterrupted run; cancel reaches a running job and a queued one.
 * Expected figures for the trench layout: open area = Σ width × 400 µm over a 1 mm × 1 mm die (exact rectangle
 * areas; common practice, no source) — the same check as tests/pipeline-server/flow.test.ts.
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import {
  analysisState,
  json,
  PROJECT,
  readEvents,
  signInAs,
  slowLayoutGds,
  startAnalysis,
  TEST_MODEL,
  TRENCH_SETTINGS,
  TRENCH_WIDTHS_UM,
  trenchLayoutGds,
  uploadRevision,
  waitFor,
  type AnalysisState,
} from '../pipeline-server/support';
import { startWorker, type TestWorker } from './queue-workers';
import { startTestRedis, type TestRedis } from './redis-server';

const SLOW_SETTINGS = { etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }] };

describe('analysis jobs on BullMQ + Redis', () => {
  let redis: TestRedis | undefined;
  let server: TestServer | undefined;
  const workers: TestWorker[] = [];
  let designer: TestClient;
  let slowRevision = '';
  let reference: Results | undefined;
  let workerEnv: Record<string, string> = {};

  beforeAll(async () => {
    redis = await startTestRedis();
    const env = { TRENCHANT_REDIS_URL: redis.url, TRENCHANT_REDIS_PREFIX: 'trenchant-test', TRENCHANT_QUEUE_LOCK_MS: '2000', TRENCHANT_JOB_CONCURRENCY: '1' };
    server = await startTestServer({ env });
    expect(server.output()).toContain('queued on Redis');
    designer = await signInAs(server.baseUrl, 'designer');
    // The seeded demo analysis would take a worker's first minutes; cancel it (it is only queued: no worker yet).
    const admin = await signInAs(server.baseUrl, 'admin');
    const list = await json<{ analyses: { id: string; status: string }[] }>(await admin.get(`/api/v1/projects/${PROJECT}/analyses`));
    for (const a of list.analyses.filter((x) => x.status === 'queued')) expect((await admin.post(`/api/v1/analyses/${a.id}/cancel`, {})).status).toBe(202);
    workerEnv = { ...env, TRENCHANT_DB: server.dbFile };
    workers.push(await startWorker('w1', workerEnv), await startWorker('w2', workerEnv));
    slowRevision = (await uploadRevision(designer, slowLayoutGds(), 'queue holes')).id;
  });
  afterAll(async () => {
    await Promise.all(workers.map((w) => w.stop()));
    await server?.stop();
    await redis?.stop();
  });

  it('runs a job in a worker process and relays its progress to the event stream', async () => {
    const revisionId = (await uploadRevision(designer, trenchLayoutGds(), 'queue trenches')).id;
    const id = await startAnalysis(designer, { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL });
    const events = await readEvents(designer, id, 120_000);
    const last = events.at(-1);
    expect(last?.event).toBe('end');
    expect(last?.data.status).toBe('done');
    // Worker stages arrive over Redis (the server computes nothing itself), progress never going down.
    const running = events.filter((e) => e.event === 'progress' && e.data.status === 'running');
    expect(running.some((e) => e.data.stage === 'reading' || e.data.stage === 'coverage' || e.data.stage === 'saving')).toBe(true);
    const fractions = running.map((e) => e.data.progress as number);
    expect(fractions).toEqual([...fractions].sort((a, b) => a - b));
    expect(workers.some((w) => w.output().includes(`analysis ${id} started`))).toBe(true);

    const s = await analysisState(designer, id);
    expect(s).toMatchObject({ status: 'done', attempts: 1 });
    const r = await results(designer, id);
    const open = TRENCH_WIDTHS_UM.reduce((sum, w) => sum + w * 400, 0);
    expect(r.summary.globalDensity).toBeCloseTo(open / 1e6, 6);
    expect(r.featureWidths).toEqual(TRENCH_WIDTHS_UM.map((w) => expect.closeTo(w, 6)));
  }, 180_000);

  it('a worker killed mid-job loses the job to another worker, which finishes it with nothing lost', async () => {
    // Uninterrupted run first: the figures the retried job must reproduce.
    const first = await startAnalysis(designer, { revisionId: slowRevision, settings: SLOW_SETTINGS, model: TEST_MODEL });
    expect((await waitFor(designer, first, ['done', 'failed', 'cancelled'], 180_000)).status).toBe('done');
    reference = await results(designer, first);
    expect(reference.featureCount).toBe(3600); // the 60 × 60 hole array

    const id = await startAnalysis(designer, { revisionId: slowRevision, settings: SLOW_SETTINGS, model: TEST_MODEL });
    await waitUntilRunning(designer, id, 0.05);
    const victim = workers.find((w) => w.output().includes(`analysis ${id} started`));
    expect(victim, 'no worker said it started the job').toBeDefined();
    victim!.child.kill('SIGKILL');
    await new Promise((r) => victim!.child.once('exit', r));
    workers.splice(workers.indexOf(victim!), 1);
    const survivor = workers[0]!;

    const s = await waitFor(designer, id, ['done', 'failed', 'cancelled'], 180_000);
    expect(s, JSON.stringify(s)).toMatchObject({ status: 'done', attempts: 2 });
    expect(survivor.output()).toContain(`analysis ${id} started`);
    const again = await results(designer, id);
    expect(again).toEqual(reference);
    workers.push(await startWorker('w3', workerEnv));
  }, 400_000);

  it('cancels a running job in its worker and a queued one before any worker takes it', async () => {
    const a = await startAnalysis(designer, { revisionId: slowRevision, settings: SLOW_SETTINGS, model: TEST_MODEL });
    const b = await startAnalysis(designer, { revisionId: slowRevision, settings: SLOW_SETTINGS, model: TEST_MODEL });
    await waitUntilRunning(designer, a, 0);
    await waitUntilRunning(designer, b, 0);
    // Both workers (one job each) are busy: this one stays queued.
    const c = await startAnalysis(designer, { revisionId: slowRevision, settings: SLOW_SETTINGS, model: TEST_MODEL });
    const cancelQueued = await designer.post(`/api/v1/analyses/${c}/cancel`, {});
    expect(cancelQueued.status).toBe(202);
    expect((await json<{ analysis: AnalysisState }>(cancelQueued)).analysis.status).toBe('cancelled');

    const stream = readEvents(designer, a, 120_000);
    const res = await designer.post(`/api/v1/analyses/${a}/cancel`, {});
    expect(res.status).toBe(202);
    const events = await stream;
    expect(events.at(-1)).toMatchObject({ event: 'end', data: { status: 'cancelled' } });
    const s = await waitFor(designer, a, ['done', 'failed', 'cancelled'], 60_000);
    expect(s.status).toBe('cancelled');
    expect((await designer.get(`/api/v1/analyses/${a}/results`)).status).toBe(409);

    expect((await designer.post(`/api/v1/analyses/${b}/cancel`, {})).status).toBe(202);
    expect((await waitFor(designer, b, ['done', 'failed', 'cancelled'], 60_000)).status).toBe('cancelled');
    // The queued one was never run by a worker.
    expect((await analysisState(designer, c)).attempts).toBe(0);
    expect(workers.some((w) => w.output().includes(`analysis ${c} started`))).toBe(false);
  }, 300_000);
});

type Results = { summary: { globalDensity: number }; featureCount: number; featureWidths: number[]; flags: unknown[]; depthMapSha256: string };

/** What must survive a retry: summary figures, openings, flags and the bytes of the predicted-depth map. */
async function results(client: TestClient, id: string): Promise<Results> {
  const r = await json<{ summary: { globalDensity: number }; features: { total: number; items: { widthUm: number }[] } }>(await client.get(`/api/v1/analyses/${id}/results`));
  const flags = await json<{ items: { kind: string; severity: string; bboxUm: number[]; measured: number }[] }>(await client.get(`/api/v1/analyses/${id}/flags?limit=5000`));
  const map = new Uint8Array(await (await client.get(`/api/v1/analyses/${id}/maps/predicted-depth`)).arrayBuffer());
  return {
    summary: { globalDensity: r.summary.globalDensity },
    featureCount: r.features.total,
    featureWidths: r.features.items.map((f) => f.widthUm).sort((x, y) => x - y),
    flags: flags.items.map((f) => ({ kind: f.kind, severity: f.severity, bboxUm: f.bboxUm, measured: f.measured })),
    depthMapSha256: createHash('sha256').update(map).digest('hex'),
  };
}

async function waitUntilRunning(client: TestClient, id: string, minProgress: number): Promise<void> {
  const deadline = Date.now() + 180_000;
  for (;;) {
    const s = await analysisState(client, id);
    if (s.status === 'running' && s.progress > minProgress) return;
    if (s.status !== 'queued' && s.status !== 'running') throw new Error(`job ended early: ${JSON.stringify(s)}`);
    if (Date.now() > deadline) throw new Error(`job ${id} never started`);
    await new Promise((r) => setTimeout(r, 100));
  }
}
