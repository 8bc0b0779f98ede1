import { describe, expect, it } from 'vitest';
import { convexInscribedRadius, coverageRaster, coverageRaster64, gridForBox, openRegions, ringArea, type Grid } from '@/lib/geometry';
import { makeSet, mulberry32, ngon, rect, type Ring } from './make-set';

const DBU = 0.001;
const sum = (a: ArrayLike<number>) => {
  let s = 0;
  for (let q = 0; q < a.length; q++) s += a[q] as number;
  return s;
};

describe('coverageRaster64(set, dbuUm, grid, opts)', () => {
  it('counts overlapping polygons once (nonzero union), at any pixel size', () => {
    // Two 10×10 µm squares overlapping in 5×5 µm: union 175 µm² (inclusion–exclusion, analytical)
    const set = makeSet([rect(0, 0, 10_000, 10_000), rect(5_000, 5_000, 15_000, 15_000)]);
    for (const p of [0.37, 1, 2.5, 7]) {
      const grid = gridForBox([0, 0, 15_000, 15_000], DBU, p);
      expect(sum(coverageRaster64(set, DBU, grid)) * p * p).toBeCloseTo(175, 9);
    }
  });

  it('gives exact per-pixel fractions for a slanted edge', () => {
    // Triangle (0,0)-(2,0)-(0,2) µm on 1 µm pixels: pixel (0,0) fully covered, (1,0) and (0,1) half (analytical)
    const cov = coverageRaster64(makeSet([[0, 0, 2_000, 0, 0, 2_000]]), DBU, { x0Um: 0, y0Um: 0, pixelUm: 1, nx: 2, ny: 2 });
    expect(Array.from(cov)).toEqual([1, 0.5, 0.5, 0]);
  });

  it('is independent of ring orientation and of the union tile size', () => {
    const rnd = mulberry32(7);
    const rings: Ring[] = [];
    for (let k = 0; k < 300; k++) {
      const x = Math.floor(rnd() * 90_000), y = Math.floor(rnd() * 90_000), w = 500 + Math.floor(rnd() * 9_000), h = 500 + Math.floor(rnd() * 9_000);
      const r = rect(x, y, x + w, y + h);
      rings.push(k % 2 ? r : [r[0]!, r[1]!, r[6]!, r[7]!, r[4]!, r[5]!, r[2]!, r[3]!]); // every other ring clockwise
    }
    const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 2, nx: 50, ny: 50 };
    const diff = (set: ReturnType<typeof makeSet>) => {
      const a = coverageRaster64(set, DBU, grid, { tileDbu: 3_000 });
      const b = coverageRaster64(set, DBU, grid, { tileDbu: 1e9 });
      let worst = 0;
      for (let q = 0; q < a.length; q++) worst = Math.max(worst, Math.abs((a[q] as number) - (b[q] as number)));
      expect(Math.max(...a)).toBeLessThanOrEqual(1);
      return worst;
    };
    expect(diff(makeSet(rings))).toBeLessThan(1e-12); // Manhattan: tiling adds no area (exact partition)
    // With a 64-gon over the rectangles, clipper rounds each crossing of a slanted edge to 1 dbu, and the rounding
    // depends on the other vertices in the same clipper call: tilings agree to ~1 nm × edge length per crossing.
    expect(diff(makeSet([...rings, ngon(50_000, 50_000, 8_000, 64)]))).toBeLessThan(1e-5);
  });

  it('dark polarity is the region minus the drawn union, holes subtract', () => {
    const set = makeSet([rect(2_000, 2_000, 8_000, 8_000), rect(4_000, 4_000, 12_000, 6_000)]);
    const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 1, nx: 10, ny: 10 };
    const clear = coverageRaster64(set, DBU, grid);
    const dark = coverageRaster64(set, DBU, grid, { polarity: 'dark' });
    for (let q = 0; q < 100; q++) expect((clear[q] as number) + (dark[q] as number)).toBeCloseTo(1, 12); // complement inside the region
    const f32 = coverageRaster(set, DBU, grid);
    expect(f32).toBeInstanceOf(Float32Array);
  });

  it('openRegions orients outer rings counter-clockwise and holes clockwise', () => {
    const hole = rect(3_000, 3_000, 7_000, 7_000);
    const r = openRegions(makeSet([rect(0, 0, 10_000, 10_000).reverse(), hole]), DBU, { polarity: 'clear' });
    const areas: number[] = [];
    for (let k = 0; k < r.ringCount; k++) areas.push(ringArea(r.coords, 2 * (r.ringOffsets[k] as number), 2 * (r.ringOffsets[k + 1] as number)));
    // nonzero union of a square and a contained square is the outer square: one positive ring of 1e8 dbu²
    expect(areas).toEqual([1e8]);
  });
});

describe('convexInscribedRadius(coords, start, end)', () => {
  it('gives the inradius of a 3-4-5 triangle (1) and half the short side of a rotated rectangle', () => {
    expect(convexInscribedRadius([0, 0, 4, 0, 0, 3], 0, 3)).toBeCloseTo(1, 9); // inradius = (a+b−c)/2 = 1 (analytical)
    const c = Math.cos(0.3), s = Math.sin(0.3);
    const pts = [[-5, -1], [5, -1], [5, 1], [-5, 1]].flatMap(([x, y]) => [c * x! - s * y!, s * x! + c * y!]);
    expect(convexInscribedRadius(pts, 0, 4)).toBeCloseTo(1, 9); // analytical: half the 2-unit width
  });
});
