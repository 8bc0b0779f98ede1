/**
 * Job life cycle over HTTP: cancelling queued and running analyses, and a server restart in the middle of a job
 * (the job is queued again and finishes on the new server, same database).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { analysisState, json, readEvents, signInAs, slowLayoutGds, startAnalysis, TEST_MODEL, uploadRevision, waitFor, type ErrorBody } from './support';

const SLOW_SETTINGS = { etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }] };

describe('cancel', () => {
  let server: TestServer;
  let designer: TestClient;
  let revisionId = '';

  beforeAll(async () => {
    // One job at a time, no demo job in the way: the second analysis below must wait in the queue.
    server = await startTestServer({ env: { TRENCHANT_JOB_CONCURRENCY: '1' } });
    designer = await signInAs(server.baseUrl, 'designer');
    revisionId = (await uploadRevision(designer, slowLayoutGds(), 'hole array')).id;
  });
  afterAll(() => server?.stop());

  it('cancels a running job (it stops at a check point) and a queued one (at once)', async () => {
    // The seeded demo job may be running; wait until the queue is ours.
    const list = await json<{ analyses: { id: string }[] }>(await designer.get('/api/v1/projects/demo-kestrel/analyses'));
    for (const a of list.analyses) await waitFor(designer, a.id, ['done', 'failed', 'cancelled'], 180_000);

    const running = await startAnalysis(designer, { revisionId, settings: SLOW_SETTINGS, model: TEST_MODEL });
    const queued = await startAnalysis(designer, { revisionId, settings: SLOW_SETTINGS, model: TEST_MODEL });
    // Wait until the first job is past reading the layout.
    const deadline = Date.now() + 60_000;
    while (Date.now() < deadline) {
      const s = await analysisState(designer, running);
      if (s.status === 'running' && s.progress > 0.1) break;
      await new Promise((r) => setTimeout(r, 100));
    }
    expect((await analysisState(designer, queued)).status).toBe('queued');

    const q = await designer.post(`/api/v1/analyses/${queued}/cancel`);
    expect(q.status).toBe(202);
    expect((await json<{ analysis: { status: string } }>(q)).analysis.status).toBe('cancelled');

    const eventsP = readEvents(designer, running, 60_000);
    const t0 = Date.now();
    const r = await designer.post(`/api/v1/analyses/${running}/cancel`);
    expect(r.status).toBe(202);
    const events = await eventsP;
    expect(events.at(-1)).toMatchObject({ event: 'end', data: { status: 'cancelled' } });
    expect(Date.now() - t0).toBeLessThan(15_000);
    const after = await analysisState(designer, running);
    expect(after.status).toBe('cancelled');
    const res = await designer.get(`/api/v1/analyses/${running}/results`);
    expect(res.status).toBe(409);
    expect((await json<ErrorBody>(res)).error.message).toContain('cancelled');

    const again = await designer.post(`/api/v1/analyses/${running}/cancel`);
    expect(again.status).toBe(409);

    // The worker pool is free again: a new job runs to the end.
    const next = await startAnalysis(designer, { revisionId, settings: SLOW_SETTINGS, model: TEST_MODEL });
    expect((await waitFor(designer, next, ['done', 'failed'], 180_000)).status).toBe('done');
  }, 400_000);
});

describe('restart', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-restart-'));
  const env = { TRENCHANT_DB: path.join(dir, 'trenchant.db'), TRENCHANT_JOB_CONCURRENCY: '1' };
  let server: TestServer | undefined;
  afterAll(async () => {
    await server?.stop();
    rmSync(dir, { recursive: true, force: true });
  });

  it('re-queues a job interrupted by a server stop and finishes it on the next start', async () => {
    server = await startTestServer({ env });
    let designer = await signInAs(server.baseUrl, 'designer');
    const revisionId = (await uploadRevision(designer, slowLayoutGds(), 'restart holes')).id;
    const id = await startAnalysis(designer, { revisionId, settings: SLOW_SETTINGS, model: TEST_MODEL });
    const deadline = Date.now() + 180_000;
    for (;;) {
      const s = await analysisState(designer, id);
      if (s.status === 'running' && s.progress > 0.05) break;
      expect(s.status === 'queued' || s.status === 'running').toBe(true);
      if (Date.now() > deadline) throw new Error('job never started');
      await new Promise((r) => setTimeout(r, 100));
    }
    await server.stop();
    server = await startTestServer({ env });
    expect(server.output()).toMatch(/queued again/);
    designer = await signInAs(server.baseUrl, 'designer');
    const done = await waitFor(designer, id, ['done', 'failed', 'cancelled'], 240_000);
    expect(done.status).toBe('done');
    expect(done.attempts).toBe(2);
  }, 600_000); // starts two servers inside the test (each may build the app first)
});
