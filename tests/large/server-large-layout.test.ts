/**
 * Layouts above the whole-read size through the running app (TRENCHANT_WHOLE_READ_MB set low): the upload is
 * checked from the on-disk index and described as the whole-file check describes it; the analysis runs tiled (on two
 * tile threads from the compiled tile-thread.mjs) and stores the same summary, flags, per-opening column file and map
 * files, byte for byte, as the untiled run of the same layout (run here in the test process with the whole-read size
 * high — the reference); a broken file gets the whole read's message with its byte offset; the viewer's polygons
 * come one window at a time and equal the whole-layout index's; the preview draws from the stored map.
 */
import Database from 'better-sqlite3';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readLayoutFile } from '@/lib/layout/read';
import analyse from '@/lib/pipeline/worker';
import { checkLayoutFile } from '@/lib/uploads/check-layout';
import { buildPolygonIndex, queryPolygons } from '@/lib/viewer/polygon-index';
import { decodePolygons, type WirePolygons } from '@/lib/viewer/polygon-wire';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { flatDie } from '../layout/tile-fixtures';
import { json, leftovers, PROJECT, signInAs, startAnalysis, upload, waitFor, type ErrorBody } from '../pipeline-server/support';

const MEMORY_MB = '24';
const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-large-it-'));
const file = path.join(dir, 'kestrel-large.gds');
const bytes = flatDie(30_000, 5);
writeFileSync(file, bytes);
const model = JSON.parse(readFileSync('samples/models/deep-trench-continuous.json', 'utf8')) as Record<string, unknown>;

function sorted(w: WirePolygons): string[] {
  const out: string[] = [];
  for (let r = 0; r < w.polyLayer.length; r++) {
    const l = w.layers[w.polyLayer[r] as number]!;
    const pts: string[] = [];
    for (let k = w.offsets[r] as number; k < (w.offsets[r + 1] as number); k++) pts.push(`${w.coords[2 * k]},${w.coords[2 * k + 1]}`);
    out.push(`${l.layer}/${l.datatype}:${pts.join(';')}`);
  }
  return out.sort();
}

describe('layouts above the whole-read size in the app', () => {
  let server: TestServer;
  let designer: TestClient;
  let revisionId = '';
  let analysisId = '';
  const savedMem = process.env.TRENCHANT_ANALYSIS_MEMORY_MB;

  beforeAll(async () => {
    expect(bytes.length).toBeGreaterThan(1024 * 1024);
    server = await startTestServer({ env: { TRENCHANT_WHOLE_READ_MB: '0.5', TRENCHANT_ANALYSIS_MEMORY_MB: MEMORY_MB, TRENCHANT_TILE_THREADS: '2' } });
    designer = await signInAs(server.baseUrl, 'designer');
  }, 600_000);
  afterAll(async () => {
    if (savedMem === undefined) delete process.env.TRENCHANT_ANALYSIS_MEMORY_MB;
    else process.env.TRENCHANT_ANALYSIS_MEMORY_MB = savedMem;
    await server?.stop();
    rmSync(dir, { recursive: true, force: true });
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
    analysisId = await startAnalysis(designer, { revisionId, settings: { etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 2 } }, model });
    const done = await waitFor(designer, analysisId, ['done', 'failed', 'cancelled'], 300_000);
    expect(done.errorMessage).toBeNull();
    expect(done.status).toBe('done');
    const results = await json<{ summary: Record<string, unknown> & { tiled?: { tiles: number; threads: number; tileUm: number }; timingsMs: unknown }; features: { total: number } }>(
      await designer.get(`/api/v1/analyses/${analysisId}/results?limit=5`),
    );
    expect(results.summary.tiled?.tiles).toBeGreaterThan(4);
    expect(results.summary.tiled?.threads).toBe(2);

    // The reference: the same stored settings and model, read whole, in this process.
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
      expect(sorted(got)).toEqual(sorted(want));
    }
    const crowded = decodePolygons(new Uint8Array(await (await designer.get(`/api/v1/analyses/${analysisId}/polygons?box=-10,-10,1010,810&max=1000`)).arrayBuffer()));
    expect(crowded.polyLayer.length).toBe(0);
    expect(crowded.total).toBeGreaterThan(1000);
    const png = await designer.get(`/api/v1/analyses/${analysisId}/preview.png`);
    expect(png.status).toBe(200);
    expect(png.headers.get('content-type')).toBe('image/png');
  });
});
