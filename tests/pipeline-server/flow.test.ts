/**
 * Upload → analysis → results over HTTP against a started server, for an invented trench layout whose answer is
 * known by plain geometry (rectangle areas), plus the progress stream, maps, preview and the CSV route in.
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeGrid } from '@/lib/pipeline/grid-file';
import { ANALYSIS_STAGES } from '@/lib/pipeline/run-analysis';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { json, PROJECT, readEvents, signInAs, startAnalysis, TEST_MODEL, TRENCH_SETTINGS, TRENCH_WIDTHS_UM, trenchLayoutGds, upload, uploadRevision, waitFor, type ErrorBody } from './support';

describe('pipeline over HTTP: upload → analysis → results', () => {
  let server: TestServer;
  let designer: TestClient;
  let revisionId = '';
  let analysisId = '';
  let events: Awaited<ReturnType<typeof readEvents>> = [];

  beforeAll(async () => {
    server = await startTestServer({ env: { TRENCHANT_JOB_CONCURRENCY: '2' } });
    designer = await signInAs(server.baseUrl, 'designer');
  });
  afterAll(() => server?.stop());

  it('stores an upload as revision 1 with hash, size, format from content and the layer table', async () => {
    const bytes = trenchLayoutGds();
    // A misleading file name: the format must come from the content.
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, bytes, 'trenches.csv', { name: 'Trench test' });
    expect(res.status).toBe(201);
    const { revision } = await json<{ revision: Record<string, unknown> & { id: string; layers: unknown[] } }>(res);
    revisionId = revision.id;
    expect(revision.revision).toBe(1);
    expect(revision.format).toBe('gdsii');
    expect(revision.sizeBytes).toBe(bytes.length);
    expect(revision.sha256).toBe(createHash('sha256').update(bytes).digest('hex'));
    expect(revision.layers).toEqual([
      { layer: 0, datatype: 0, polygons: 1, points: 4 },
      { layer: 5, datatype: 0, polygons: 3, points: 12 },
    ]);
    // The same name again is revision 2 of the same layout.
    const again = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, bytes, 'trenches.gds', { name: 'Trench test' });
    expect(again.status).toBe(201);
    const second = (await json<{ revision: { revision: number; layoutId: string } }>(again)).revision;
    expect(second.revision).toBe(2);
    const list = await json<{ layouts: { name: string; revisions: { revision: number }[] }[] }>(await designer.get(`/api/v1/projects/${PROJECT}/layouts`));
    expect(list.layouts.find((l) => l.name === 'Trench test')?.revisions.map((r) => r.revision)).toEqual([2, 1]);
    const revs = await designer.get(`/api/v1/layouts/${second.layoutId}/revisions/${revisionId}`);
    expect(revs.status).toBe(200);
  });

  it('accepts the polygon CSV format, recognised from its first line', async () => {
    const csv = '# trenchant-polygons v1\n# unit=um dbu=0.001\nlayer,datatype,polygon,x,y\n7,0,1,0,0\n7,0,1,10,0\n7,0,1,10,5\n7,0,1,0,5\n';
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, csv, 'box.txt', { name: 'csv box' });
    expect(res.status).toBe(201);
    const { revision } = await json<{ revision: { format: string; layers: { layer: number }[]; bboxUm: number[] } }>(res);
    expect(revision.format).toBe('csv');
    expect(revision.layers.map((l) => l.layer)).toEqual([7]);
    expect(revision.bboxUm).toEqual([0, 0, 10, 5]);
  });

  it('runs an analysis and streams its progress in order, ending at done', async () => {
    analysisId = await startAnalysis(designer, { revisionId, settings: TRENCH_SETTINGS, model: TEST_MODEL });
    events = await readEvents(designer, analysisId);
    expect(events.length).toBeGreaterThanOrEqual(2);
    expect(events.map((e) => e.id)).toEqual(events.map((_, k) => k + 1));
    const progress = events.filter((e) => e.event === 'progress');
    for (let k = 1; k < progress.length; k++) {
      const [a, b] = [progress[k - 1]!.data, progress[k]!.data];
      if (a.status === b.status || (a.status === 'running' && b.status === 'done')) expect(b.progress as number).toBeGreaterThanOrEqual(a.progress as number);
    }
    // Stages that appear come in pipeline order.
    const order = ['starting', 'reading', ...ANALYSIS_STAGES.map((s) => s.stage), 'writing', 'saving', 'done'];
    const seen = progress.map((e) => order.indexOf(String(e.data.stage))).filter((i) => i >= 0);
    expect([...seen].sort((a, b) => a - b)).toEqual(seen);
    const last = events.at(-1)!;
    expect(last.event).toBe('end');
    expect(last.data.status).toBe('done');
    expect(progress.at(-1)!.data.progress).toBe(1);
  });

  it('a stream opened after the end replays the final state and closes', async () => {
    const again = await readEvents(designer, analysisId, 10_000);
    expect(again.map((e) => e.event)).toEqual(['progress', 'end']);
    expect(again[0]!.data).toMatchObject({ status: 'done', progress: 1 });
  });

  it('serves results whose figures follow from the geometry', async () => {
    const res = await designer.get(`/api/v1/analyses/${analysisId}/results`);
    expect(res.status).toBe(200);
    const r = await json<{
      summary: { globalDensity: number; layout: { dieAreaUm2: number }; flags: { listed: number; total: number }; depth: { minUm: number; maxUm: number } };
      features: { total: number; items: { widthUm: number; depthUm: number; marginUm: number; aspectRatio: number }[] };
      maps: { name: string; url: string }[];
    }>(res);
    // Open area = Σ width × 400 µm over the 1 mm × 1 mm die (exact rectangle areas; pixel coverage is exact area).
    const open = TRENCH_WIDTHS_UM.reduce((s, w) => s + w * 400, 0);
    expect(r.summary.layout.dieAreaUm2).toBeCloseTo(1e6, 6);
    expect(r.summary.globalDensity).toBeCloseTo(open / 1e6, 6);
    expect(r.features.total).toBe(3);
    expect(r.features.items.map((f) => f.widthUm).sort((a, b) => a - b)).toEqual(TRENCH_WIDTHS_UM.map((w) => expect.closeTo(w, 6)));
    for (const f of r.features.items) {
      expect(f.aspectRatio).toBeCloseTo(f.depthUm / f.widthUm, 6); // AR = depth / width (definition)
      expect(f.marginUm).toBeCloseTo(f.depthUm - 50, 6); // margin = depth − target (target 50 µm in TEST_MODEL)
    }
    // Narrower trenches etch slower (aspect-ratio-dependent etching): depth increases with width.
    const byWidth = [...r.features.items].sort((a, b) => a.widthUm - b.widthUm);
    expect(byWidth[0]!.depthUm).toBeLessThan(byWidth[2]!.depthUm);
    expect(r.maps.map((m) => m.name)).toEqual(expect.arrayContaining(['coverage', 'window-density-100um-50um', 'effective-density', 'local-width', 'aspect-ratio', 'predicted-depth', 'risk']));

    const flags = await json<{ total: number; items: { kind: string; severity: string; message: string; bboxUm: number[] }[] }>(await designer.get(`/api/v1/analyses/${analysisId}/flags?limit=5000`));
    expect(flags.total).toBe(r.summary.flags.listed);
    for (const f of flags.items) {
      expect(f.message.length).toBeGreaterThan(10);
      expect(f.bboxUm).toHaveLength(4);
    }
    const errorsOnly = await json<{ items: { severity: string }[] }>(await designer.get(`/api/v1/analyses/${analysisId}/flags?severity=error`));
    expect(errorsOnly.items.every((f) => f.severity === 'error')).toBe(true);
  });

  it('serves maps as TRGRID1 with geometry headers, immutable caching and an ETag', async () => {
    const res = await designer.get(`/api/v1/analyses/${analysisId}/maps/risk`);
    expect(res.status).toBe(200);
    expect(res.headers.get('cache-control')).toContain('immutable');
    const etag = res.headers.get('etag');
    expect(etag).toBeTruthy();
    const grid = JSON.parse(res.headers.get('x-trenchant-grid') ?? '{}') as { nx: number; ny: number; pixelUm: number };
    const map = decodeGrid(new Uint8Array(await res.arrayBuffer()));
    expect(map.kind).toBe('risk');
    expect(map.grid.nx).toBe(grid.nx);
    expect(map.grid.ny).toBe(grid.ny);
    expect(map.grid.pixelUm).toBe(grid.pixelUm);
    const again = await designer.request(`/api/v1/analyses/${analysisId}/maps/risk`, { headers: { 'if-none-match': etag! } });
    expect(again.status).toBe(304);
    const byKind = await designer.get(`/api/v1/analyses/${analysisId}/maps/window-density`);
    expect(byKind.status).toBe(200);
    expect(byKind.headers.get('x-trenchant-map-kind')).toBe('window-density');
    const missing = await designer.get(`/api/v1/analyses/${analysisId}/maps/nope`);
    expect(missing.status).toBe(404);
    expect((await json<ErrorBody>(missing)).error.message).toContain('risk');
  });

  it('renders a PNG preview', async () => {
    const res = await designer.get(`/api/v1/analyses/${analysisId}/preview.png?map=predicted-depth&size=128`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe('image/png');
    const bytes = new Uint8Array(await res.arrayBuffer());
    expect([...bytes.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]); // PNG signature (ISO/IEC 15948)
    const dv = new DataView(bytes.buffer, bytes.byteOffset);
    expect(Math.max(dv.getUint32(16), dv.getUint32(20))).toBeLessThanOrEqual(128);
  });

  it('lists analyses of the project, and the seeded demo analysis finishes', async () => {
    const list = await json<{ analyses: { id: string; status: string; revision: { layoutName: string } }[] }>(await designer.get(`/api/v1/projects/${PROJECT}/analyses`));
    expect(list.analyses.some((a) => a.id === analysisId && a.status === 'done')).toBe(true);
    const demo = list.analyses.find((a) => a.revision.layoutName === 'Kestrel-3 DRIE');
    expect(demo).toBeDefined();
    const state = await waitFor(designer, demo!.id, ['done', 'failed'], 180_000);
    expect(state.status).toBe('done');
    const flags = await json<{ total: number }>(await designer.get(`/api/v1/analyses/${demo!.id}/flags`));
    expect(flags.total).toBeGreaterThan(0);
  });

  it('says why an unfinished analysis has no results (409)', async () => {
    const id = await startAnalysis(designer, { revisionId, settings: TRENCH_SETTINGS, modelId: 'deep-trench-continuous' });
    const res = await designer.get(`/api/v1/analyses/${id}/results`);
    if (res.status !== 200) {
      expect(res.status).toBe(409);
      expect((await json<ErrorBody>(res)).error.message).toMatch(/no results: it is (queued|running)/);
    }
    await waitFor(designer, id, ['done']);
  });
});
