/**
 * Tiled analysis (lib/pipeline/tiled) against the untiled runAnalysis on the same layouts: the summary (without
 * timings), every map value bit for bit, every opening's fields and the flags must be identical, whatever the tile
 * size, margin or number of threads. The reference is the project's own untiled pipeline (itself checked against
 * outside sources in run-analysis.test.ts and tests/geometry); what is checked here is that tiling changes nothing.
 */
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { openRegions } from '@/lib/geometry/open-regions';
import { accumulateRegions, coverageFromDifferences, rasterizeOpenRegions } from '@/lib/geometry/raster';
import { featureWidths } from '@/lib/geometry/widths';
import { featureColumns } from '@/lib/geometry/feature-table';
import type { ProcessModel } from '@/lib/etch';
import { readLayoutFile } from '@/lib/layout/read';
import { inMemoryTileSource } from '@/lib/layout/tile-source';
import type { FlatLayout, PolygonSet } from '@/lib/layout/types';
import { AnalysisInputError } from '@/lib/pipeline/errors';
import { runAnalysis, type AnalysisResult } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema, type AnalysisSettings, type AnalysisSettingsInput } from '@/lib/pipeline/settings';
import { defaultLatticeDbu, planTiles, tileRegion } from '@/lib/pipeline/tiled/plan';
import { runTiledAnalysis, type TiledOptions } from '@/lib/pipeline/tiled/run-tiled';
import { shareLayout } from '@/lib/pipeline/tiled/sources';
import { makeSet, mulberry32, ngon, rect, type Ring } from '../geometry/make-set';
import { testModel } from './fixtures';
import { sampleModel } from '../support/sample-model';

const model = testModel();

function expectSame(tiled: AnalysisResult, whole: AnalysisResult): void {
  const { timingsMs: _t, ...a } = tiled.summary;
  const { timingsMs: _w, ...b } = whole.summary;
  expect(a).toEqual(b);
  expect(tiled.maps.map((m) => m.kind)).toEqual(whole.maps.map((m) => m.kind));
  tiled.maps.forEach((m, k) => {
    const n = whole.maps[k]!;
    expect(m.grid).toEqual(n.grid);
    expect(m.meta).toEqual(n.meta);
    const bytes = (v: Float32Array) => Buffer.from(v.buffer, v.byteOffset, v.byteLength);
    expect(bytes(m.values).equals(bytes(n.values)), `map ${m.kind} differs`).toBe(true);
  });
  expect(tiled.features.length).toBe(whole.features.length);
  // Bit for bit on the measured fields, then every field of the per-opening results.
  const f64 = (r: AnalysisResult) => Buffer.concat(featureColumns(r.featureTable.features).map((c) => Buffer.from(c.buffer, c.byteOffset, c.byteLength)));
  expect(f64(tiled).equals(f64(whole))).toBe(true);
  expect(tiled.features).toEqual(whole.features);
  expect(tiled.flags).toEqual(whole.flags);
}

function layoutOf(sets: PolygonSet[], dieUm: number, extra: Partial<FlatLayout> = {}): FlatLayout {
  const die = makeSet([rect(0, 0, dieUm * 1000, dieUm * 1000)], 0, 0);
  return { format: 'csv', libraryName: 'tiled-test', dbuUm: 0.001, userUnitUm: 1, topCell: '', cellCount: 0, labels: [], layers: [die, ...sets], bboxDbu: [0, 0, dieUm * 1000, dieUm * 1000], ...extra };
}

/**
 * Seeded invented layout on layer 5/0 (and some on 6/0): holes, trenches crossing many tile lines, L shapes,
 * 24-gon holes, rotated (slanted) bars, overlapping clusters, a serpentine far wider than any margin, and rectangles
 * whose edges lie exactly on the tile lines of a 40 µm tiling with 2 µm pixels.
 */
