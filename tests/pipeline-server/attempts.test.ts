/**
 * A job requeued after the server stopped while it ran is started again at most TRENCHANT_JOB_MAX_ATTEMPTS times
 * in all; past that it is marked failed with a message saying why (so a job that takes the process down cannot
 * crash every restart). Here the limit is 1: the job's second pick-up fails it.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../support/server';
import { analysisState, signInAs, slowLayoutGds, startAnalysis, TEST_MODEL, uploadRevision, waitFor } from './support';

describe('attempt cap for requeued jobs', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-attempts-'));
  const env = { TRENCHANT_DB: path.join(dir, 'trenchant.db'), TRENCHANT_JOB_CONCURRENCY: '1', TRENCHANT_JOB_MAX_ATTEMPTS: '1', TRENCHANT_DEMO: '0' };
  let server: TestServer | undefined;
  afterAll(async () => {
    await server?.stop();
    rmSync(dir, { recursive: true, force: true });
  });

  it('marks an interrupted job failed instead of running it a second time', async () => {
    server = await startTestServer({ env: { ...env, TRENCHANT_DEMO: '1' } });
    let designer = await signInAs(server.baseUrl, 'designer');
    const revisionId = (await uploadRevision(designer, slowLayoutGds(), 'attempt holes')).id;
    // The demo job may hold the only slot; wait until ours runs.
    const id = await startAnalysis(designer, { revisionId, settings: { etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }] }, model: TEST_MODEL });
    const deadline = Date.now() + 180_000;
    for (;;) {
      const s = await analysisState(designer, id);
      if (s.status === 'running' && s.progress > 0.05) break;
      if (s.status !== 'queued' && s.status !== 'running') throw new Error(`job ended early: ${JSON.stringify(s)}`);
      if (Date.now() > deadline) throw new Error('job never started');
      await new Promise((r) => setTimeout(r, 100));
    }
    await server.stop();
    server = await startTestServer({ env });
    designer = await signInAs(server.baseUrl, 'designer');
    const s = await waitFor(designer, id, ['done', 'failed', 'cancelled'], 120_000);
    expect(s).toMatchObject({ status: 'failed', errorCode: 'too-many-attempts', attempts: 2 });
    expect(s.errorMessage).toContain('was interrupted once');
    expect(s.errorMessage).toContain('limit: 1 attempts');
  }, 600_000);
});
