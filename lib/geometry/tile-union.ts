/**
 * One tile of the union (open-regions.ts). Fast paths first ('clear' polarity): polygons whose bbox touches no other
 * polygon's bbox in the tile skip clipper — rectangles are clipped to the tile directly, simple convex polygons
 * strictly inside pass through unchanged. Only overlapping clusters go to clipper; large clusters (stacked array
 * instances) are merged in groups first, since one clipper sweep over thousands of stacked polygons is many times
 * slower than a tree of small unions.
 */
import ClipperLib from 'clipper-lib';
import type { PolygonSet } from '../layout/types';
import { addCoverageRing, emitClippedRect, emitPieceFromPaths, emitRect, emitRing, type Builder } from './region-builder';
import type { Box, Polarity } from './types';

/** An axis-aligned rectangle polygon (4 distinct points) — these need no clipper call when isolated. */
const GROUP = 32;

/**
 * Nonzero union of `paths`: groups of GROUP are united, then the results pairwise, until one remains. Heavily
 * overlapping input shrinks at every level, which keeps clipper's sweep small.
 */
function groupedUnion(clipper: ClipperLib.Clipper, paths: ClipperLib.Paths): ClipperLib.Paths {
  let parts: ClipperLib.Paths[] = [];
  for (let k = 0; k < paths.length; k += GROUP) parts.push(paths.slice(k, k + GROUP));
  // Pairwise merge tree: the number of parts halves every round, so this ends after log2(n / GROUP) rounds.
  for (;;) {
    const outs = parts.map((part) => {
      clipper.Clear();
      const out: ClipperLib.Paths = [];
      clipper.AddPaths(part, ClipperLib.PolyType.ptSubject, true);
      clipper.Execute(ClipperLib.ClipType.ctUnion, out, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
      return out;
    });
    if (outs.length === 1) return outs[0] as ClipperLib.Paths;
    parts = [];
    for (let k = 0; k < outs.length; k += 2) parts.push((outs[k] as ClipperLib.Paths).concat(outs[k + 1] ?? []));
  }
}

/** An axis-aligned rectangle polygon (4 distinct points) — these need no clipper call when isolated. */
function isRect(set: PolygonSet, p: number): boolean {
  const s = set.offsets[p] as number;
  if ((set.offsets[p + 1] as number) - s !== 4) return false;
  const c = set.coords;
  for (let k = 0; k < 4; k++) {
    const a = s + k, n = s + ((k + 1) & 3);
    const dx = (c[2 * n] as number) - (c[2 * a] as number), dy = (c[2 * n + 1] as number) - (c[2 * a + 1] as number);
    if ((dx !== 0) === (dy !== 0)) return false;
  }
  return true;
}

export function processTile(set: PolygonSet, polyBox: Float64Array, members: Uint32Array, tb: Box, polarity: Polarity, b: Builder): void {
  const inside = (p: number) =>
    (polyBox[4 * p] as number) > tb[0] && (polyBox[4 * p + 1] as number) > tb[1] && (polyBox[4 * p + 2] as number) < tb[2] && (polyBox[4 * p + 3] as number) < tb[3];
  let clipperSet: number[];
  if (polarity === 'clear') {
    // Isolated rectangles strictly inside the tile pass through untouched (the common case of hole arrays).
    const order = Array.from(members).sort((a, c) => (polyBox[4 * a] as number) - (polyBox[4 * c] as number));
    const touched = new Uint8Array(order.length);
    for (let a = 0; a < order.length; a++) {
      const pa = order[a] as number;
      const ax1 = polyBox[4 * pa + 2] as number;
      for (let c = a + 1; c < order.length; c++) {
        const pc = order[c] as number;
        if ((polyBox[4 * pc] as number) > ax1) break;
        if ((polyBox[4 * pc + 1] as number) <= (polyBox[4 * pa + 3] as number) && (polyBox[4 * pc + 3] as number) >= (polyBox[4 * pa + 1] as number)) {
          touched[a] = 1;
          touched[c] = 1;
        }
      }
    }
    // Isolated polygons need no boolean: a rectangle is clipped to the tile directly (exact on integers), a
    // simple convex polygon strictly inside passes through. Only overlapping clusters go to clipper.
    clipperSet = [];
    for (let a = 0; a < order.length; a++) {
      const p = order[a] as number;
      if (touched[a]) clipperSet.push(p);
      else if (isRect(set, p)) {
        if (inside(p)) emitRect(set, p, b);
        else emitClippedRect(polyBox, p, tb, b);
      } else if (inside(p) && isSimpleConvex(set, p)) emitRing(set, p, b);
      else clipperSet.push(p);
    }
    if (clipperSet.length === 0) return;
  } else {
    clipperSet = Array.from(members);
    if (clipperSet.length === 0) {
      emitPieceFromPaths([[{ X: tb[0], Y: tb[1] }, { X: tb[2], Y: tb[1] }, { X: tb[2], Y: tb[3] }, { X: tb[0], Y: tb[3] }]], tb, b);
      return;
    }
  }
  // Crossings of slanted edges are rounded to the integer dbu grid by clipper (as GDSII geometry is). Finer
  // scaling is not available: clipper-lib's JS port returns nothing beyond its 53-bit range (tried: 1e10).
  // Clipping a slanted edge at a tile line would round the crossing to a dbu: where that happens, coverage is
  // taken instead from the unclipped union of the bucket, clipped to the tile exactly in float64.
  let slantedCross = false;
  for (const p of clipperSet) {
    if (slantedCross) break;
    if (inside(p)) continue;
    const s = set.offsets[p] as number, e = set.offsets[p + 1] as number;
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      if (set.coords[2 * k] !== set.coords[2 * n] && set.coords[2 * k + 1] !== set.coords[2 * n + 1]) {
        slantedCross = true;
        break;
      }
    }
  }
  const clipper = new ClipperLib.Clipper();
  clipper.StrictlySimple = true;
  let paths: ClipperLib.Paths = [];
  let anyClockwise = false;
  for (const p of clipperSet) {
    let path: ClipperLib.Path = [];
    for (let k = set.offsets[p] as number; k < (set.offsets[p + 1] as number); k++) {
      path.push({ X: set.coords[2 * k] as number, Y: set.coords[2 * k + 1] as number });
    }
    if (spansTooFar(polyBox, p)) path = clipHugeRing(path, tb);
    if (path.length < 3) continue;
    if (ClipperLib.Clipper.Area(path) < 0) anyClockwise = true;
    paths.push(path);
  }
  // Grouping only when every ring is counter-clockwise (as readers give them): a group's union re-orients its
  // output, which would change what a clockwise ring (a hole under the nonzero rule) does to the other groups.
  if (paths.length > 2 * GROUP && !anyClockwise) paths = groupedUnion(clipper, paths);
  clipper.Clear();
  const tileRect: ClipperLib.Path = [{ X: tb[0], Y: tb[1] }, { X: tb[2], Y: tb[1] }, { X: tb[2], Y: tb[3] }, { X: tb[0], Y: tb[3] }];
  const tree = new ClipperLib.PolyTree();
  if (polarity === 'clear') {
    clipper.AddPaths(paths, ClipperLib.PolyType.ptSubject, true);
    clipper.AddPath(tileRect, ClipperLib.PolyType.ptClip, true);
    clipper.Execute(ClipperLib.ClipType.ctIntersection, tree, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
  } else {
    clipper.AddPath(tileRect, ClipperLib.PolyType.ptSubject, true);
    clipper.AddPaths(paths, ClipperLib.PolyType.ptClip, true);
    clipper.Execute(ClipperLib.ClipType.ctDifference, tree, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
  }
  const walk = (node: ClipperLib.PolyNode) => {
    for (const outer of node.Childs()) {
      const rings = [outer.Contour(), ...outer.Childs().map((h) => h.Contour())];
      emitPieceFromPaths(rings, tb, b, slantedCross ? 0 : 1);
      for (const hole of outer.Childs()) walk(hole);
    }
  };
  walk(tree);
  if (slantedCross) {
    const u = new ClipperLib.Clipper();
    u.AddPaths(paths, ClipperLib.PolyType.ptSubject, true);
    const union: ClipperLib.Paths = [];
    u.Execute(ClipperLib.ClipType.ctUnion, union, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
    const sign = polarity === 'clear' ? 1 : -1;
    if (polarity === 'dark') addCoverageRing(b, [tb[0], tb[1], tb[2], tb[1], tb[2], tb[3], tb[0], tb[3]], 1);
    for (const path of union) {
      const xy: number[] = [];
      for (const pt of path) xy.push(pt.X, pt.Y);
      addCoverageRing(b, clipRingToBox(xy, tb), sign);
    }
  }
}

/**
 * clipper-lib's JS port returns nothing for a polygon spanning 2³² dbu or more (measured: a triangle across
 * ±2³¹, the int32 extremes of GDSII, unites and clips to an empty set), so such a polygon would vanish without a
 * word. Polygons spanning 2³⁰ dbu or more are clipped to the tile first (tiles are at most MAX_TILE_DBU, open-regions.ts)
 * and their crossings with the tile lines rounded to the dbu grid (≤ 0.5 dbu on a line of ≥ 2³⁰ dbu).
 */
const HUGE_SPAN_DBU = 2 ** 30;

function spansTooFar(polyBox: Float64Array, p: number): boolean {
  return (polyBox[4 * p + 2] as number) - (polyBox[4 * p] as number) >= HUGE_SPAN_DBU || (polyBox[4 * p + 3] as number) - (polyBox[4 * p + 1] as number) >= HUGE_SPAN_DBU;
}

function clipHugeRing(path: ClipperLib.Path, tb: Box): ClipperLib.Path {
  const xy: number[] = [];
  for (const pt of path) xy.push(pt.X, pt.Y);
  const clipped = clipRingToBox(xy, tb);
  const out: ClipperLib.Path = [];
  for (let k = 0; k + 1 < clipped.length; k += 2) out.push({ X: Math.round(clipped[k] as number), Y: Math.round(clipped[k + 1] as number) });
  return out;
}

/**
 * Sutherland–Hodgman clip of one ring to an axis-aligned box, in float64. For a concave ring the result may hold
 * zero-width bridges along the box edges; their edges cancel in signed area accumulation, so coverage is exact.
 */
export function clipRingToBox(xy: number[], box: Box): number[] {
  let poly = xy;
  for (let side = 0; side < 4 && poly.length >= 6; side++) {
    const out: number[] = [];
    const m = poly.length / 2;
    const val = (x: number, y: number) => (side === 0 ? x - box[0] : side === 1 ? box[2] - x : side === 2 ? y - box[1] : box[3] - y);
    for (let k = 0; k < m; k++) {
      const px = poly[2 * k] as number, py = poly[2 * k + 1] as number;
      const qx = poly[(2 * k + 2) % (2 * m)] as number, qy = poly[(2 * k + 3) % (2 * m)] as number;
      const dp = val(px, py), dq = val(qx, qy);
      if (dp >= 0) out.push(px, py);
      if ((dp >= 0) !== (dq >= 0)) {
        const t = dp / (dp - dq);
        // Snap onto the box line exactly so neighbouring tiles meet without slivers.
        const ix = side === 0 ? box[0] : side === 1 ? box[2] : px + t * (qx - px);
        const iy = side === 2 ? box[1] : side === 3 ? box[3] : py + t * (qy - py);
        out.push(ix, iy);
      }
    }
    poly = out;
  }
  return poly;
}

/**
 * A simple convex ring: every turn one way (collinear points only going forward) and the edge direction's x
 * component changes sign exactly twice (a locally convex ring that winds more than once, like a pentagram,
 * changes it more often). Such a ring is its own nonzero union, so clipper would return it unchanged.
 */
function isSimpleConvex(set: PolygonSet, p: number): boolean {
  const s = set.offsets[p] as number, e = set.offsets[p + 1] as number;
  const n = e - s;
  if (n < 3) return false;
  const c = set.coords;
  let sign = 0, flips = 0, lastDx = 0;
  for (let k = 0; k < n; k++) {
    const a = s + k, bq = s + ((k + 1) % n), cq = s + ((k + 2) % n);
    const dx1 = (c[2 * bq] as number) - (c[2 * a] as number), dy1 = (c[2 * bq + 1] as number) - (c[2 * a + 1] as number);
    const dx2 = (c[2 * cq] as number) - (c[2 * bq] as number), dy2 = (c[2 * cq + 1] as number) - (c[2 * bq + 1] as number);
    if ((dx1 === 0 && dy1 === 0) || (dx2 === 0 && dy2 === 0)) return false; // repeated point
    const cross = dx1 * dy2 - dy1 * dx2;
    if (cross === 0) {
      if (dx1 * dx2 + dy1 * dy2 <= 0) return false; // spike
    } else {
      const sg = cross > 0 ? 1 : -1;
      if (sign === 0) sign = sg;
      else if (sg !== sign) return false;
    }
    if (dx1 !== 0) {
      const d = dx1 > 0 ? 1 : -1;
      if (lastDx !== 0 && d !== lastDx) flips++;
      lastDx = d;
    }
  }
  // Close the cycle of x directions: count the change from the last nonzero dx back to the first.
  let firstDx = 0;
  for (let k = 0; k < n && firstDx === 0; k++) {
    const dx = (c[2 * (s + ((k + 1) % n))] as number) - (c[2 * (s + k)] as number);
    if (dx !== 0) firstDx = dx > 0 ? 1 : -1;
  }
  if (firstDx !== 0 && lastDx !== firstDx) flips++;
  return sign !== 0 && flips === 2;
}
