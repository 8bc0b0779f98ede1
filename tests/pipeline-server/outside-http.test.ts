/**
 * The outside checker's layouts through the HTTP API (upload → analysis → results and maps), compared with the same
 * references as the command-line checks: window densities from gdspy 1.4.2 boolean 'and' per window and effective
 * density from scipy 1.10.1 gaussian_filter (tests/fixtures/verify/make_density.py), opening widths from closed-form
 * geometry (make_widths.py), and a 10²⁴-instance layout refused at upload with the cap named.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeGrid } from '@/lib/pipeline/grid-file';
import type { TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';
import { json, PROJECT, signInAs, startAnalysis, upload, uploadRevision, waitFor, type ErrorBody } from './support';

const dir = fileURLToPath(new URL('../fixtures/verify/', import.meta.url));
const density = JSON.parse(readFileSync(`${dir}density_expected.json`, 'utf8')) as {
  windowCases: { windowUm: number; stepUm: number; edge: string; originUm: unknown; polarity: string; nx: number; ny: number; values: (number | null)[][] }[];
  effective: { pixelUm: number; samples: Record<string, [number, number, number][]> };
};
const widths = JSON.parse(readFileSync(`${dir}widths_expected.json`, 'utf8')) as { shapes: { name: string; minWidthUm: number; tolUm: number; bboxNm: number[] }[] };
const model = (name: string) => JSON.parse(readFileSync(`${dir}etch_${name}.json`, 'utf8')) as Record<string, unknown>;

describe('outside layouts through the HTTP API', () => {
  let server: TestServer;
  let designer: TestClient;
  beforeAll(async () => {
    server = await startTestServer();
    designer = await signInAs(server.baseUrl, 'designer');
  }, 600_000);
  afterAll(() => server?.stop());

  it('window density and effective density maps of the non-Manhattan die', async () => {
    const rev = await uploadRevision(designer, readFileSync(`${dir}density_die.gds`), 'outside-density-die');
    const id = await startAnalysis(designer, {
      revisionId: rev.id,
      model: model('trench-ion'),
      settings: {
        etchLayers: [{ layer: 1, datatype: 0 }],
        densityWindows: [{ windowUm: 40, stepUm: 15 }],
        windowEdge: 'full',
        kernel: { kind: 'gaussian', lengthUm: 5, outside: 'empty' },
        pixel: { sizeUm: density.effective.pixelUm },
      },
    });
    expect((await waitFor(designer, id, ['done', 'failed'])).status).toBe('done');
    const ref = density.windowCases.find((c) => c.windowUm === 40 && c.edge === 'full' && c.polarity === 'clear' && c.originUm === null)!;
    const wd = decodeGrid(new Uint8Array(await (await designer.get(`/api/v1/analyses/${id}/maps/window-density`)).arrayBuffer()));
    expect([wd.grid.nx, wd.grid.ny]).toEqual([ref.nx, ref.ny]);
    ref.values.forEach((row, j) => row.forEach((v, i) => {
      // float32 map; gdspy keeps slanted crossings finer than the 1 nm grid (see outside-density.test.ts)
      expect(Math.abs((wd.values[j * ref.nx + i] as number) - (v as number)), `window (${i}, ${j})`).toBeLessThan(1e-5);
    }));
    const eff = decodeGrid(new Uint8Array(await (await designer.get(`/api/v1/analyses/${id}/maps/effective-density`)).arrayBuffer()));
    expect(eff.grid.pixelUm).toBe(density.effective.pixelUm);
    for (const [i, j, want] of density.effective.samples['5.0/empty'] ?? []) {
      expect(Math.abs((eff.values[j * eff.grid.nx + i] as number) - want), `effective density pixel (${i}, ${j})`).toBeLessThan(1.5e-3);
    }
  }, 300_000);

  it('opening widths of the closed-form shapes (polygon CSV upload)', async () => {
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, readFileSync(`${dir}widths.csv`, 'utf8'), 'outside-widths.csv', { name: 'outside-widths' });
    expect(res.status).toBe(201);
    const rev = (await json<{ revision: { id: string } }>(res)).revision;
    const id = await startAnalysis(designer, { revisionId: rev.id, model: model('hole-neutral'), settings: { etchLayers: [{ layer: 1, datatype: 0 }], densityWindows: [{ windowUm: 50, stepUm: 25 }] } });
    expect((await waitFor(designer, id, ['done', 'failed'])).status).toBe('done');
    const r = await json<{ features: { total: number; items: { widthUm: number; bboxUm: number[] }[] } }>(await designer.get(`/api/v1/analyses/${id}/results?limit=100`));
    expect(r.features.total).toBe(widths.shapes.length);
    for (const s of widths.shapes) {
      const f = r.features.items.find((g) => Math.abs((g.bboxUm[0] as number) - (s.bboxNm[0] as number) / 1000) < 0.01 && Math.abs((g.bboxUm[1] as number) - (s.bboxNm[1] as number) / 1000) < 0.01);
      expect(Math.abs((f?.widthUm ?? NaN) - s.minWidthUm), s.name).toBeLessThanOrEqual(s.tolUm);
    }
  }, 300_000);

  it('a layout flattening to 10²⁴ polygons is refused at upload, naming the cap', async () => {
    const t0 = Date.now();
    const res = await upload(designer, `/api/v1/projects/${PROJECT}/layouts`, readFileSync(`${dir}bad/nested_arefs.gds`), 'nested.gds', { name: 'nested' });
    expect(res.status).toBe(422);
    expect((await json<ErrorBody>(res)).error.message).toMatch(/^nested\.gds: .*limit/);
    expect(Date.now() - t0).toBeLessThan(20_000);
  }, 60_000);
});
