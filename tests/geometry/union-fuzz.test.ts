/**
 * The one union (open-regions.ts: tiled, fast paths for isolated polygons, clipper on clusters) against the
 * reference: clipper-lib 6.4.2's global nonzero union of all polygons in one call (a general-purpose library,
 * Angus Johnson's Clipper). Random small layouts from fast-check, random tile sizes, both polarities.
 * Manhattan layouts must agree exactly (area and point membership); with slanted edges clipper rounds each
 * crossing to the dbu grid, so areas agree within 1 dbu × the input perimeter and membership is compared only at
 * points more than 2 dbu from every input edge.
 */
import ClipperLib from 'clipper-lib';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { openArea, openRegions, type OpenRegions } from '@/lib/geometry';
import { unionArea } from '@/lib/geometry/union-area';
import { makeSet, type Ring } from './make-set';

type Box = [number, number, number, number];

function ringWinding(xy: ArrayLike<number>, from: number, to: number, px: number, py: number): number {
  // Crossing-number winding of point (px, py) against ring xy[from..to) (points, not coordinates).
  let w = 0;
  const n = to - from;
  for (let k = 0; k < n; k++) {
    const a = from + k, b = from + ((k + 1) % n);
    const ax = xy[2 * a] as number, ay = xy[2 * a + 1] as number, bx = xy[2 * b] as number, by = xy[2 * b + 1] as number;
    if (ay <= py) {
      if (by > py && (bx - ax) * (py - ay) - (px - ax) * (by - ay) > 0) w++;
    } else if (by <= py && (bx - ax) * (py - ay) - (px - ax) * (by - ay) < 0) w--;
  }
  return w;
}

/** Is (px, py) inside the open regions (any piece, outer minus holes)? */
function inRegions(r: OpenRegions, px: number, py: number): boolean {
  let w = 0;
  for (let q = 0; q < r.ringCount; q++) w += ringWinding(r.coords, r.ringOffsets[q] as number, r.ringOffsets[q + 1] as number, px, py);
  return w !== 0;
}

