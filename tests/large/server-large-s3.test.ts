/**
 * A layout above the whole-read size with layouts and results on S3 (fake server, s3rver): the upload check, the
 * tiled analysis and the viewer's windows each work from a local copy (the worker's job copy, the read cache), and
 * the stored results are byte for byte those of the untiled run of the same layout (run in this process with the
 * whole-read size high: the reference).
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { GetObjectCommand, S3Client } from '@aws-sdk/client-s3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readLayoutFile } from '@/lib/layout/read';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { buildPolygonIndex, queryPolygons } from '@/lib/viewer/polygon-index';
import { decodePolygons } from '@/lib/viewer/polygon-wire';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import type { TestClient } from '../support/http';
import type { TestServer } from '../support/server';
import { flatDie } from '../layout/tile-fixtures';
import { json, PROJECT, startAnalysis, upload, waitFor } from '../pipeline-server/support';
import { expectSameSummary, LARGE_MODEL, LARGE_SETTINGS, largeLayoutFile, startLargeLayoutServer, untiledReference } from './support';

const bytes = flatDie(25_000, 8);
const { dir, file, remove } = largeLayoutFile('trenchant-large-s3-', 'viaduct-large.gds', bytes);

describe('a layout above the whole-read size on S3', () => {
  let s3: TestS3;
  let server: TestServer;
  let client: S3Client;
  let designer: TestClient;

  beforeAll(async () => {
    s3 = await startTestS3();
    client = new S3Client(s3ConfigFromEnv(s3.env)!.client);
    ({ server, designer } = await startLargeLayoutServer({ ...s3.env, TRENCHANT_CACHE_DIR: path.join(dir, 'cache'), TRENCHANT_TILE_THREADS: '1' }));
  }, 600_000);
  afterAll(async () => {
    client?.destroy();
    await server?.stop();
    await s3?.stop();
    remove();
  });

  it('uploads, analyses in tiles and draws windows with the same results as the untiled run', async () => {
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, bytes, 'viaduct-large.gds', { name: 'Viaduct TSV full die' });
    expect(res.status).toBe(201);
    const { revision } = await json<{ revision: { id: string; readsThroughIndex: boolean; polygonCount: number } }>(res);
    expect(revision.readsThroughIndex).toBe(true);
    const analysisId = await startAnalysis(designer, { revisionId: revision.id, settings: LARGE_SETTINGS, model: LARGE_MODEL });
    const done = await waitFor(designer, analysisId, ['done', 'failed', 'cancelled'], 300_000);
    expect(done.errorMessage).toBeNull();
    const results = await json<{ summary: Record<string, unknown> & { tiled?: { tiles: number; threads: number } } }>(await designer.get(`/api/v1/analyses/${analysisId}/results?limit=1`));
    expect(results.summary.tiled?.tiles).toBeGreaterThan(4);
    expect(results.summary.tiled?.threads).toBe(1);

    const outDir = path.join(dir, 'whole-out');
    const ref = await untiledReference(server, analysisId, file, outDir);
    expectSameSummary(results.summary, ref.summary);
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
