/**
 * Tiled exact boolean of one layer: the open area (union of the drawn polygons, or the region minus that union)
 * as non-overlapping pieces, each a clipper outer ring with its holes, clipped to square tiles. One global
 * clipper union is super-linear (stack.md: 91 s for 100k rectangles); per-tile work is linear in the count.
 *
 * Pieces that meet across a tile line are recorded as seams (piece a, piece b, shared length) so features can be
 * stitched back together and the artificial tile edges removed from perimeters. Coordinates are integer dbu.
 * The only inexact step: where a slanted edge crosses another edge, clipper rounds the crossing to the dbu grid
 * (its rounding also depends on the other vertices in the call, so tilings can differ by ~1 dbu × edge length per
 * crossing). Manhattan input is exact; tile lines never round a slanted edge for coverage (processTile).
 *
 * Fast path ('clear' polarity): polygons whose bbox touches no other polygon's bbox in the tile skip clipper.
 * Rectangles are clipped to the tile directly; simple convex polygons strictly inside pass through unchanged.
 */
import { polygonSetsBbox } from '../layout/bbox';
import ClipperLib from 'clipper-lib';
import type { PolygonSet } from '../layout/types';
import type { Box, Polarity } from './types';
import { ringArea } from './ring';

export interface OpenRegions {
  dbuUm: number;
  /** Reference region in dbu (the open area never leaves it). */
  regionDbu: Box;
  /** Interleaved x,y of every ring, dbu. */
  coords: Float64Array;
  /** Point offsets per ring (ringCount + 1). Outer rings are counter-clockwise (y up), holes clockwise. */
  ringOffsets: Uint32Array;
  ringCount: number;
  /** Ring offsets per piece (pieceCount + 1): a piece is one outer ring followed by its holes. */
  pieceRings: Uint32Array;
  pieceCount: number;
  /** Seams between pieces of neighbouring tiles: seamA[k], seamB[k] share a tile-line stretch seamLen[k] dbu long. */
  seamA: Uint32Array;
  seamB: Uint32Array;
  seamLen: Float64Array;
  /** Tile edge length used, dbu. */
  tileDbu: number;
  /** Per piece: 1 when its rings are rasterised for coverage. Tiles where a slanted edge crosses the tile boundary
   * give 0 here and supply `coverageRings` instead (see processTile). */
  pieceCoverage: Uint8Array;
  /** Coverage-only rings (signed: counter-clockwise adds, clockwise subtracts), dbu, float coordinates. */
  coverageCoords: Float64Array;
  coverageRingOffsets: Uint32Array;
}

export interface OpenRegionsOptions {
  polarity?: Polarity;
  /** Reference region (dbu); default: the bounding box of the set. Required to be non-empty for 'dark'. */
  regionDbu?: Box;
  /** Tile edge in dbu; default chosen so an average tile holds about 64 polygons. */
  tileDbu?: number;
}

/** Bounding box of a polygon set in dbu, or null when it has no points. */
export function setBbox(set: PolygonSet): Box | null {
  return polygonSetsBbox([set]);
}

class Builder {
  /** Ring points (growable typed buffer: pushing ~10⁷ numbers into a JS array dominated the union). */
  coords = new Float64Array(1 << 16);
  coordLen = 0;
  ringOffsets: number[] = [0];
  pieceRings: number[] = [0];
  seamA: number[] = [];
  seamB: number[] = [];
  seamLen: number[] = [];
  pieceCoverage: number[] = [];
  covCoords: number[] = [];
  covRingOffsets: number[] = [0];
  /** Tile-line stretches: key "v:X" / "h:Y" → [lo, hi, piece, side] flat quadruples. side 0 = piece below/left. */
  lines = new Map<string, number[]>();

  addRing(xy: ArrayLike<number>, start: number, end: number): void {
    if (this.coordLen + (end - start) > this.coords.length) {
      const grown = new Float64Array(Math.max(2 * this.coords.length, this.coordLen + (end - start)));
      grown.set(this.coords.subarray(0, this.coordLen));
      this.coords = grown;
    }
    if (xy instanceof Float64Array) {
      this.coords.set(xy.subarray(start, end), this.coordLen);
      this.coordLen += end - start;
    } else for (let k = start; k < end; k++) this.coords[this.coordLen++] = xy[k] as number;
    this.ringOffsets.push(this.coordLen / 2);
  }
  endPiece(coverage = 1): number {
    this.pieceRings.push(this.ringOffsets.length - 1);
    this.pieceCoverage.push(coverage);
    return this.pieceRings.length - 2;
  }
}

/**
 * Compute the open area of `set` as tiled non-overlapping pieces (see module doc).
 * Fill rule nonzero. Tile clipping adds vertices on tile lines but no area.
 */