/** Reference: one global clipper union (nonzero) inside the region, or the region minus it for 'dark'. */
function clipperReference(rings: Ring[], polarity: 'clear' | 'dark', region: Box): ClipperLib.Paths {
  const paths = rings.map((r) => {
    const p: ClipperLib.Path = [];
    for (let k = 0; k < r.length; k += 2) p.push({ X: r[k] as number, Y: r[k + 1] as number });
    return p;
  });
  const c = new ClipperLib.Clipper();
  const out: ClipperLib.Paths = [];
  const [x0, y0, x1, y1] = region;
  if (polarity === 'clear') {
    const union: ClipperLib.Paths = [];
    c.AddPaths(paths, ClipperLib.PolyType.ptSubject, true);
    c.Execute(ClipperLib.ClipType.ctUnion, union, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
    c.Clear();
    c.AddPaths(union, ClipperLib.PolyType.ptSubject, true);
    c.AddPath([{ X: x0, Y: y0 }, { X: x1, Y: y0 }, { X: x1, Y: y1 }, { X: x0, Y: y1 }], ClipperLib.PolyType.ptClip, true);
    c.Execute(ClipperLib.ClipType.ctIntersection, out, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
  } else {
    c.AddPath([{ X: x0, Y: y0 }, { X: x1, Y: y0 }, { X: x1, Y: y1 }, { X: x0, Y: y1 }], ClipperLib.PolyType.ptSubject, true);
    c.AddPaths(paths, ClipperLib.PolyType.ptClip, true);
    c.Execute(ClipperLib.ClipType.ctDifference, out, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
  }
  return out;
}

const refArea = (paths: ClipperLib.Paths) => paths.reduce((s, p) => s + ClipperLib.Clipper.Area(p), 0);
function inReference(paths: ClipperLib.Paths, px: number, py: number): boolean {
  let w = 0;
  for (const p of paths) {
    // PointInPolygon: 1 inside, −1 on the boundary, 0 outside; outer rings have positive area, holes negative.
    if (ClipperLib.Clipper.PointInPolygon({ X: px, Y: py }, p) === 1) w += ClipperLib.Clipper.Area(p) > 0 ? 1 : -1;
  }
  return w > 0;
}

const ccw = (r: Ring): Ring => {
  let a = 0;
  for (let k = 0; k < r.length; k += 2) {
    const j = (k + 2) % r.length;
    a += (r[k] as number) * (r[j + 1] as number) - (r[j] as number) * (r[k + 1] as number);
  }
  if (a >= 0) return r;
  const out: number[] = [];
  for (let k = r.length - 2; k >= 0; k -= 2) out.push(r[k] as number, r[k + 1] as number);
  return out;
};

const S = 20_000; // layout extent, dbu
const rectArb = fc.tuple(fc.integer({ min: 0, max: S - 10 }), fc.integer({ min: 0, max: S - 10 }), fc.integer({ min: 1, max: 6_000 }), fc.integer({ min: 1, max: 6_000 })).map(([x, y, w, h]): Ring => [x, y, x + w, y, x + w, y + h, x, y + h]);
/** Rectilinear L (two rectangles sharing a corner region, as one ring). */
const lArb = fc.tuple(fc.integer({ min: 0, max: S - 10 }), fc.integer({ min: 0, max: S - 10 }), fc.integer({ min: 2, max: 5_000 }), fc.integer({ min: 2, max: 5_000 })).map(([x, y, w, h]): Ring => {
  const a = Math.max(1, Math.floor(w / 2)), b = Math.max(1, Math.floor(h / 2));
  return [x, y, x + w, y, x + w, y + b, x + a, y + b, x + a, y + h, x, y + h];
});
/** Random simple polygon: points at sorted random angles around a centre (star-shaped, possibly concave). */
const slantArb = fc
  .tuple(fc.integer({ min: 2_000, max: S - 2_000 }), fc.integer({ min: 2_000, max: S - 2_000 }), fc.array(fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.integer({ min: 200, max: 3_000 })), { minLength: 3, maxLength: 9 }))
  .map(([cx, cy, pts]): Ring => {
    const sorted = pts.map(([t, r]) => [t, r] as const).sort((p, q) => p[0] - q[0]);
    const out: number[] = [];
    sorted.forEach(([t, r], k) => {
      const a = 2 * Math.PI * ((k + t) / sorted.length);
      out.push(Math.round(cx + r * Math.cos(a)), Math.round(cy + r * Math.sin(a)));
    });
    return ccw(out);
  });

function check(rings: Ring[], tileDbu: number, polarity: 'clear' | 'dark', probes: [number, number][], manhattan: boolean) {
  const set = makeSet(rings);
  const region: Box = [0, 0, S + 6_000, S + 6_000];
  const ours = openRegions(set, 0.001, { polarity, tileDbu, regionDbu: region });
  const ref = clipperReference(rings, polarity, region);
  const a = openArea(ours), b = refArea(ref);
  if (manhattan) expect(a).toBe(b);
  else {
    let perimeter = 0;
    for (const r of rings) for (let k = 0; k < r.length; k += 2) perimeter += Math.hypot((r[(k + 2) % r.length] as number) - (r[k] as number), (r[(k + 3) % r.length] as number) - (r[k + 1] as number));
    expect(Math.abs(a - b)).toBeLessThanOrEqual(perimeter);
  }
  for (const [px, py] of probes) {
    // Half-integer probes never lie on a Manhattan edge; off-Manhattan, skip probes near any input edge.
    if (!manhattan && nearAnyEdge(rings, px, py, 2)) continue;
    expect(inRegions(ours, px, py)).toBe(inReference(ref, px, py));
  }
}

function nearAnyEdge(rings: Ring[], px: number, py: number, d: number): boolean {
  for (const r of rings) {
    for (let k = 0; k < r.length; k += 2) {
      const ax = r[k] as number, ay = r[k + 1] as number, bx = r[(k + 2) % r.length] as number, by = r[(k + 3) % r.length] as number;
      const dx = bx - ax, dy = by - ay, l2 = dx * dx + dy * dy;
      const t = l2 > 0 ? Math.max(0, Math.min(1, ((px - ax) * dx + (py - ay) * dy) / l2)) : 0;
      if (Math.hypot(px - ax - t * dx, py - ay - t * dy) <= d) return true;
    }
  }
  return false;
}

const probesArb = fc.array(fc.tuple(fc.integer({ min: 0, max: S + 5_000 }), fc.integer({ min: 0, max: S + 5_000 })).map(([x, y]) => [x + 0.5, y + 0.5] as [number, number]), { minLength: 40, maxLength: 40 });
const tileArb = fc.integer({ min: 300, max: 30_000 });

describe('tiled union vs clipper global union (fast-check)', () => {
  it('Manhattan layouts: identical area and membership, both polarities, any tile size', () => {
    fc.assert(
      fc.property(fc.array(fc.oneof(rectArb, lArb), { minLength: 1, maxLength: 40 }), tileArb, fc.constantFrom('clear' as const, 'dark' as const), probesArb, (rings, tile, polarity, probes) => {
        check(rings, tile, polarity, probes, true);
      }),
      { numRuns: 150, seed: 1301 },
    );
  });

  it('layouts with slanted edges: area within 1 dbu × perimeter, same membership away from edges', () => {
    fc.assert(
      fc.property(fc.array(fc.oneof(rectArb, slantArb, slantArb), { minLength: 1, maxLength: 30 }), tileArb, fc.constantFrom('clear' as const, 'dark' as const), probesArb, (rings, tile, polarity, probes) => {
        check(rings, tile, polarity, probes, false);
      }),
      { numRuns: 150, seed: 1302 },
    );
  });

  it('stacked copies (grouped-union path: > 64 polygons in one cluster) agree exactly', () => {
    fc.assert(
      fc.property(fc.array(rectArb, { minLength: 70, maxLength: 200 }), tileArb, probesArb, (rings, tile, probes) => {
        check(rings, tile, 'clear', probes, true);
      }),
      { numRuns: 25, seed: 1303 },
    );
  });

  it('unionArea(set) is the same union summed', () => {
    const rings: Ring[] = [[0, 0, 100, 0, 100, 100, 0, 100], [50, 50, 150, 50, 150, 150, 50, 150]];
    expect(unionArea(makeSet(rings)).areaDbu2).toBe(17_500); // inclusion–exclusion, by hand
  });
});
