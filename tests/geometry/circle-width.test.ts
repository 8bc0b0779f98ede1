/**
 * Polygonised circles measure as the circle they were drawn from (lib/geometry/circle-width.ts). Expected values
 * are analytic plane geometry of the regular N-gon: vertices on the circle of diameter D ("inscribed" polygon) →
 * inscribed-disk width D·cos(π/N), drawn circle D; edges tangent to the circle ("circumscribed" polygon) → vertex
 * circle D/cos(π/N). Tolerance: the drawing grid (vertices rounded to it), as stated in the Methods text.
 */
import { describe, expect, it } from 'vitest';
import { extractFeatures, featureWidths } from '@/lib/geometry';
import { MIN_CIRCLE_VERTICES, polygonisedCircle } from '@/lib/geometry/circle-width';
import { makeSet, ngon, type Ring } from './make-set';

const DBU = 0.001; // 1 nm
const D = 5000; // 5 µm via, dbu

/** N-gon with vertices on the circle of radius r about (cx, cy), rounded to a grid of `grid` dbu. */
function onGrid(cx: number, cy: number, r: number, n: number, grid = 1, phase = 0): Ring {
  const out: number[] = [];
  for (let k = 0; k < n; k++) {
    const a = phase + (2 * Math.PI * k) / n;
    out.push(grid * Math.round((cx + r * Math.cos(a)) / grid), grid * Math.round((cy + r * Math.sin(a)) / grid));
  }
  return out;
}

const widthOf = (rings: Ring[], opts: { tileDbu?: number; regionDbu?: [number, number, number, number] } = {}) => {
  const f = extractFeatures(makeSet(rings), DBU, opts);
  expect(f).toHaveLength(1);
  return f[0]!;
};

describe('polygonised circle width', () => {
  for (const n of [16, 24, 32, 64, 128]) {
    it(`a ${n}-gon drawn on a 5 µm circle measures 5 µm (apothem would be ${(5 * Math.cos(Math.PI / n)).toFixed(4)} µm)`, () => {
      const f = widthOf([ngon(20_000, 20_000, D / 2, n, 0.1)]);
      expect(f.minWidthUm).toBe(5); // drawn diameter, rounded to the 1 nm grid
      expect(f.maxWidthUm).toBe(5);
      expect(f.minWidthUm).toBeGreaterThan(5 * Math.cos(Math.PI / n) + 1e-4); // not the inscribed disk
      expect(f.kind).toBe('round-hole');
    });
  }

  it('passes a 5 µm minimum-width rule as "width < minimum" is strict (the issue: 4.98 µm failed)', () => {
    const f = widthOf([ngon(7_777, 3_333, D / 2, 32, 0.37)]);
    expect(f.minWidthUm < 5).toBe(false);
  });

  it('a polygon drawn around the circle (edges tangent) measures D/cos(π/N), its vertex circle', () => {
    for (const n of [16, 32, 64]) {
      const r = D / 2 / Math.cos(Math.PI / n);
      const f = widthOf([ngon(0, 0, r, n)]);
      expect(Math.abs(f.minWidthUm * 1000 - D / Math.cos(Math.PI / n))).toBeLessThanOrEqual(1); // within 1 grid step
    }
  });

  it('vertices on a 5 nm drawing grid: diameter within the grid tolerance, rounded to that grid', () => {
    const ring = onGrid(100_000, 50_000, 12_500, 48, 5, 0.2);
    const c = polygonisedCircle(ring, 0, ring.length / 2)!;
    expect(c).not.toBeNull();
    expect(c.diameter).toBe(25_000);
    expect(c.tolerance).toBeCloseTo(2 * Math.SQRT2 * 5, 9);
  });

  it('a circle cut by a union tile line still measures as the circle', () => {
    // tileDbu 10 µm puts the tile line x = 10 000 through the via centred at x = 10 300.
    const f = widthOf([ngon(10_300, 10_200, D / 2, 32, 0.05)], { tileDbu: 10_000, regionDbu: [0, 0, 30_000, 30_000] });
    expect(f.pieces).toBe(4); // cut by x = 10 000 and y = 10 000
    expect(f.minWidthUm).toBe(5);
  });

  it('octagons and other coarse polygons keep the inscribed (across-flats) width', () => {
    expect(MIN_CIRCLE_VERTICES).toBe(16);
    const oct = ngon(0, 0, 2_500, 8, Math.PI / 8);
    const f = widthOf([oct]);
    // across flats of a regular octagon: 2·R·cos(π/8), within vertex rounding (1 dbu)
    expect(Math.abs(f.minWidthUm * 1000 - 5000 * Math.cos(Math.PI / 8))).toBeLessThan(1.5);
  });

  it('irregular or non-circular convex polygons are not taken for circles', () => {
    // An ellipse with 32 vertices (axes 6 and 4 µm): radii differ far beyond the grid.
    const ell: number[] = [];
    for (let k = 0; k < 32; k++) ell.push(Math.round(3000 * Math.cos((2 * Math.PI * k) / 32)), Math.round(2000 * Math.sin((2 * Math.PI * k) / 32)));
    expect(polygonisedCircle(ell, 0, 32)).toBeNull();
    // Half a circle (a D-shape) drawn with 20 arc points: the flat side leaves a gap of 180°.
    const half: number[] = [];
    for (let k = 0; k < 20; k++) half.push(Math.round(2500 * Math.cos((Math.PI * k) / 19)), Math.round(2500 * Math.sin((Math.PI * k) / 19)));
    expect(polygonisedCircle(half, 0, 20)).toBeNull();
    const w = featureWidths(half, [[0, 20]], [-2500, 0, 2500, 2500], 0.5 * Math.PI * 2500 * 2500, 5000 + Math.PI * 2500);
    expect(w.maxWidth).toBeLessThan(2600); // inscribed disk of a half disk of radius R has diameter R (analytic)
  });
});