export function openRegions(set: PolygonSet, dbuUm: number, opts: OpenRegionsOptions = {}): OpenRegions {
  const polarity = opts.polarity ?? 'clear';
  const bbox = setBbox(set);
  const region: Box | null = opts.regionDbu ?? bbox;
  const b = new Builder();
  if (!region || region[2] <= region[0] || region[3] <= region[1]) return finish(b, dbuUm, region ?? [0, 0, 0, 0], 1);
  const w = region[2] - region[0], h = region[3] - region[1];
  const tile = opts.tileDbu ?? Math.max(1, Math.ceil(Math.sqrt((w * h * 64) / Math.max(1, set.count))));
  const ntx = Math.max(1, Math.ceil(w / tile)), nty = Math.max(1, Math.ceil(h / tile));

  // Bucket polygon indices per tile (closed bbox test so touching polygons meet in some tile).
  const polyBox = new Float64Array(set.count * 4);
  const counts = new Uint32Array(ntx * nty + 1);
  const forEachTile = (p: number, fn: (t: number) => void) => {
    const bx0 = polyBox[4 * p] as number, by0 = polyBox[4 * p + 1] as number;
    const bx1 = polyBox[4 * p + 2] as number, by1 = polyBox[4 * p + 3] as number;
    if (bx1 < region[0] || bx0 > region[2] || by1 < region[1] || by0 > region[3]) return;
    const i0 = Math.max(0, Math.floor((bx0 - region[0]) / tile)), i1 = Math.min(ntx - 1, Math.floor((bx1 - region[0]) / tile));
    const j0 = Math.max(0, Math.floor((by0 - region[1]) / tile)), j1 = Math.min(nty - 1, Math.floor((by1 - region[1]) / tile));
    for (let j = j0; j <= j1; j++) for (let i = i0; i <= i1; i++) fn(j * ntx + i);
  };
  for (let p = 0; p < set.count; p++) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let k = set.offsets[p] as number; k < (set.offsets[p + 1] as number); k++) {
      const x = set.coords[2 * k] as number, y = set.coords[2 * k + 1] as number;
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
    polyBox[4 * p] = x0;
    polyBox[4 * p + 1] = y0;
    polyBox[4 * p + 2] = x1;
    polyBox[4 * p + 3] = y1;
    forEachTile(p, (t) => { counts[t + 1]!++; });
  }
  for (let t = 0; t < ntx * nty; t++) counts[t + 1]! += counts[t] as number;
  const bucket = new Uint32Array(counts[ntx * nty] as number);
  const fill = counts.slice(0, ntx * nty);
  for (let p = 0; p < set.count; p++) forEachTile(p, (t) => { bucket[fill[t]!++] = p; });

  for (let tj = 0; tj < nty; tj++) {
    for (let ti = 0; ti < ntx; ti++) {
      const t = tj * ntx + ti;
      const tb: Box = [region[0] + ti * tile, region[1] + tj * tile, Math.min(region[2], region[0] + (ti + 1) * tile), Math.min(region[3], region[1] + (tj + 1) * tile)];
      const members = bucket.subarray(counts[t] as number, counts[t + 1] as number);
      processTile(set, polyBox, members, tb, polarity, b);
    }
  }
  matchSeams(b);
  return finish(b, dbuUm, region, tile);
}

