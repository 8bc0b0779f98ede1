/**
 * A job whose worker thread dies or throws is marked failed with its message; the server keeps answering and the
 * next job runs. The worker is swapped for a test double (fixtures/crashing-worker.mjs) through
 * TRENCHANT_WORKER_FILE; unmarked jobs go to the real compiled worker.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { signInAs, startAnalysis, TEST_MODEL, trenchLayoutGds, uploadRevision, waitFor } from './support';

const here = path.dirname(fileURLToPath(import.meta.url));

describe('a crashing job', () => {
  let server: TestServer;
  let designer: TestClient;
  let revisionId = '';
  const settings = (windowUm: number) => ({ etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm, stepUm: windowUm / 2 }] });

  beforeAll(async () => {
    server = await startTestServer({ env: { TRENCHANT_WORKER_FILE: path.join(here, 'fixtures', 'crashing-worker.mjs'), TRENCHANT_JOB_CONCURRENCY: '1' } });
    designer = await signInAs(server.baseUrl, 'designer');
    revisionId = (await uploadRevision(designer, trenchLayoutGds(), 'crash test')).id;
  });
  afterAll(() => server?.stop());

  it('a worker thread that exits marks the job failed; the next job still runs', async () => {
    const crashed = await startAnalysis(designer, { revisionId, settings: settings(111), model: TEST_MODEL });
    const s = await waitFor(designer, crashed, ['done', 'failed', 'cancelled']);
    expect(s.status).toBe('failed');
    expect(s.errorCode).toBe('worker-crash');
    expect(s.errorMessage).toMatch(/exit/i);
    const ok = await startAnalysis(designer, { revisionId, settings: settings(100), model: TEST_MODEL });
    expect((await waitFor(designer, ok, ['done', 'failed'])).status).toBe('done');
  });

  it('an unexpected exception in the job marks it failed with its message', async () => {
    const bug = await startAnalysis(designer, { revisionId, settings: settings(222), model: TEST_MODEL });
    const s = await waitFor(designer, bug, ['done', 'failed', 'cancelled']);
    expect(s.status).toBe('failed');
    expect(s.errorMessage).toContain('simulated bug');
    expect((await designer.get('/api/v1/me')).status).toBe(200);
    expect(server.output()).not.toMatch(/unhandledRejection|uncaughtException/);
  });

  it('an analysis the pipeline refuses (grid too large) fails with the pipeline message', async () => {
    const id = await startAnalysis(designer, { revisionId, settings: { ...settings(100), pixel: { sizeUm: 0.01, maxPixels: 1000 } }, model: TEST_MODEL });
    const s = await waitFor(designer, id, ['done', 'failed', 'cancelled']);
    expect(s.status).toBe('failed');
    expect(s.errorCode).toBe('bad-input');
    expect(s.errorMessage?.length).toBeGreaterThan(10);
  });
});

