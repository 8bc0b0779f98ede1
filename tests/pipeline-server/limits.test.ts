/**
 * Resource limits over HTTP: upload bombs refused by the upload worker pool with a 422 naming the limit and the
 * count; team limits set by an admin (not by others) and applied to the next upload; per-analysis write cap and
 * team quota of stored results applied to analyses. Counts are arithmetic on the invented layouts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TEAM } from '@/lib/data/demo';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { arefBombGds, squaresCsv } from '../jobs/bombs';
import { json, leftovers, PROJECT, signInAs, slowLayoutGds, startAnalysis, TEST_MODEL, trenchLayoutGds, upload, uploadRevision, waitFor, type ErrorBody } from './support';

const LIMITS_URL = `/api/v1/teams/${DEMO_TEAM.id}/limits`;
const MiB = 1024 * 1024;
const DEFAULTS = { maxPolygons: 10_000_000, maxPoints: 50_000_000, maxAnalysisBytes: 2048 * MiB, maxStoredBytes: 20480 * MiB };

describe('resource limits', () => {
  let server: TestServer;
  let designer: TestClient;
  let admin: TestClient;

  beforeAll(async () => {
    server = await startTestServer({ env: { TRENCHANT_JOB_CONCURRENCY: '1', TRENCHANT_DEMO: '1' } });
    designer = await signInAs(server.baseUrl, 'designer');
    admin = await signInAs(server.baseUrl, 'admin');
  });
  afterAll(() => server?.stop());

  it('refuses a 4999 × 4999 AREF bomb with 422 naming the polygon limit and the count; nothing is kept', async () => {
    const before = leftovers(server.dbFile);
    const t0 = Date.now();
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, arefBombGds(), 'bomb.gds', { name: 'bomb' });
    const ms = Date.now() - t0;
    expect(res.status).toBe(422);
    const { error } = await json<ErrorBody>(res);
    expect(error.message).toMatch(/^bomb\.gds: the layout \(top cell "TOP"\) has 24,990,001 flattened polygons, above this team's limit of 10,000,000 flattened polygons/);
    expect(ms).toBeLessThan(30_000); // liveness only; the figure is in bench/jobs.bench.ts
    expect(leftovers(server.dbFile)).toMatchObject({ revisions: before.revisions, layoutFiles: before.layoutFiles, tmpFiles: 0 });
    expect((await designer.get('/api/v1/me')).status).toBe(200);
  });

  it('lets only an admin change the limits, and the next upload is checked against them', async () => {
    const got = await json<{ limits: typeof DEFAULTS; defaults: typeof DEFAULTS }>(await designer.get(LIMITS_URL));
    expect(got.limits).toEqual(DEFAULTS);
    expect(got.defaults).toEqual(DEFAULTS);

    const denied = await designer.request(LIMITS_URL, { method: 'PUT', json: { ...DEFAULTS, maxPolygons: 1000 } });
    expect(denied.status).toBe(403);
    const bad = await admin.request(LIMITS_URL, { method: 'PUT', json: { ...DEFAULTS, maxPolygons: 5 } });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(await bad.json())).toContain('maxPolygons must be at least 1,000');

    const ok = await admin.request(LIMITS_URL, { method: 'PUT', json: { ...DEFAULTS, maxPolygons: 1000, maxPoints: 4000 } });
    expect(ok.status).toBe(200);
    // 60 × 60 holes + the die outline = 3601 polygons.
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, slowLayoutGds(), 'holes.gds', { name: 'holes' });
    expect(res.status).toBe(422);
    expect((await json<ErrorBody>(res)).error.message).toContain("3,601 flattened polygons, above this team's limit of 1,000 flattened polygons");
    // CSV: 1001 squares: polygon 1001 starts on line 2 + 1000 × 4 + 1 = 4003 and is refused there.
    const csv = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, squaresCsv(1001), 'squares.csv', { name: 'squares' });
    expect(csv.status).toBe(422);
    expect((await json<ErrorBody>(csv)).error.message).toContain("(refused at CSV line 4003) has more than 1,000 flattened polygons, above this team's limit of 1,000");
    // 1001 squares fit a polygon limit of 1500 but have 4004 vertices: refused at vertex 4001 (line 4003).
    expect((await admin.request(LIMITS_URL, { method: 'PUT', json: { ...DEFAULTS, maxPolygons: 1500, maxPoints: 4000 } })).status).toBe(200);
    const pts = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, squaresCsv(1001), 'squares.csv', { name: 'squares' });
    expect(pts.status).toBe(422);
    expect((await json<ErrorBody>(pts)).error.message).toContain("(refused at CSV line 4003) has more than 4,000 flattened points (vertices), above this team's limit of 4,000");
    // A small layout still goes through.
    expect((await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, trenchLayoutGds(), 'small.gds', { name: 'small' })).status).toBe(201);
    expect((await admin.request(LIMITS_URL, { method: 'PUT', json: DEFAULTS })).status).toBe(200);
  });

  it('caps what one analysis may write and the team quota of stored results, naming the limit', async () => {
    const revisionId = (await uploadRevision(designer, trenchLayoutGds(), 'budget trenches')).id;
    const settings = (pixelUm: number) => ({ etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }], pixel: { sizeUm: pixelUm } });
    expect((await admin.request(LIMITS_URL, { method: 'PUT', json: { ...DEFAULTS, maxAnalysisBytes: 16 * MiB } })).status).toBe(200);
    // 1 mm die at 0.5 µm: 2000 × 2000 pixels, 16 MB per float32 map, six maps.
    const big = await startAnalysis(designer, { revisionId, settings: settings(0.5), model: TEST_MODEL });
    const s = await waitFor(designer, big, ['done', 'failed', 'cancelled'], 180_000);
    expect(s).toMatchObject({ status: 'failed', errorCode: 'over-budget' });
    expect(s.errorMessage).toContain("above this team's limit of 16 MiB per analysis");

    // Quota smaller than what is stored already (the demo analysis and any other): refused before running.
    const stored = (await json<{ storedBytes: number }>(await designer.get(LIMITS_URL))).storedBytes;
    expect(stored).toBeGreaterThan(0);
    // 2 µm pixel: 500 × 500 pixels, about 1 MB per map: fits 16 MiB.
    const small = await startAnalysis(designer, { revisionId, settings: settings(2), model: TEST_MODEL });
    expect((await waitFor(designer, small, ['done', 'failed', 'cancelled'], 180_000)).status).toBe('done');
    const storedNow = (await json<{ storedBytes: number }>(await designer.get(LIMITS_URL))).storedBytes;
    expect(storedNow).toBeGreaterThan(stored);
    if (storedNow >= 16 * MiB) {
      expect((await admin.request(LIMITS_URL, { method: 'PUT', json: { ...DEFAULTS, maxAnalysisBytes: 16 * MiB, maxStoredBytes: 16 * MiB } })).status).toBe(200);
      const refused = await startAnalysis(designer, { revisionId, settings: settings(2), model: TEST_MODEL });
      const r = await waitFor(designer, refused, ['done', 'failed', 'cancelled'], 180_000);
      expect(r).toMatchObject({ status: 'failed', errorCode: 'over-quota' });
      expect(r.errorMessage).toContain('at its quota of 16 MiB');
    } else {
      // Quota just above what is stored: the next analysis may write only what is left, and says so.
      const quota = Math.max(16 * MiB, storedNow + MiB);
      expect((await admin.request(LIMITS_URL, { method: 'PUT', json: { ...DEFAULTS, maxAnalysisBytes: 16 * MiB, maxStoredBytes: quota } })).status).toBe(200);
      const refused = await startAnalysis(designer, { revisionId, settings: settings(1), model: TEST_MODEL });
      const r = await waitFor(designer, refused, ['done', 'failed', 'cancelled'], 180_000);
      expect(r).toMatchObject({ status: 'failed', errorCode: 'over-budget' });
      expect(r.errorMessage).toMatch(/MiB left of this team's quota of \d+ MiB for stored results/);
    }
    expect((await admin.request(LIMITS_URL, { method: 'PUT', json: DEFAULTS })).status).toBe(200);
  }, 400_000);
});