function finish(b: Builder, dbuUm: number, region: Box, tile: number): OpenRegions {
  return {
    dbuUm,
    regionDbu: region,
    coords: b.coords.slice(0, b.coordLen),
    ringOffsets: Uint32Array.from(b.ringOffsets),
    ringCount: b.ringOffsets.length - 1,
    pieceRings: Uint32Array.from(b.pieceRings),
    pieceCount: b.pieceRings.length - 1,
    seamA: Uint32Array.from(b.seamA),
    seamB: Uint32Array.from(b.seamB),
    seamLen: Float64Array.from(b.seamLen),
    tileDbu: tile,
    pieceCoverage: Uint8Array.from(b.pieceCoverage),
    coverageCoords: Float64Array.from(b.covCoords),
    coverageRingOffsets: Uint32Array.from(b.covRingOffsets),
  };
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

function processTile(set: PolygonSet, polyBox: Float64Array, members: Uint32Array, tb: Box, polarity: Polarity, b: Builder): void {
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
  const paths: ClipperLib.Paths = [];
  for (const p of clipperSet) {
    const path: ClipperLib.Path = [];
    for (let k = set.offsets[p] as number; k < (set.offsets[p + 1] as number); k++) {
      path.push({ X: set.coords[2 * k] as number, Y: set.coords[2 * k + 1] as number });
    }
    if (path.length >= 3) paths.push(path);
  }
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

/** Add a ring for coverage with orientation chosen so it adds (sign 1) or removes (−1) its own signed area. */
function addCoverageRing(b: Builder, xy: number[], sign: number): void {
  if (xy.length < 6) return;
  // Clipper keeps outer rings positive and holes negative; 'dark' flips both.
  if (sign < 0) {
    const rev: number[] = [];
    for (let k = xy.length - 2; k >= 0; k -= 2) rev.push(xy[k] as number, xy[k + 1] as number);
    xy = rev;
  }
  for (const v of xy) b.covCoords.push(v);
  b.covRingOffsets.push(b.covCoords.length / 2);
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

function emitRect(set: PolygonSet, p: number, b: Builder): void {
  const s = set.offsets[p] as number;
  const xy = set.coords.subarray(2 * s, 2 * s + 8);
  if (ringArea(xy) >= 0) b.addRing(xy, 0, 8);
  else {
    const r = [xy[0], xy[1], xy[6], xy[7], xy[4], xy[5], xy[2], xy[3]] as number[];
    b.addRing(r, 0, 8);
  }
  b.endPiece();
}

/** An isolated rectangle crossing the tile boundary: its part inside the tile, with seams on the tile lines. */
function emitClippedRect(polyBox: Float64Array, p: number, tb: Box, b: Builder): void {
  const x0 = Math.max(polyBox[4 * p] as number, tb[0]), y0 = Math.max(polyBox[4 * p + 1] as number, tb[1]);
  const x1 = Math.min(polyBox[4 * p + 2] as number, tb[2]), y1 = Math.min(polyBox[4 * p + 3] as number, tb[3]);
  if (x1 <= x0 || y1 <= y0) return; // touches the tile along a line only: no area here (as clipper)
  emitPieceFromPaths([[{ X: x0, Y: y0 }, { X: x1, Y: y0 }, { X: x1, Y: y1 }, { X: x0, Y: y1 }]], tb, b);
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

/** An isolated simple polygon strictly inside the tile, oriented counter-clockwise. */
function emitRing(set: PolygonSet, p: number, b: Builder): void {
  const s = set.offsets[p] as number, e = set.offsets[p + 1] as number;
  const xy = set.coords.subarray(2 * s, 2 * e);
  if (ringArea(xy) > 0) b.addRing(xy, 0, xy.length);
  else {
    const rev: number[] = [];
    for (let k = xy.length - 2; k >= 0; k -= 2) rev.push(xy[k] as number, xy[k + 1] as number);
    b.addRing(rev, 0, rev.length);
  }
  b.endPiece();
}

/** Add one piece (outer + holes), orienting outer CCW and holes CW, and record its stretches on tile lines. */
function emitPieceFromPaths(rings: ClipperLib.Path[], tb: Box, b: Builder, coverage = 1): void {
  rings.forEach((ring, r) => {
    const xy: number[] = [];
    for (const pt of ring) xy.push(pt.X, pt.Y);
    const a = ringArea(xy);
    if ((r === 0) !== (a > 0)) {
      const rev: number[] = [];
      for (let k = xy.length - 2; k >= 0; k -= 2) rev.push(xy[k] as number, xy[k + 1] as number);
      b.addRing(rev, 0, rev.length);
    } else b.addRing(xy, 0, xy.length);
  });
  const piece = b.pieceRings.length - 1;
  const ringStart = b.pieceRings[piece] as number;
  b.endPiece(coverage);
  // Record edges lying on the tile's own boundary lines.
  for (let r = ringStart; r < b.ringOffsets.length - 1; r++) {
    const s = b.ringOffsets[r] as number, e = b.ringOffsets[r + 1] as number;
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      const x0 = b.coords[2 * k] as number, y0 = b.coords[2 * k + 1] as number;
      const x1 = b.coords[2 * n] as number, y1 = b.coords[2 * n + 1] as number;
      if (x0 === x1 && (x0 === tb[0] || x0 === tb[2])) {
        // side: 0 when the piece lies left of the line (line is the tile's right edge).
        push(b, `v:${x0}`, Math.min(y0, y1), Math.max(y0, y1), piece, x0 === tb[2] ? 0 : 1);
      } else if (y0 === y1 && (y0 === tb[1] || y0 === tb[3])) {
        push(b, `h:${y0}`, Math.min(x0, x1), Math.max(x0, x1), piece, y0 === tb[3] ? 0 : 1);
      }
    }
  }
}

function push(b: Builder, key: string, lo: number, hi: number, piece: number, side: number): void {
  if (hi <= lo) return;
  let list = b.lines.get(key);
  if (!list) b.lines.set(key, (list = []));
  list.push(lo, hi, piece, side);
}

/** Pair stretches from the two sides of each tile line that overlap with positive length. */
function matchSeams(b: Builder): void {
  for (const list of b.lines.values()) {
    const n = list.length / 4;
    const lows: number[] = [], highs: number[] = [];
    for (let k = 0; k < n; k++) (list[4 * k + 3] === 0 ? lows : highs).push(k);
    if (lows.length === 0 || highs.length === 0) continue;
    const byLo = (a: number, c: number) => (list[4 * a] as number) - (list[4 * c] as number);
    lows.sort(byLo);
    highs.sort(byLo);
    let h = 0;
    for (const l of lows) {
      const l0 = list[4 * l] as number, l1 = list[4 * l + 1] as number;
      while (h < highs.length && (list[4 * (highs[h] as number) + 1] as number) <= l0) h++;
      for (let q = h; q < highs.length; q++) {
        const k = highs[q] as number;
        const k0 = list[4 * k] as number;
        if (k0 >= l1) break;
        const len = Math.min(l1, list[4 * k + 1] as number) - Math.max(l0, k0);
        if (len > 0) {
          b.seamA.push(list[4 * l + 2] as number);
          b.seamB.push(list[4 * k + 2] as number);
          b.seamLen.push(len);
        }
      }
    }
  }
}
