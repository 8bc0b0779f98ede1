/**
 * Output side of the tiled union (open-regions.ts): the growable buffers pieces are written to, the emitters for
 * the fast paths and clipper results, and the seam matching that lets features stitch pieces across tile lines.
 */
import type ClipperLib from 'clipper-lib';
import type { PolygonSet } from '../layout/types';
import { GrowU32 } from '../layout/grow-buffer';
import { ringArea } from './ring';
import type { Box } from './types';

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
  /**
   * Optional: per piece the lowest and highest y of its points (dbu), two per piece. The two-thread union provides
   * it (each thread for its own tiles), so row bands of the raster skip pieces without reading their points.
   */
  pieceY?: Float64Array;
  /** Coverage-only rings (signed: counter-clockwise adds, clockwise subtracts), dbu, float coordinates. */
  coverageCoords: Float64Array;
  coverageRingOffsets: Uint32Array;
}

export class Builder {
  /** Ring points (growable typed buffer: pushing ~10⁷ numbers into a JS array dominated the union). */
  coords: Float64Array;
  coordLen = 0;
  /** Typed, growable (a million pieces as JS number arrays cost more in GC than the union itself). */
  ringOffsets = new GrowU32(1 << 12);
  pieceRings = new GrowU32(1 << 12);
  seamA: number[] = [];
  seamB: number[] = [];
  seamLen: number[] = [];
  pieceCoverage = new GrowU32(1 << 12);
  /** `expectedCoords`: about the input's coordinate count (isolated polygons pass through), so growing is rare. */
  constructor(expectedCoords = 1 << 16) {
    this.coords = new Float64Array(Math.max(1 << 12, Math.ceil(expectedCoords * 1.05) + 1024));
    this.ringOffsets.push(0);
    this.pieceRings.push(0);
  }
  covCoords: number[] = [];
  covRingOffsets: number[] = [0];
  /** Tile-line stretches: key "v:X" / "h:Y" → [lo, hi, piece, side] flat quadruples. side 0 = piece below/left. */
  lines = new Map<string, number[]>();

  /** Room for `n` more coordinates; returns the (possibly replaced) buffer. */
  reserve(n: number): Float64Array {
    if (this.coordLen + n > this.coords.length) {
      const grown = new Float64Array(Math.max(2 * this.coords.length, this.coordLen + n));
      grown.set(this.coords.subarray(0, this.coordLen));
      this.coords = grown;
    }
    return this.coords;
  }
  addRing(xy: ArrayLike<number>, start: number, end: number): void {
    const d = this.reserve(end - start);
    let o = this.coordLen;
    for (let k = start; k < end; k++) d[o++] = xy[k] as number;
    this.coordLen = o;
    this.ringOffsets.push(o / 2);
  }
  /** Ring copied from a Float64Array in order (forward) or reversed point order, without temporary arrays. */
  addRingF64(xy: Float64Array, start: number, end: number, reverse: boolean): void {
    const d = this.reserve(end - start);
    let o = this.coordLen;
    if (!reverse) for (let k = start; k < end; k++) d[o++] = xy[k] as number;
    else
      for (let k = end - 2; k >= start; k -= 2) {
        d[o++] = xy[k] as number;
        d[o++] = xy[k + 1] as number;
      }
    this.coordLen = o;
    this.ringOffsets.push(o / 2);
  }
  endPiece(coverage = 1): number {
    this.pieceRings.push(this.ringOffsets.length - 1);
    this.pieceCoverage.push(coverage);
    return this.pieceRings.length - 2;
  }
}

export function finishRegions(b: Builder, dbuUm: number, region: Box, tile: number): OpenRegions {
  return {
    dbuUm,
    regionDbu: region,
    // A view when the buffer is nearly full (no 10⁸-byte copy), a trimmed copy when much of it is unused.
    coords: b.coordLen >= 0.75 * b.coords.length ? b.coords.subarray(0, b.coordLen) : b.coords.slice(0, b.coordLen),
    ringOffsets: b.ringOffsets.data.slice(0, b.ringOffsets.length),
    ringCount: b.ringOffsets.length - 1,
    pieceRings: b.pieceRings.data.slice(0, b.pieceRings.length),
    pieceCount: b.pieceRings.length - 1,
    seamA: Uint32Array.from(b.seamA),
    seamB: Uint32Array.from(b.seamB),
    seamLen: Float64Array.from(b.seamLen),
    tileDbu: tile,
    pieceCoverage: Uint8Array.from(b.pieceCoverage.view()),
    coverageCoords: Float64Array.from(b.covCoords),
    coverageRingOffsets: Uint32Array.from(b.covRingOffsets),
  };
}

/** Add a ring for coverage with orientation chosen so it adds (sign 1) or removes (−1) its own signed area. */
export function addCoverageRing(b: Builder, xy: number[], sign: number): void {
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

export function emitRect(set: PolygonSet, p: number, b: Builder): void {
  const s2 = 2 * (set.offsets[p] as number);
  // Reversed point order of a clockwise rectangle: p0, p3, p2, p1 (the same ring as before, started at p3).
  b.addRingF64(set.coords, s2, s2 + 8, ringArea(set.coords, s2, s2 + 8) < 0);
  b.endPiece();
}

/** An isolated rectangle crossing the tile boundary: its part inside the tile, with seams on the tile lines. */
export function emitClippedRect(polyBox: Float64Array, p: number, tb: Box, b: Builder): void {
  const x0 = Math.max(polyBox[4 * p] as number, tb[0]), y0 = Math.max(polyBox[4 * p + 1] as number, tb[1]);
  const x1 = Math.min(polyBox[4 * p + 2] as number, tb[2]), y1 = Math.min(polyBox[4 * p + 3] as number, tb[3]);
  if (x1 <= x0 || y1 <= y0) return; // touches the tile along a line only: no area here (as clipper)
  emitPieceFromPaths([[{ X: x0, Y: y0 }, { X: x1, Y: y0 }, { X: x1, Y: y1 }, { X: x0, Y: y1 }]], tb, b);
}

/** An isolated simple polygon strictly inside the tile, oriented counter-clockwise. */
export function emitRing(set: PolygonSet, p: number, b: Builder): void {
  const s2 = 2 * (set.offsets[p] as number), e2 = 2 * (set.offsets[p + 1] as number);
  b.addRingF64(set.coords, s2, e2, !(ringArea(set.coords, s2, e2) > 0));
  b.endPiece();
}

/** Add one piece (outer + holes), orienting outer CCW and holes CW, and record its stretches on tile lines. */
export function emitPieceFromPaths(rings: ClipperLib.Path[], tb: Box, b: Builder, coverage = 1): void {
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
  const ringStart = b.pieceRings.data[piece] as number;
  b.endPiece(coverage);
  // Record edges lying on the tile's own boundary lines.
  for (let r = ringStart; r < b.ringOffsets.length - 1; r++) {
    const s = b.ringOffsets.data[r] as number, e = b.ringOffsets.data[r + 1] as number;
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
export function matchSeams(b: Builder): void {
  matchSeamLines(b.lines, b.seamA, b.seamB, b.seamLen);
}

/** `matchSeams` over a map of tile-line stretches (pieces numbered as in the map), appending to the seam lists. */
export function matchSeamLines(lines: Map<string, number[]>, seamA: number[], seamB: number[], seamLen: number[]): void {
  for (const list of lines.values()) {
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
          seamA.push(list[4 * l + 2] as number);
          seamB.push(list[4 * k + 2] as number);
          seamLen.push(len);
        }
      }
    }
  }
}
