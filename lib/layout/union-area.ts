/**
 * Area of the union of a polygon set (nonzero fill; readers emit counter-clockwise rings, so overlapping polygons
 * count once), computed with clipper-lib on integer dbu, tiled: polygons are bucketed by square tile, each bucket's
 * union is intersected with its tile, and the tile areas are summed. One global union is super-linear in clipper;
 * tiles keep it linear (see stack.md).
 *
 * Exactness: clipper computes each bucket's union on integer dbu; the union's rings are then clipped to the tile
 * in float64 (Sutherland–Hodgman against the tile square, signed ring areas summed), so tile borders add no
 * rounding. The result is exact for axis-parallel geometry. Where two slanted edges of overlapping polygons cross,
 * clipper rounds the crossing point to the integer grid (≤ 0.5 dbu per coordinate), as any integer union does.
 */
import { polygonSetsBbox } from './bbox';
import ClipperLib from 'clipper-lib';
import type { FlatLayout, PolygonSet } from './types';

export interface UnionAreaOptions {
  /** Target polygons per tile (default 256). */
  perTile?: number;
}

function polygonPath(set: PolygonSet, p: number, dx: number, dy: number): ClipperLib.Path {
  const from = set.offsets[p] as number;
  const to = set.offsets[p + 1] as number;
  const path: ClipperLib.Path = new Array(to - from);
  for (let k = from; k < to; k++) path[k - from] = { X: (set.coords[2 * k] as number) - dx, Y: (set.coords[2 * k + 1] as number) - dy };
  return path;
}

interface Scratch {
  a: number[];
  b: number[];
}

/** Signed area (dbu²) of ring `path` clipped to the square [0, side]², in float64 (Sutherland–Hodgman). */
function clippedRingArea(path: ClipperLib.Path, side: number, scratch: Scratch): number {
  let src = scratch.a;
  let dst = scratch.b;
  src.length = 0;
  for (const p of path) src.push(p.X, p.Y);
  // Four half-planes: x ≥ 0, x ≤ side, y ≥ 0, y ≤ side. axis 0 = x, 1 = y; keep v·sign ≥ bound.
  const planes: [number, number, number][] = [[0, 1, 0], [0, -1, -side], [1, 1, 0], [1, -1, -side]];
  for (const [axis, sign, bound] of planes) {
    dst.length = 0;
    const n = src.length >> 1;
    if (n === 0) break;
    for (let k = 0; k < n; k++) {
      const ax = src[2 * k] as number, ay = src[2 * k + 1] as number;
      const j = (k + 1) % n;
      const bx = src[2 * j] as number, by = src[2 * j + 1] as number;
      const da = (axis === 0 ? ax : ay) * sign - bound;
      const db = (axis === 0 ? bx : by) * sign - bound;
      if (da >= 0) dst.push(ax, ay);
      if ((da >= 0) !== (db >= 0)) {
        const t = da / (da - db);
        dst.push(ax + t * (bx - ax), ay + t * (by - ay));
      }
    }
    const tmp = src;
    src = dst;
    dst = tmp;
  }
  let a2 = 0;
  const n = src.length >> 1;
  for (let k = 0; k < n; k++) {
    const j = (k + 1) % n;
    a2 += (src[2 * k] as number) * (src[2 * j + 1] as number) - (src[2 * j] as number) * (src[2 * k + 1] as number);
  }
  return a2 / 2;
}

const GROUP = 32;

/**
 * Nonzero union of `paths`: groups of GROUP are united, then the results pairwise, until one remains.
 * Heavily overlapping input (stacked array instances) shrinks at every level, which keeps clipper's sweep small;
 * a single union of thousands of stacked polygons is many times slower.
 */