function generated(seed: number, dieUm = 600, count = 3000): FlatLayout {
  const rnd = mulberry32(seed);
  const F = Math.floor;
  const a: Ring[] = [], b: Ring[] = [];
  const D = dieUm * 1000;
  for (let k = 0; k < count; k++) {
    const x = F(rnd() * (D - 40_000)) + 5000, y = F(rnd() * (D - 40_000)) + 5000;
    const u = rnd();
    if (u < 0.4) a.push(rect(x, y, x + 500 + F(rnd() * 2500), y + 500 + F(rnd() * 2500)));
    else if (u < 0.6) {
      const w = 500 + F(rnd() * 1000), len = 5000 + F(rnd() * (rnd() < 0.1 ? 80_000 : 25_000));
      a.push(rnd() < 0.5 ? rect(x, y, Math.min(D, x + len), y + w) : rect(x, y, x + w, Math.min(D, y + len)));
    } else if (u < 0.7) a.push([x, y, x + 8000, y, x + 8000, y + 2000, x + 2000, y + 2000, x + 2000, y + 10_000, x, y + 10_000]);
    else if (u < 0.8) a.push(ngon(x + 3000, y + 3000, 1000 + F(rnd() * 1500), 24));
    else if (u < 0.9) {
      const L = 4000 + F(rnd() * 12_000), w = 1000;
      a.push([x, y, x + L, y + L, x + L - w, y + L + w, x - w, y + w]); // 45° bar (slanted edges across tile lines)
    } else b.push(rect(x, y, x + 2000 + F(rnd() * 4000), y + 1000 + F(rnd() * 2000)));
  }
  // Edges exactly on tile lines (40 µm tiles): x = 40, 80, 120 µm …
  for (let k = 1; k < dieUm / 40 - 1; k += 3) a.push(rect(k * 40_000, k * 40_000 - 2000, k * 40_000 + 2000, (k + 1) * 40_000), rect(k * 40_000 - 3000, 200_000, k * 40_000, 203_000));
  // A serpentine 2 µm wide meandering over most of the die: one opening far wider than the 25 µm default margin.
  const span = Math.floor(dieUm / 2) * 1000, rows = Math.floor(dieUm / 40);
  for (let k = 0; k < rows; k++) {
    const y = dieUm * 250 + k * 20_000;
    a.push(rect(dieUm * 250, y, dieUm * 250 + span, y + 2000));
    const xs = k % 2 === 0 ? dieUm * 250 + span - 2000 : dieUm * 250;
    if (k < rows - 1) a.push(rect(xs, y, xs + 2000, y + 22_000));
  }
  return layoutOf([makeSet(a, 5, 0), makeSet(b, 6, 0)], dieUm);
}

const settingsOf = (extra: Partial<AnalysisSettingsInput> = {}): AnalysisSettings =>
  analysisSettingsSchema.parse({ etchLayers: [{ layer: 5, datatype: 0 }], pixel: { sizeUm: 2 }, densityWindows: [{ windowUm: 100, stepUm: 50 }], ...extra });

async function compare(layout: FlatLayout, settings: AnalysisSettings, opts: TiledOptions, m: ProcessModel = model, whole?: AnalysisResult) {
  const ref = whole ?? runAnalysis(layout, settings, m);
  const tiled = await runTiledAnalysis(inMemoryTileSource(layout), settings, m, opts);
  expectSame(tiled, ref);
  return { ref, tiled };
}

