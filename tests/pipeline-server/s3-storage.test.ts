/**
 * The whole flow with layouts and results on S3 (a fake S3 server, s3rver, in its own process): upload → analysis
 * → results, maps, preview, per-opening columns (features.bin) and polygons, with the server's data folder holding
 * nothing but its database. The stored objects are compared byte for byte with what the API serves. The local read
 * cache is emptied between reads, so the reads that fetch from S3 (asynchronously, and synchronously for the
 * findings list) are exercised, not only the copy kept when the job finished.
 * Expected figures: open area = Σ width × 400 µm over a 1 mm × 1 mm die (exact rectangle areas; common practice,
 * no source) — the same check as flow.test.ts.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { GetObjectCommand, S3Client } from '@aws-sdk/client-s3';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeGrid } from '@/lib/pipeline/grid-file';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { decodeFeatures } from '@/lib/viewer/feature-wire';
import { decodePolygons } from '@/lib/viewer/polygon-wire';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { json, PROJECT, signInAs, startAnalysis, TEST_MODEL, TRENCH_SETTINGS, TRENCH_WIDTHS_UM, trenchLayoutGds, upload, uploadRevision, waitFor } from './support';

/** Every file under `dir`, relative, sorted. */
function filesUnder(dir: string): string[] {
  if (!existsSync(dir)) return [];
  const out: string[] = [];
  for (const e of readdirSync(dir, { recursive: true }) as string[]) if (statSync(path.join(dir, e)).isFile()) out.push(e);
  return out.sort();
}