function groupedUnion(clipper: ClipperLib.Clipper, paths: ClipperLib.Paths): ClipperLib.Paths {
  if (paths.length === 0) return [];
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

export function unionArea(set: PolygonSet, opts: UnionAreaOptions = {}): { areaDbu2: number } {
  const n = set.count;
  if (n === 0) return { areaDbu2: 0 };
  const bx0 = new Float64Array(n), by0 = new Float64Array(n), bx1 = new Float64Array(n), by1 = new Float64Array(n);
  let X0 = Infinity, Y0 = Infinity, X1 = -Infinity, Y1 = -Infinity;
  for (let p = 0; p < n; p++) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let k = set.offsets[p] as number; k < (set.offsets[p + 1] as number); k++) {
      const x = set.coords[2 * k] as number;
      const y = set.coords[2 * k + 1] as number;
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
    bx0[p] = x0; by0[p] = y0; bx1[p] = x1; by1[p] = y1;
    if (x0 < X0) X0 = x0;
    if (y0 < Y0) Y0 = y0;
    if (x1 > X1) X1 = x1;
    if (y1 > Y1) Y1 = y1;
  }
  if (!(X0 <= X1)) return { areaDbu2: 0 };
  const perTile = opts.perTile ?? 256;
  const W = Math.max(1, X1 - X0), H = Math.max(1, Y1 - Y0);
  const tiles = Math.max(1, Math.ceil(n / perTile));
  let side = Math.max(1, Math.ceil(Math.sqrt((W * H) / tiles)));
  while (Math.ceil(W / side) * Math.ceil(H / side) > 4 * tiles + 16) side *= 2;
  const nx = Math.max(1, Math.ceil(W / side));
  const ny = Math.max(1, Math.ceil(H / side));
  const tileOf = (v: number, v0: number, m: number) => Math.min(m - 1, Math.max(0, Math.floor((v - v0) / side)));

  // Counting sort of (tile, polygon) entries.
  const count = new Uint32Array(nx * ny + 1);
  for (let p = 0; p < n; p++) {
    const i0 = tileOf(bx0[p] as number, X0, nx), i1 = tileOf(bx1[p] as number, X0, nx);
    const j0 = tileOf(by0[p] as number, Y0, ny), j1 = tileOf(by1[p] as number, Y0, ny);
    for (let j = j0; j <= j1; j++) for (let i = i0; i <= i1; i++) (count[j * nx + i + 1] as number)++;
  }
  for (let t = 1; t <= nx * ny; t++) count[t] = (count[t] as number) + (count[t - 1] as number);
  const entries = new Uint32Array(count[nx * ny] as number);
  const fill = count.slice(0, nx * ny);
  for (let p = 0; p < n; p++) {
    const i0 = tileOf(bx0[p] as number, X0, nx), i1 = tileOf(bx1[p] as number, X0, nx);
    const j0 = tileOf(by0[p] as number, Y0, ny), j1 = tileOf(by1[p] as number, Y0, ny);
    for (let j = j0; j <= j1; j++) for (let i = i0; i <= i1; i++) entries[(fill[j * nx + i] as number)++] = p;
  }

  let area = 0;
  const clipper = new ClipperLib.Clipper();
  const scratch: Scratch = { a: [], b: [] };
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const t = j * nx + i;
      const from = count[t] as number;
      const to = count[t + 1] as number;
      if (from === to) continue;
      const tx0 = X0 + i * side, ty0 = Y0 + j * side;
      // Paths are shifted to the tile origin so clipper stays in its fast 32-bit coordinate range.
      const paths: ClipperLib.Paths = [];
      for (let e = from; e < to; e++) paths.push(polygonPath(set, entries[e] as number, tx0, ty0));
      const merged = groupedUnion(clipper, paths);
      const single = nx === 1 && ny === 1;
      for (const path of merged) area += single ? ClipperLib.Clipper.Area(path) : clippedRingArea(path, side, scratch);
    }
  }
  return { areaDbu2: area };
}

export interface LayerSummaryRow {
  layer: number;
  datatype: number;
  polygons: number;
  areaUm2: number;
  /** [x0, y0, x1, y1] µm; null for an empty set. */
  bboxUm: [number, number, number, number] | null;
}

/** Per layer/datatype: flattened polygon count, union area (µm²) and bounding box (µm). */
export function layerSummary(layout: FlatLayout): LayerSummaryRow[] {
  const s = layout.dbuUm;
  return layout.layers.map((set) => {
    const box = polygonSetsBbox([set]);
    return {
      layer: set.layer,
      datatype: set.datatype,
      polygons: set.count,
      areaUm2: unionArea(set).areaDbu2 * s * s,
      bboxUm: box ? [box[0] * s, box[1] * s, box[2] * s, box[3] * s] : null,
    };
  });
}
