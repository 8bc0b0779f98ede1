/**
 * An installation moved to S3 serves the same analyses: a server on the data folder runs an analysis of an invented
 * layout (three trenches), `npm run storage:migrate` copies its data folder into the fake S3 bucket (s3rver), and a
 * second server on the same database with TRENCHANT_S3_* set and an empty data folder answers the results, the risk
 * map, the preview, the per-opening columns and the findings byte for byte as the first did — for that analysis
 * and for the demo analysis seeded at start-up.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import type { TestClient } from '../support/http';
import { PROJECT_ROOT, startTestServer, type TestServer } from '../support/server';
import { signInAs, startAnalysis, TEST_MODEL, TRENCH_SETTINGS, trenchLayoutGds, uploadRevision, waitFor } from '../pipeline-server/support';

describe('moving an installation to S3 with storage:migrate', () => {
  let s3: TestS3;
  let local: TestServer;
  let onS3: TestServer | undefined;
  let analysisIds: string[] = [];
  const scratch = mkdtempSync(path.join(tmpdir(), 'trenchant-migrate-it-'));

  beforeAll(async () => {
    s3 = await startTestS3();
    local = await startTestServer();
    const designer = await signInAs(local.baseUrl, 'designer');
    const revisionId = (await uploadRevision(designer, trenchLayoutGds(), 'Kestrel-3 trenches')).id;
    const id = await startAnalysis(designer, { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL });
    expect((await waitFor(designer, id, ['done', 'failed', 'cancelled'])).status).toBe('done');
    const sqlite = new Database(local.dbFile, { readonly: true });
    analysisIds = (sqlite.prepare("SELECT id FROM analyses WHERE status = 'done' ORDER BY created_at").all() as { id: string }[]).map((r) => r.id);
    sqlite.close();
    expect(analysisIds).toContain(id);
    expect(analysisIds.length).toBeGreaterThanOrEqual(2); // with the seeded demo analysis
  }, 600_000);

  afterAll(async () => {
    await onS3?.stop();
    await local?.stop(); // removes the data folder and database
    await s3?.stop();
    rmSync(scratch, { recursive: true, force: true });
  });

  async function snapshot(client: TestClient, id: string): Promise<Record<string, string>> {
    const out: Record<string, string> = {};
    for (const p of ['results', 'maps/risk', 'preview.png?map=risk&size=128', 'features.bin', 'findings']) {
      const res = await client.get(`/api/v1/analyses/${id}/${p}`);
      expect(res.status, `${p} of ${id}`).toBe(200);
      out[p] = Buffer.from(await res.arrayBuffer()).toString('base64');
    }
    return out;
  }

  it('copies the data folder, and the server on S3 answers as the one on the folder did', async () => {
    const designer = await signInAs(local.baseUrl, 'designer');
    const before: Record<string, Record<string, string>> = {};
    for (const id of analysisIds) before[id] = await snapshot(designer, id);

    const run = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/migrate-storage.ts', '--data-dir', local.dataDir, '--db', local.dbFile, '--quiet'], {
      cwd: PROJECT_ROOT,
      env: { ...process.env, ...s3.env },
      encoding: 'utf8',
      timeout: 120_000,
    });
    expect(run.status, run.stderr + run.stdout).toBe(0);
    expect(run.stdout).toMatch(/0 failed/);
    expect(run.stdout).toMatch(/the database refers to \d+ stored files; all were in the data folder/);

    onS3 = await startTestServer({ env: { ...s3.env, TRENCHANT_DB: local.dbFile, TRENCHANT_DATA_DIR: path.join(scratch, 'empty'), TRENCHANT_CACHE_DIR: path.join(scratch, 'cache') } });
    expect(onS3.output()).toContain(`stored in s3://${s3.bucket}/`);
    const onS3Designer = await signInAs(onS3.baseUrl, 'designer');
    for (const id of analysisIds) expect(await snapshot(onS3Designer, id), id).toEqual(before[id]);
  }, 600_000);
});
