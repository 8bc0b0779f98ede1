/**
 * paintFeatureMaps paints through an owner map (no sort); this checks it against the definition in
 * lib/pipeline/result-maps.ts written out literally — paint every feature's bbox pixels (those with open area) in a
 * stable largest-area-first order, the last write wins — on random overlapping boxes with many equal areas.
 * Reference: the module's own stated rule (no outside source; the physics is not involved here).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Grid } from '@/lib/geometry';
import type { FeatureResult } from '@/lib/pipeline/predict-features';
import { paintFeatureMaps } from '@/lib/pipeline/result-maps';

function literalPaint(results: FeatureResult[], risks: Float64Array, coverage: Float32Array, grid: Grid) {
  const n = grid.nx * grid.ny;
  const depth = new Float32Array(n).fill(Number.NaN);
  const risk = new Float32Array(n).fill(Number.NaN);
  const sigma = new Float32Array(n).fill(Number.NaN);
  const order = results.map((_, k) => k).sort((a, b) => results[b]!.areaUm2 - results[a]!.areaUm2);
  for (const k of order) {
    const f = results[k]!;
    for (let j = 0; j < grid.ny; j++) {
      for (let i = 0; i < grid.nx; i++) {
        const x0 = grid.x0Um + i * grid.pixelUm, y0 = grid.y0Um + j * grid.pixelUm;
        // pixel overlaps the bbox's interior
        const inBox = x0 + grid.pixelUm > f.bboxUm[0] && x0 < f.bboxUm[2] && y0 + grid.pixelUm > f.bboxUm[1] && y0 < f.bboxUm[3];
        if (!inBox || !(coverage[j * grid.nx + i]! > 0)) continue;
        depth[j * grid.nx + i] = f.depthUm;
        risk[j * grid.nx + i] = risks[k]!;
        sigma[j * grid.nx + i] = f.depthSigmaUm ?? Number.NaN;
      }
    }
  }
  return { depth, risk, sigma };
}

const feature = (id: number, x0: number, y0: number, w: number, h: number, area: number, depth: number, sigma: number | null): FeatureResult => ({
  id, shape: 'trench', modelKind: 'trench', centroidUm: [x0 + w / 2, y0 + h / 2], bboxUm: [x0, y0, x0 + w, y0 + h], areaUm2: area,
  widthUm: 1, lengthUm: 1, effectiveDensity: 0.2, depthUm: depth, aspectRatio: depth, marginUm: 0, overEtchUm: 0, timeToTargetMin: null,
  reachesTarget: false, depthSigmaUm: sigma, maskRemainingUm: null, stopped: false, warnings: [], excursions: [],
});

describe('paintFeatureMaps', () => {
  it('matches largest-first painting with a stable order (ties: the later feature wins)', () => {
    const grid: Grid = { x0Um: -3, y0Um: 2, pixelUm: 2, nx: 9, ny: 7 };
    const arb = fc.record({
      boxes: fc.array(fc.tuple(fc.integer({ min: -6, max: 16 }), fc.integer({ min: 0, max: 16 }), fc.integer({ min: 1, max: 9 }), fc.integer({ min: 1, max: 9 }), fc.integer({ min: 1, max: 4 }), fc.boolean()), { maxLength: 25 }),
      holes: fc.array(fc.integer({ min: 0, max: 62 }), { maxLength: 20 }),
    });
    fc.assert(
      fc.property(arb, ({ boxes, holes }) => {
        const results = boxes.map(([x, y, w, h, a, s], k) => feature(k, x + 0.5, y + 0.25, w, h, a, 10 + k, s ? k / 10 : null));
        const risks = Float64Array.from(results, (_, k) => k / 3);
        const coverage = new Float32Array(grid.nx * grid.ny).fill(0.5);
        for (const p of holes) coverage[p] = 0;
        const got = paintFeatureMaps(results, risks, coverage, grid);
        const want = literalPaint(results, risks, coverage, grid);
        expect(Array.from(got.predictedDepth)).toEqual(Array.from(want.depth));
        expect(Array.from(got.risk)).toEqual(Array.from(want.risk));
        if (got.depthSigma) expect(Array.from(got.depthSigma)).toEqual(Array.from(want.sigma));
        else expect(results.every((f) => f.depthSigmaUm === null)).toBe(true);
      }),
      { numRuns: 300 },
    );
  });
});
