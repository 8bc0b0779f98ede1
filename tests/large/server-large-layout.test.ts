/**
 * Layouts above the whole-read size through the running app (TRENCHANT_WHOLE_READ_MB set low): the upload is
 * checked from the on-disk index and described as the whole-file check describes it; the analysis runs tiled (on two
 * tile threads from the compiled tile-thread.mjs) and stores the same summary, flags, per-opening column file and map
 * files, byte for byte, as the untiled run of the same layout (run here in the test process with the whole-read size
 * high — the reference); a broken file gets the whole read's message with its byte offset; the viewer's polygons
 * come one window at a time and equal the whole-layout index's; the preview draws from the stored map.
 */
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readLayoutFile } from '@/lib/layout/read';
import { checkLayoutFile } from '@/lib/uploads/check-layout';
import { buildPolygonIndex, queryPolygons } from '@/lib/viewer/polygon-index';
import { decodePolygons } from '@/lib/viewer/polygon-wire';
import type { TestClient } from '../support/http';
import type { TestServer } from '../support/server';
import { flatDie } from '../layout/tile-fixtures';
import { json, leftovers, PROJECT, startAnalysis, upload, waitFor, type ErrorBody } from '../pipeline-server/support';
import { expectSameSummary, LARGE_MODEL, LARGE_SETTINGS, largeLayoutFile, polygonTexts, startLargeLayoutServer, untiledReference } from './support';

const bytes = flatDie(30_000, 5);
const { dir, file, remove } = largeLayoutFile('trenchant-large-it-', 'kestrel-large.gds', bytes);

describe('layouts above the whole-read size in the app', () => {
  let server: TestServer;
  let designer: TestClient;
  let revisionId = '';
  let analysisId = '';

  beforeAll(async () => {
    expect(bytes.length).toBeGreaterThan(1024 * 1024);
    ({ server, designer } = await startLargeLayoutServer({ TRENCHANT_TILE_THREADS: '2' }));
  }, 600_000);
  afterAll(async () => {
    await server?.stop();
    remove();
  });

  it('checks the upload from the index and describes it as the whole-file check does', async () => {
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, bytes, 'kestrel-large.gds', { name: 'Kestrel-3 full die' });
    expect(res.status).toBe(201);
    const { revision } = await json<{ revision: Record<string, unknown> & { id: string } }>(res);
    revisionId = revision.id;
    const whole = await checkLayoutFile(file, { maxPolygons: 1e9, maxPoints: 1e10 });
    if (!whole.ok) throw new Error(whole.message);
    expect(revision.readsThroughIndex).toBe(true);
    expect(revision.layers).toEqual(whole.layers);
    expect(revision.polygonCount).toBe(whole.polygonCount);
    expect(revision.topCell).toBe(whole.topCell);
    expect(revision.libraryName).toBe(whole.libraryName);
    expect(revision.bboxUm).toEqual(whole.bboxDbu!.map((v) => v * whole.dbuUm));
    expect(revision.readWarnings).toEqual(whole.warnings);
  });

  it('gives a broken file above the size the whole read\'s message and byte offset, and stores nothing', async () => {
    const broken = bytes.slice(0, bytes.length - 1001);
    const brokenFile = path.join(dir, 'broken.gds');
    writeFileSync(brokenFile, broken);
    const whole = await checkLayoutFile(brokenFile, { maxPolygons: 1e9, maxPoints: 1e10 });
    expect(whole.ok).toBe(false);
    const before = leftovers(server.dbFile);
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, broken, 'broken.gds', { name: 'broken large' });
    expect(res.status).toBe(422);
    const body = await json<ErrorBody>(res);
    expect(body.error.message).toBe(`broken.gds: ${!whole.ok ? whole.message : ''}.`);
    expect(body.error.message).toMatch(/byte \d+/);
    expect(leftovers(server.dbFile)).toEqual(before);
  });

  it('analyses it in tiles with the same stored results as the untiled run', async () => {
    analysisId = await startAnalysis(designer, { revisionId, settings: LARGE_SETTINGS, model: LARGE_MODEL });
    const done = await waitFor(designer, analysisId, ['done', 'failed', 'cancelled'], 300_000);
    expect(done.errorMessage).toBeNull();
    expect(done.status).toBe('done');
    const results = await json<{ summary: Record<string, unknown> & { tiled?: { tiles: number; threads: number; tileUm: number }; timingsMs: unknown }; features: { total: number } }>(
      await designer.get(`/api/v1/analyses/${analysisId}/results?limit=5`),
    );
    expect(results.summary.tiled?.tiles).toBeGreaterThan(4);
    expect(results.summary.tiled?.threads).toBe(2);

    // The reference: the same stored settings and model, read whole, in this process.
    const outDir = path.join(dir, 'whole-out');
    const ref = await untiledReference(server, analysisId, file, outDir);
    expectSameSummary(results.summary, ref.summary);
    expect(results.features.total).toBe(ref.featureFile.count);
    const stored = path.join(server.dataDir, 'analyses', analysisId);
    const files = readdirSync(outDir).sort();
    expect(readdirSync(stored).sort()).toEqual(files);
    for (const f of files) expect(readFileSync(path.join(stored, f)).equals(readFileSync(path.join(outDir, f))), f).toBe(true);
    const flags = await json<{ total: number; items: { kind: string; message: string }[] }>(await designer.get(`/api/v1/analyses/${analysisId}/flags?limit=5000`));
    expect(flags.total).toBe(ref.flags.length);
    expect(ref.flags.length).toBeGreaterThan(0);
    if (ref.flags.length <= 5000) expect(flags.items.map((f) => `${f.kind}|${f.message}`).sort()).toEqual(ref.flags.map((f) => `${f.kind}|${f.message}`).sort());
  }, 400_000);

  it('serves the viewer one window at a time, equal to the whole-layout index, and a crowded view as a count', async () => {
    const ix = buildPolygonIndex(await readLayoutFile(file));
    for (const box of [[100, 100, 160, 140], [0, 395, 1000, 405], [480, 300, 530, 350]] as [number, number, number, number][]) {
      const res = await designer.get(`/api/v1/analyses/${analysisId}/polygons?box=${box.join(',')}&max=50000`);
      expect(res.status).toBe(200);
      const got = decodePolygons(new Uint8Array(await res.arrayBuffer()));
      const want = queryPolygons(ix, box, 50_000);
      expect(got.total).toBe(want.total);
      expect(polygonTexts(got)).toEqual(polygonTexts(want));
    }
    const crowded = decodePolygons(new Uint8Array(await (await designer.get(`/api/v1/analyses/${analysisId}/polygons?box=-10,-10,1010,810&max=1000`)).arrayBuffer()));
    expect(crowded.polyLayer.length).toBe(0);
    expect(crowded.total).toBeGreaterThan(1000);
    const png = await designer.get(`/api/v1/analyses/${analysisId}/preview.png`);
    expect(png.status).toBe(200);
    expect(png.headers.get('content-type')).toBe('image/png');
  });
});