describe('layouts and results on S3 (fake server)', () => {
  let s3: TestS3;
  let server: TestServer;
  let client: S3Client;
  let designer: TestClient;
  const cacheDir = mkdtempSync(path.join(tmpdir(), 'trenchant-it-cache-'));
  let revisionId = '';
  let analysisId = '';
  const layout = trenchLayoutGds();

  const object = async (key: string) => {
    const res = await client.send(new GetObjectCommand({ Bucket: s3.bucket, Key: key }));
    return Buffer.from(await res.Body!.transformToByteArray());
  };
  const emptyCache = () => {
    rmSync(cacheDir, { recursive: true, force: true });
    expect(filesUnder(cacheDir)).toEqual([]);
  };

  beforeAll(async () => {
    s3 = await startTestS3();
    client = new S3Client(s3ConfigFromEnv(s3.env)!.client);
    server = await startTestServer({ env: { ...s3.env, TRENCHANT_CACHE_DIR: cacheDir, TRENCHANT_JOB_CONCURRENCY: '2' } });
    designer = await signInAs(server.baseUrl, 'designer');
  });
  afterAll(async () => {
    client?.destroy();
    await server?.stop();
    await s3?.stop();
    rmSync(cacheDir, { recursive: true, force: true });
  });

  it('says at start-up where files go, and seeds the demo layout into the bucket', async () => {
    expect(server.output()).toContain(`stored in s3://${s3.bucket}/`);
    const keys = await s3.keys('layouts/');
    expect(keys.some((k) => k.startsWith(`layouts/${PROJECT}/`) && k.endsWith('.gds'))).toBe(true);
  });

  it('stores an upload in the bucket under its revision key, byte for byte', async () => {
    revisionId = (await uploadRevision(designer, layout, 'S3 trenches')).id;
    const key = `layouts/${PROJECT}/${revisionId}.gds`;
    expect(await s3.keys('layouts/')).toContain(key);
    expect(createHash('sha256').update(await object(key)).digest('hex')).toBe(createHash('sha256').update(layout).digest('hex'));
  });

  it('a refused upload leaves nothing in the bucket', async () => {
    const before = await s3.keys();
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, 'not a layout at all', 'junk.gds', { name: 'junk' });
    expect(res.status).toBe(422);
    expect(await s3.keys()).toEqual(before);
  });

  it('runs an analysis whose result files land in the bucket', async () => {
    analysisId = await startAnalysis(designer, { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL });
    const state = await waitFor(designer, analysisId, ['done', 'failed', 'cancelled']);
    expect(state.errorMessage).toBeNull();
    expect(state.status).toBe('done');
    const keys = await s3.keys(`analyses/${analysisId}/`);
    expect(keys).toEqual(expect.arrayContaining([`analyses/${analysisId}/features.trfeat`, `analyses/${analysisId}/risk.trgrid`, `analyses/${analysisId}/window-density-100um-50um.trgrid`]));
    expect(keys.every((k) => !k.includes('.tmp-'))).toBe(true);
    // The demo analysis seeded at start-up may still be running; its files go into the cache as it completes, so
    // the cache checks below wait for it.
    const sqlite = new Database(server.dbFile, { readonly: true });
    try {
      const deadline = Date.now() + 120_000;
      while ((sqlite.prepare("SELECT count(*) AS n FROM analyses WHERE status IN ('queued', 'running')").get() as { n: number }).n > 0 && Date.now() < deadline) {
        await new Promise((r) => setTimeout(r, 200));
      }
    } finally {
      sqlite.close();
    }
  });

  it('serves results from S3 with figures that follow from the geometry', async () => {
    emptyCache();
    const r = await json<{ summary: { globalDensity: number }; features: { total: number; items: { widthUm: number }[] } }>(await designer.get(`/api/v1/analyses/${analysisId}/results`));
    const open = TRENCH_WIDTHS_UM.reduce((s, w) => s + w * 400, 0);
    expect(r.summary.globalDensity).toBeCloseTo(open / 1e6, 6);
    expect(r.features.total).toBe(3);
    expect(r.features.items.map((f) => f.widthUm).sort((a, b) => a - b)).toEqual(TRENCH_WIDTHS_UM.map((w) => expect.closeTo(w, 6)));
    // The cached copy is the stored object.
    const cached = filesUnder(cacheDir);
    expect(cached).toEqual([path.join('analyses', analysisId, 'features.trfeat')]);
  });

  it('serves maps and the preview from the stored objects', async () => {
    const res = await designer.get(`/api/v1/analyses/${analysisId}/maps/risk`);
    expect(res.status).toBe(200);
    const served = Buffer.from(await res.arrayBuffer());
    expect(served.equals(await object(`analyses/${analysisId}/risk.trgrid`))).toBe(true);
    expect(decodeGrid(new Uint8Array(served)).kind).toBe('risk');
    const png = await designer.get(`/api/v1/analyses/${analysisId}/preview.png?map=predicted-depth&size=128`);
    expect(png.status).toBe(200);
    const bytes = new Uint8Array(await png.arrayBuffer());
    expect([...bytes.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature (ISO/IEC 15948)
  });

  it('serves the per-opening columns and the findings (cold cache: fetched from S3)', async () => {
    emptyCache();
    const res = await designer.get(`/api/v1/analyses/${analysisId}/features.bin`);
    expect(res.status).toBe(200);
    const cols = decodeFeatures(new Uint8Array(await res.arrayBuffer()));
    expect(cols.count).toBe(3);
    expect([...cols.widthUm].sort((a, b) => a - b)).toEqual(TRENCH_WIDTHS_UM.map((w) => expect.closeTo(w, 6)));
    // The findings list reads widths synchronously (lib/jobs/feature-columns.ts): with the cache emptied again it
    // takes the blocking fetch.
    emptyCache();
    const findings = await designer.get(`/api/v1/analyses/${analysisId}/findings`);
    expect(findings.status, server.output().slice(-3000)).toBe(200);
    expect(filesUnder(cacheDir)).toEqual([path.join('analyses', analysisId, 'features.trfeat')]);
  });

  it('serves polygons of the layout from a local copy of the stored revision', async () => {
    emptyCache();
    const info = await json<{ polygonCount: number; dieBboxUm: [number, number, number, number] }>(await designer.get(`/api/v1/analyses/${analysisId}/viewer`));
    const b = info.dieBboxUm;
    const res = await designer.get(`/api/v1/analyses/${analysisId}/polygons?box=${b[0] - 1},${b[1] - 1},${b[2] + 1},${b[3] + 1}`);
    expect(res.status).toBe(200);
    const all = decodePolygons(new Uint8Array(await res.arrayBuffer()));
    expect(all.total).toBe(info.polygonCount);
    expect(all.total).toBe(4); // die outline + three trenches
    // The layout copy for the polygon index (result files read by the viewer, or of analyses finishing meanwhile,
    // are cached beside it).
    expect(filesUnder(cacheDir)).toContain(path.join('layouts', PROJECT, `${revisionId}.gds`));
  });

  it('keeps no layout or result file in the data folder', async () => {
    const files = filesUnder(server.dataDir);
    expect(files.filter((f) => !/^trenchant\.db(-wal|-shm|-journal)?$/.test(f))).toEqual([]);
  });
});