describe('tiled analysis pieces', () => {
  it('the plan uses the untiled union lattice (same edge as openRegions picks)', () => {
    const L = generated(1, 400);
    const set = L.layers[1]!;
    const regions = openRegions(set, 0.001, { regionDbu: L.bboxDbu! });
    expect(defaultLatticeDbu(L.bboxDbu!, set.count)).toBe(regions.tileDbu);
  });

  it('coverage differences accumulated per window and stitched equal the whole-grid raster bit for bit', () => {
    const L = generated(2);
    const regions = openRegions(L.layers[1]!, 0.001, { regionDbu: L.bboxDbu! });
    const grid = { x0Um: 0, y0Um: 0, pixelUm: 1.7, nx: 353, ny: 353 };
    const whole = rasterizeOpenRegions(regions, grid);
    const acc = new Float64Array(grid.nx * grid.ny);
    for (let j0 = 0; j0 < grid.ny; j0 += 37)
      for (let i0 = 0; i0 < grid.nx; i0 += 29) {
        const win = { i0, j0, nx: Math.min(29, grid.nx - i0), ny: Math.min(37, grid.ny - j0) };
        const block = accumulateRegions(regions, grid, win);
        for (let j = 0; j < win.ny; j++) acc.set(block.subarray(j * win.nx, (j + 1) * win.nx), (j0 + j) * grid.nx + i0);
      }
    const stitched = coverageFromDifferences(acc, grid, grid.nx);
    expect(Buffer.from(stitched.buffer).equals(Buffer.from(whole.buffer))).toBe(true);
  });

  it('lattice widths do not depend on where a shape sits (so per-tile and per-thread caches agree)', () => {
    const base = [0, 0, 7013, 0, 7013, 1931, 2411, 1931, 1800, 9377, 0, 9377];
    const results = [0, 1_234_567, 9_876_543].map((off) => {
      const c = Float64Array.from(base.map((v, k) => v + (k % 2 ? 2 * off : off)));
      return featureWidths(c, [[0, 6]], [off, 2 * off, off + 7013, 2 * off + 9377], 7013 * 1931 + 2411 * 7446 - (611 * 7446) / 2, 40_000);
    });
    expect(results[1]).toEqual(results[0]);
    expect(results[2]).toEqual(results[0]);
    expect(results[0]!.exact).toBe(false); // the lattice path, not an analytic one
  });

  it('a tile reads its core plus the margin, snapped outward to the union lattice', () => {
    const L = generated(3);
    const plan = planTiles(inMemoryTileSource(L).header, settingsOf(), { tileUm: 40, marginUm: 10 });
    const R = tileRegion(plan, plan.ntx + 1, plan.marginDbu);
    expect(R[0]).toBeLessThanOrEqual(40_000 - 10_000);
    expect(R[2]).toBeGreaterThanOrEqual(80_000 + 10_000);
    expect(R[1]).toBeLessThan(40_000);
    for (const v of [R[0], R[1]]) expect(v % plan.latticeDbu).toBe(0);
    expect(plan.marginReason).toMatch(/re-read/);
  });

  it('names a missing etch layer like the untiled run', async () => {
    const L = generated(4);
    await expect(runTiledAnalysis(inMemoryTileSource(L), settingsOf({ etchLayers: [{ layer: 9, datatype: 0 }] }), model)).rejects.toThrow(AnalysisInputError);
    await expect(runTiledAnalysis(inMemoryTileSource(L), settingsOf({ etchLayers: [{ layer: 9, datatype: 0 }] }), model)).rejects.toThrow(/layer 9\/0 is not in the layout; layers present: 0\/0, 5\/0, 6\/0/);
  });

  it('a source a worker thread cannot open fails the run with the reason', async () => {
    const L = generated(6, 200, 300);
    const spec = { kind: 'module' as const, url: new URL('./tiled-fixture-source.ts', import.meta.url).href, exportName: 'noSuchOpener', args: {} };
    await expect(runTiledAnalysis(inMemoryTileSource(L), settingsOf(), model, { tileUm: 100, threads: 1, spec })).rejects.toThrow(/has no function noSuchOpener/);
  }, 60_000);

  it('cancels between tiles', async () => {
    let calls = 0;
    await expect(runTiledAnalysis(inMemoryTileSource(generated(5)), settingsOf(), model, { tileUm: 40, isCancelled: () => ++calls > 3 })).rejects.toThrow(/cancelled/);
  });
});

