/**
 * A layout above the whole-read size with layouts and results on S3 (fake server, s3rver): the upload check, the
 * tiled analysis and the viewer's windows each work from a local copy (the worker's job copy, the read cache), and
 * the stored results are byte for byte those of the untiled run of the same layout (run in this process with the
 * whole-read size high: the reference).
 */
import Database from 'better-sqlite3';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { GetObjectCommand, S3Client } from '@aws-sdk/client-s3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readLayoutFile } from '@/lib/layout/read';
import analyse from '@/lib/pipeline/worker';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { buildPolygonIndex, queryPolygons } from '@/lib/viewer/polygon-index';
import { decodePolygons } from '@/lib/viewer/polygon-wire';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { flatDie } from '../layout/tile-fixtures';
import { json, PROJECT, signInAs, startAnalysis, upload, waitFor } from '../pipeline-server/support';

const MEMORY_MB = '24';
const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-large-s3-'));
const file = path.join(dir, 'viaduct-large.gds');
const bytes = flatDie(25_000, 8);
writeFileSync(file, bytes);
const model = JSON.parse(readFileSync('samples/models/deep-trench-continuous.json', 'utf8')) as Record<string, unknown>;

describe('a layout above the whole-read size on S3', () => {
  let s3: TestS3;
  let server: TestServer;
  let client: S3Client;
  let designer: TestClient;
  const savedMem = process.env.TRENCHANT_ANALYSIS_MEMORY_MB;

  beforeAll(async () => {
    s3 = await startTestS3();
    client = new S3Client(s3ConfigFromEnv(s3.env)!.client);
    server = await startTestServer({ env: { ...s3.env, TRENCHANT_CACHE_DIR: path.join(dir, 'cache'), TRENCHANT_WHOLE_READ_MB: '0.5', TRENCHANT_ANALYSIS_MEMORY_MB: MEMORY_MB, TRENCHANT_TILE_THREADS: '1' } });
    designer = await signInAs(server.baseUrl, 'designer');
  }, 600_000);
  afterAll(async () => {
    if (savedMem === undefined) delete process.env.TRENCHANT_ANALYSIS_MEMORY_MB;
    else process.env.TRENCHANT_ANALYSIS_MEMORY_MB = savedMem;
    client?.destroy();
    await server?.stop();
    await s3?.stop();
    rmSync(dir, { recursive: true, force: true });
  });

  it('uploads, analyses in tiles and draws windows with the same results as the untiled run', async () => {
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, bytes, 'viaduct-large.gds', { name: 'Viaduct TSV full die' });
    expect(res.status).toBe(201);
    const { revision } = await json<{ revision: { id: string; readsThroughIndex: boolean; polygonCount: number } }>(res);
    expect(revision.readsThroughIndex).toBe(true);
    const analysisId = await startAnalysis(designer, { revisionId: revision.id, settings: { etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 2 } }, model });
    const done = await waitFor(designer, analysisId, ['done', 'failed', 'cancelled'], 300_000);
    expect(done.errorMessage).toBeNull();
    const results = await json<{ summary: Record<string, unknown> & { tiled?: { tiles: number; threads: number } } }>(await designer.get(`/api/v1/analyses/${analysisId}/results?limit=1`));
    expect(results.summary.tiled?.tiles).toBeGreaterThan(4);
    expect(results.summary.tiled?.threads).toBe(1);

    const db = new Database(server.dbFile, { readonly: true });
    const row = db.prepare('SELECT settings, model FROM analyses WHERE id = ?').get(analysisId) as { settings: string; model: string };
    db.close();
    process.env.TRENCHANT_ANALYSIS_MEMORY_MB = MEMORY_MB;
    const outDir = path.join(dir, 'whole-out');
    const ref = await analyse({ layoutPath: file, settings: JSON.parse(row.settings), model: JSON.parse(row.model), outDir, wholeReadBytes: 1e12 });
    if (!ref.ok) throw new Error(ref.message);
    const { timingsMs: _a, tiled: _b, ...got } = results.summary;
    const { timingsMs: _c, ...want } = ref.summary;
    expect(got).toEqual(JSON.parse(JSON.stringify(want)));
    for (const f of readdirSync(outDir)) {
      const obj = await client.send(new GetObjectCommand({ Bucket: s3.bucket, Key: `analyses/${analysisId}/${f}` }));
      expect(Buffer.from(await obj.Body!.transformToByteArray()).equals(readFileSync(path.join(outDir, f))), f).toBe(true);
    }

    const ix = buildPolygonIndex(await readLayoutFile(file));
    const box: [number, number, number, number] = [200, 200, 300, 260];
    const got2 = decodePolygons(new Uint8Array(await (await designer.get(`/api/v1/analyses/${analysisId}/polygons?box=${box.join(',')}&max=50000`)).arrayBuffer()));
    const want2 = queryPolygons(ix, box, 50_000);
    expect(got2.total).toBe(want2.total);
    expect(got2.total).toBeGreaterThan(10);
  }, 400_000);
});
