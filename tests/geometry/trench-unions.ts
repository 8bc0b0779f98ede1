/**
 * Seeded unions of 2–4 axis-parallel trenches and their openings, for checking width methods against exact
 * references: used by tests/geometry/manhattan-widths.test.ts and bench/widths-sampled-vs-exact.ts (invented geometry).
 */
import { openRegions, type Box } from '../../lib/geometry';
import { makeSet, mulberry32, rect, type Ring } from './make-set';

/** Where trenches start (0..pos on both axes), their widths and lengths (dbu; each drawn uniformly, then floored to the grid). */
export interface TrenchSize { pos: number; w: [number, number]; len: [number, number] }

/** One union: 2–4 trenches with vertices on a `grid` dbu grid, each horizontal or vertical with even odds. */
export function trenchUnion(rnd: () => number, grid: number, size: TrenchSize): Ring[] {
  const pick = (a: number, b: number) => grid * Math.floor((a + rnd() * (b - a)) / grid);
  const rs: Ring[] = [];
  const k = 2 + Math.floor(rnd() * 3);
  for (let q = 0; q < k; q++) {
    const x = pick(0, size.pos), y = pick(0, size.pos), w = pick(...size.w), len = pick(...size.len);
    rs.push(rnd() < 0.5 ? rect(x, y, x + len, y + w) : rect(x, y, x + w, y + len));
  }
  return rs;
}

/** `n` unions from one seeded stream. */
export function trenchUnions(seed: number, n: number, grid: number, size: TrenchSize): Ring[][] {
  const rnd = mulberry32(seed);
  return Array.from({ length: n }, () => trenchUnion(rnd, grid, size));
}

/** One opening as featureWidths takes it, and its rings shifted to its bbox corner (for the brute force). */
export interface UnionOpening { coords: Float64Array; rings: [number, number][]; bbox: Box; area: number; perim: number; local: number[][] }

/** Openings of a union of rectangles: rings, bbox, area, perimeter (one union tile, as the feature path). */
export function unionOpenings(rs: Ring[], dbuUm = 0.001): UnionOpening[] {
  const reg = openRegions(makeSet(rs), dbuUm, { tileDbu: 1e9 });
  const out: UnionOpening[] = [];
  for (let p = 0; p < reg.pieceCount; p++) {
    const rings: [number, number][] = [];
    let area = 0, perim = 0;
    const bbox: Box = [Infinity, Infinity, -Infinity, -Infinity];
    for (let r = reg.pieceRings[p]!; r < reg.pieceRings[p + 1]!; r++) {
      const s = reg.ringOffsets[r]!, e = reg.ringOffsets[r + 1]!;
      rings.push([s, e]);
      for (let q = s; q < e; q++) {
        const n = q + 1 < e ? q + 1 : s;
        const x = reg.coords[2 * q]!, y = reg.coords[2 * q + 1]!, x2 = reg.coords[2 * n]!, y2 = reg.coords[2 * n + 1]!;
        area += (x * y2 - x2 * y) / 2;
        perim += Math.hypot(x2 - x, y2 - y);
        bbox[0] = Math.min(bbox[0], x);
        bbox[1] = Math.min(bbox[1], y);
        bbox[2] = Math.max(bbox[2], x);
        bbox[3] = Math.max(bbox[3], y);
      }
    }
    const local = rings.map(([s, e]) => Array.from({ length: 2 * (e - s) }, (_, k) => reg.coords[2 * s + k]! - bbox[k % 2]!));
    out.push({ coords: reg.coords, rings, bbox, area, perim, local });
  }
  return out;
}