describe('tiled = untiled on generated layouts', () => {
  const L = generated(11, 400);
  const s = settingsOf();
  const whole = runAnalysis(L, s, model);

  it('has openings crossing tile lines and one far wider than the margin', () => {
    expect(whole.features.length).toBeGreaterThan(600);
    expect(Math.max(...whole.features.map((f) => f.bboxUm[2] - f.bboxUm[0]))).toBeGreaterThan(150);
    expect(whole.features.filter((f) => f.bboxUm[2] - f.bboxUm[0] > 60).length).toBeGreaterThan(5); // cross lattice cells and tiles
    // The union lattice is finer than the tiles, so tiles really read only part of the layout.
    expect(planTiles(inMemoryTileSource(L).header, s).latticeDbu).toBeLessThan(70_000);
  });

  for (const tileUm of [40, 96, 250]) {
    it(`tiles of ${tileUm} µm`, async () => {
      const { tiled } = await compare(L, s, { tileUm }, model, whole);
      expect(tiled.tiled.tiles).toBe(Math.ceil(200 / (tileUm / 2)) ** 2);
      expect(tiled.tiled.growJobs).toBeGreaterThan(0); // the serpentine needed re-reads
    }, 60_000);
  }

  it('tiles of 2 pixels, smaller than most openings', async () => {
    const small = generated(13, 120, 800);
    const { tiled } = await compare(small, s, { tileUm: 4 });
    expect(tiled.tiled.tiles).toBe(900);
  }, 120_000);

  it('a margin smaller than most openings, and a margin larger than the die', async () => {
    await compare(L, s, { tileUm: 60, marginUm: 2 }, model, whole);
    await compare(L, s, { tileUm: 150, marginUm: 2000 }, model, whole);
  });

  it('two etch layers, window origin and clipped edge windows', async () => {
    const s2 = settingsOf({ etchLayers: [{ layer: 5, datatype: 0 }, { layer: 6, datatype: 0 }], windowEdge: 'clipped', densityWindows: [{ windowUm: 70, stepUm: 30 }, { windowUm: 200, stepUm: 100 }] });
    await compare(L, s2, { tileUm: 50 });
  });

  it('dark polarity (one opening spans the die) and an automatic pixel that does not divide the die', async () => {
    const s3 = settingsOf({ polarity: 'dark', pixel: { sizeUm: 'auto', maxPixels: 40_000 } });
    const { tiled } = await compare(generated(12, 301, 2000), s3, { tileUm: 90 });
    expect(tiled.tiled.largestMarginDbu).toBeGreaterThan(tiled.tiled.plan.marginDbu);
  });

  it('other seeds, with 1 and 2 worker threads equal to inline', async () => {
    for (const seed of [21, 22]) {
      const G = generated(seed, 300, 2000);
      const spec = { kind: 'memory' as const, layout: shareLayout(G) };
      const ref = runAnalysis(G, s, model);
      const one = await compare(G, s, { tileUm: 64, threads: 1, spec }, model, ref);
      const two = await compare(G, s, { tileUm: 64, threads: 2, spec }, model, ref);
      expect([one.tiled.tiled.threads, two.tiled.tiled.threads]).toEqual([1, 2]);
      expect(two.tiled.tiled.peakBytesPerWorker).toHaveLength(2);
    }
  }, 60_000);
});

describe('tiled = untiled on the samples', () => {
  for (const [file, layer, modelFile] of [
    ['mems-die.gds', 1, 'deep-trench-continuous.json'],
    ['tsv-test-chip.gds', 2, 'cyclic-via.json'],
  ] as const) {
    it(`${file}, two tilings`, async () => {
      const L = await readLayoutFile(`samples/${file}`);
      const s = analysisSettingsSchema.parse({ etchLayers: [{ layer, datatype: 0 }] });
      const m = sampleModel(modelFile);
      const whole = runAnalysis(L, s, m);
      expect(whole.features.length).toBeGreaterThan(10);
      await compare(L, s, { tileUm: 500 }, m, whole);
      await compare(L, s, { tileUm: 1300, marginUm: 5 }, m, whole);
    }, 120_000);
  }
});

describe('check --tiles', () => {
  const check = (...args: string[]) => {
    const r = spawnSync('npx', ['tsx', 'lib/cli/main.ts', 'check', 'samples/mems-die.gds', '--layer', '1/0', '--model', 'samples/models/deep-trench-continuous.json', ...args], { encoding: 'utf8', timeout: 120_000 });
    return { code: r.status, out: r.stdout, err: r.stderr };
  };
  const parsed = (out: string) => {
    const j = JSON.parse(out) as { summary: { timingsMs?: unknown }; flags: unknown; features: unknown; tiled?: { tiles: number; threads: number } };
    delete j.summary.timingsMs;
    return j;
  };

  it('prints the same summary, flags and openings as the untiled check, on worker threads', () => {
    const whole = check('--json', '--features');
    const tiled = check('--json', '--features', '--tiles', '900', '--threads', '2');
    expect(tiled.err).toBe('');
    expect(tiled.code).toBe(whole.code);
    const a = parsed(whole.out), b = parsed(tiled.out);
    expect(b.summary).toEqual(a.summary);
    expect(b.flags).toEqual(a.flags);
    expect(b.features).toEqual(a.features);
    expect(b.tiled).toMatchObject({ tiles: 49, threads: 2 });
  }, 240_000);

  it('names the tiling in the text report and refuses a bad thread count', () => {
    const r = check('--tiles', '2000', '--threads', '0');
    expect(r.out).toMatch(/^tiles +9 of 2000 µm, margin 25 µm, \d+ re-read\(s\) for wider openings, no worker thread\(s\)/m);
    const bad = check('--tiles', '2000', '--threads', '-1');
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/threads/);
  }, 240_000);
});
