/**
 * The two-thread coverage raster (parallel-raster.ts) must equal the one-thread
 * `Float32Array.from(rasterizeOpenRegions(regions, grid))` bit for bit (the reference: the exact-area raster,
 * itself checked against polygon areas in coverage.test.ts): with the helper thread and without, for band counts
 * from 1 to one band per row, on grids whose edges do not line up with the layout, and when the helper fails.
 */
import { describe, expect, it } from 'vitest';
import { openRegions, rasterizeOpenRegions, type Grid } from '@/lib/geometry';
import { accumulateRegions, coverageFromDifferences } from '@/lib/geometry/raster';
import { coverageInThreads } from '@/lib/geometry/parallel-raster';
import { openRegionsInThreads } from '@/lib/geometry/parallel-union';
import { failingHelper, useAnalysisHelper } from '../support/helper-thread';
import { scatteredLayout } from './scattered-layout';

const layoutOpts = { regionDbu: [0, 0, 310_000, 310_000] as [number, number, number, number], tileDbu: 11_000 };

function layout(seed: number) {
  return openRegions(layoutSet(seed), 0.001, layoutOpts);
}

/** Rectangles and turned 24-gons, every sixth a 24-gon. */
const layoutSet = (seed: number) => scatteredLayout(seed, 2_500, 300_000, { ngonEvery: 6, ngonRadius: [400, 4_000], turnNgons: true, rectW: [200, 9_000], rectH: [200, 2_000] });

const helperThread = useAnalysisHelper();

describe('coverageInThreads', () => {
  it('equals the one-thread raster bit for bit', () => {
    const regions = layout(1);
    for (const grid of [
      { x0Um: 0, y0Um: 0, pixelUm: 2.5, nx: 124, ny: 124 },
      { x0Um: -3.3, y0Um: 1.7, pixelUm: 1.9, nx: 170, ny: 161 },
    ] satisfies Grid[]) {
      const want = Float32Array.from(rasterizeOpenRegions(regions, grid));
      for (const bands of [1, 2, 7, grid.ny]) {
        expect(Array.from(coverageInThreads(regions, grid, helperThread(), { bands, minPieces: 0 })), `${bands} bands`).toEqual(Array.from(want));
      }
      expect(Array.from(coverageInThreads(regions, grid, null))).toEqual(Array.from(want));
      // The two-thread union's regions carry each piece's y extent; bands then skip pieces by it.
      const withY = openRegionsInThreads(layoutSet(1), 0.001, layoutOpts, helperThread(), { minPolygons: 0, chunks: 5 });
      expect(withY.pieceY).toBeInstanceOf(Float64Array);
      for (const bands of [3, grid.ny]) expect(Array.from(coverageInThreads(withY, grid, helperThread(), { bands, minPieces: 0 }))).toEqual(Array.from(want));
    }
  });

  it('the helper really rasterises bands', () => {
    const regions = layout(2);
    const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 0.5, nx: 620, ny: 620 };
    const want = Array.from(Float32Array.from(rasterizeOpenRegions(regions, grid)));
    let bands = 0;
    for (let k = 0; k < 20 && bands === 0; k++) {
      const info: { helperBands?: number } = {};
      expect(Array.from(coverageInThreads(regions, grid, helperThread(), { bands: 64, minPieces: 0, info }))).toEqual(want);
      bands = info.helperBands ?? 0;
    }
    expect(bands).toBeGreaterThan(0);
  });

  it('a helper that takes bands and fails: they are done here', () => {
    const regions = layout(3);
    const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 3, nx: 104, ny: 104 };
    const failing = failingHelper();
    expect(Array.from(coverageInThreads(regions, grid, failing, { bands: 9, minPieces: 0 }))).toEqual(Array.from(Float32Array.from(rasterizeOpenRegions(regions, grid))));
  });

  it('a window of some rows skips pieces outside them without changing a value', () => {
    const regions = layout(4);
    const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 1.3, nx: 240, ny: 240 };
    const whole = accumulateRegions(regions, grid, { i0: 0, j0: 0, nx: grid.nx + 2, ny: grid.ny });
    const stitched = new Float64Array(whole.length);
    for (const [j0, j1] of [[0, 37], [37, 38], [38, 200], [200, 240]] as const) stitched.set(accumulateRegions(regions, grid, { i0: 0, j0, nx: grid.nx + 2, ny: j1 - j0 }), j0 * (grid.nx + 2));
    expect(Array.from(coverageFromDifferences(stitched, grid))).toEqual(Array.from(coverageFromDifferences(whole, grid)));
  });
});
