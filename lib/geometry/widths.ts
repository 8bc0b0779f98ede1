/**
 * Opening widths of one feature.
 *
 * Definitions (Euclidean disks inside the opening):
 * - maxWidth = diameter of the largest inscribed disk.
 * - thickness T(p) = diameter of the largest inscribed disk that contains p (the local-width map).
 * - A disk centre c is "self-centred" when the largest disk containing c is the one centred at c: 2·D(c) = T(c),
 *   D = distance to the boundary. These are the centres of the disks that set a width somewhere: the centre line
 *   of a trench, the centre of a hole, the centre line of each arm of an L.
 * - minWidth = smallest 2·D over self-centred centres: the trench width of a line, the diameter of a hole, the
 *   narrower arm of an L, the wall width of a ring. Convex corners do not count (their corner-branch centres lie in
 *   larger disks). Known limit: in a gradually tapered opening the chain of growing disks covers the narrow end,
 *   so minWidth reports the widest part of the taper.
 *
 * Method: the feature is sampled on a node lattice (lattice.ts), D by the exact Euclidean distance transform to
 * the nearest non-interior node, T by painting the maximal disks. For Manhattan features whose vertices lie on
 * a lattice of spacing g/2 (g = gcd of the vertex offsets) every nearest boundary point is a node, so D is exact
 * and so are the widths (widthExact). Otherwise the step is 1/5 of the mean width 2·area/perimeter (stepsPerWidth),
 * coarser when the node cap (maxNodes) demands it, and reported in widthStepUm. Lattice D overestimates the true
 * distance by up to step·√2/2, so the narrowest self-centred node and the best largest-disk nodes are refined by
 * pattern search on the exact distance to the edges (polishLocal, refineLargestDisk); the tests hold a curved non-convex
 * shape (an annulus) to 2 % of its analytic width. A node counts as self-centred when no node with a strictly larger disk
 * covers it, so lattice noise can only raise minWidth. Axis-aligned rectangles, convex shapes and polygonised
 * circles are computed analytically.
 *
 * Cost: the lattice path is ~0.1–0.3 ms per feature (a few thousand nodes). The exact-distance pattern searches
 * reject most probes after one edge test (`distanceAbove`), and with a `WidthCache` congruent copies under
 * translation are measured once.
 */
import { maximalDiskCentres, squaredDistanceTransform } from './distance';
import { latticeInterior, type Lattice } from './lattice';
import { convexInscribedRadius, isConvexRing } from './convex-width';
import { polygonisedCircle } from './circle-width';
import type { Box } from './types';

export interface WidthOptions {
  /** Largest lattice (nodes) per feature; larger features use a coarser step (reported in widthStepUm). Default 4,096
   * (16× that for the exact Manhattan lattice). */
  maxNodes?: number;
  /** Lattice steps per mean width 2·area/perimeter (non-convex features off the exact lattice). Default 5. */
  stepsPerWidth?: number;
}

export interface WidthResult {
  minWidth: number;
  maxWidth: number;
  /** Lattice step used (dbu); 0 for the analytic rectangle path. */
  step: number;
  exact: boolean;
}

/**
 * Widths of shapes already measured, keyed by the rings translated to their bbox corner (`shapeKey`). Congruent
 * copies under translation (arrays of the same cell) are measured once; the copies share the first one's result.
 */
export type WidthCache = Map<string, WidthResult>;

/** Most shapes a cache keeps (beyond that, new shapes are measured but not stored), bounding its memory. */
const CACHE_LIMIT = 200_000;

/**
 * Translation-invariant key of a feature's rings: points relative to the bbox corner, each ring rotated to start
 * at its lowest-then-leftmost point, rings sorted. Exact on integer dbu.
 */
export function shapeKey(coords: ArrayLike<number>, rings: [number, number][], bbox: Box): string {
  const parts: string[] = [];
  for (const [s, e] of rings) {
    let m = s;
    for (let k = s + 1; k < e; k++) {
      const y = coords[2 * k + 1] as number, ym = coords[2 * m + 1] as number;
      if (y < ym || (y === ym && (coords[2 * k] as number) < (coords[2 * m] as number))) m = k;
    }
    let t = '';
    for (let q = 0; q < e - s; q++) {
      const k = m + q < e ? m + q : m + q - (e - s);
      t += `${(coords[2 * k] as number) - bbox[0]},${(coords[2 * k + 1] as number) - bbox[1]};`;
    }
    parts.push(t);
  }
  return parts.sort().join('|');
}

function gcd(a: number, b: number): number {
  a = Math.abs(a);
  b = Math.abs(b);
  while (b > 1e-9) [a, b] = [b, a % b];
  return a;
}

/**
 * Widths (dbu) of one feature given as rings (nonzero fill, possibly several abutting pieces).
 * @param bbox the feature's bbox (dbu); area in dbu²; perimeter in dbu (tile seams removed)
 */
export function featureWidths(coords: ArrayLike<number>, rings: [number, number][], bbox: Box, area: number, perimeter: number, opts: WidthOptions = {}, cache?: WidthCache): WidthResult {
  const maxNodes = opts.maxNodes ?? 4_096;
  const bw = bbox[2] - bbox[0], bh = bbox[3] - bbox[1];
  // Rectangle (possibly cut into tile pieces): all edges axis-aligned and the area fills the bbox.
  let manhattan = true;
  let g = 0;
  for (const [s, e] of rings) {
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      const xa = coords[2 * k] as number, ya = coords[2 * k + 1] as number;
      if (xa !== (coords[2 * n] as number) && ya !== (coords[2 * n + 1] as number)) manhattan = false;
      g = gcd(gcd(g, xa - bbox[0]), ya - bbox[1]);
    }
  }
  if (manhattan && Math.abs(area - bw * bh) <= 1e-9 * bw * bh) {
    const w = Math.min(bw, bh);
    return { minWidth: w, maxWidth: w, step: 0, exact: true };
  }
  // Convex single ring (round/octagonal holes, rotated bars): exact Chebyshev radius, min = max.
  // A polygonised circle measures as the circle it was drawn from (circle-width.ts), not its inscribed disk. Tested
  // before convexity: tile cuts leave points rounded to the dbu grid on its edges, which can make it look non-convex.
  const circle = rings.length === 1 ? polygonisedCircle(coords, rings[0]![0], rings[0]![1]) : null;
  if (circle) return { minWidth: circle.diameter, maxWidth: circle.diameter, step: 0, exact: true };
  if (rings.length === 1 && isConvexRing(coords, rings[0]![0], rings[0]![1])) {
    const w = 2 * convexInscribedRadius(coords, rings[0]![0], rings[0]![1]);
    return { minWidth: w, maxWidth: w, step: 0, exact: true };
  }
  const key = cache ? shapeKey(coords, rings, bbox) : '';
  const hit = cache?.get(key);
  if (hit) return hit;
  // Measured in the bbox's own frame: the lattice arithmetic is then identical for every translated copy, so a
  // cached result equals a fresh measurement bit for bit, and threads or tiles (each with its own cache) agree.
  const local = toBboxFrame(coords, rings, bbox);
  const res = latticeWidths(local.coords, local.rings, [0, 0, bw, bh], area, perimeter, manhattan, g, opts);
  if (cache && cache.size < CACHE_LIMIT) cache.set(key, res);
  return res;
}

/** The rings moved so the bbox's lower-left corner is the origin (exact: integer dbu differences). */
function toBboxFrame(coords: ArrayLike<number>, rings: [number, number][], bbox: Box): { coords: Float64Array; rings: [number, number][] } {
  let total = 0;
  for (const [s, e] of rings) total += e - s;
  const out = new Float64Array(2 * total);
  const moved: [number, number][] = [];
  let o = 0;
  for (const [s, e] of rings) {
    moved.push([o, o + e - s]);
    for (let k = s; k < e; k++, o++) {
      out[2 * o] = (coords[2 * k] as number) - bbox[0];
      out[2 * o + 1] = (coords[2 * k + 1] as number) - bbox[1];
    }
  }
  return { coords: out, rings: moved };
}

/** Distance buffer reused by every lattice measurement (results never keep it). */
let d2Scratch = new Float64Array(0);
let maskScratch = new Uint8Array(0);

/** The lattice method of the module doc (shapes that are neither rectangles nor convex). */
function latticeWidths(coords: ArrayLike<number>, rings: [number, number][], bbox: Box, area: number, perimeter: number, manhattan: boolean, g: number, opts: WidthOptions): WidthResult {
  const maxNodes = opts.maxNodes ?? 4_096;
  const bw = bbox[2] - bbox[0], bh = bbox[3] - bbox[1];
  let step: number;
  let exact = false;
  const nodesAt = (s: number) => (Math.ceil(bw / s) + 1) * (Math.ceil(bh / s) + 1);
  const meanWidth = perimeter > 0 ? (2 * area) / perimeter : Math.min(bw, bh);
  const exactCap = 16 * maxNodes;
  if (manhattan && g > 0 && nodesAt(g / 2) <= exactCap) {
    // Any divisor of g/2 keeps the lattice exact; refine to ≥ 40 nodes per mean width so disks centred near
    // junctions are sampled finely enough to cover their neighbours (the self-centred test is strict here).
    // Vertices on a fine dbu grid (g of a few dbu) make this lattice too big: then the general path is used.
    let k = Math.max(1, Math.ceil(g / 2 / (meanWidth / 8)));
    while (k > 1 && nodesAt(g / 2 / k) > exactCap) k--;
    step = g / 2 / k;
    exact = true;
  } else {
    step = meanWidth / (opts.stepsPerWidth ?? 5);
    if (nodesAt(step) > maxNodes) step = Math.sqrt((bw * bh) / maxNodes) * 1.05;
    while (nodesAt(step) > maxNodes) step *= 1.1;
  }
  const lat: Lattice = { x0: bbox[0], y0: bbox[1], step, nx: Math.ceil(bw / step - 1e-9) + 1, ny: Math.ceil(bh / step - 1e-9) + 1 };
  const nodes = lat.nx * lat.ny;
  if (maskScratch.length < nodes) maskScratch = new Uint8Array(Math.max(nodes, 2 * maskScratch.length));
  const mask = latticeInterior(coords, rings, lat, maskScratch.subarray(0, nodes));
  if (d2Scratch.length < nodes) d2Scratch = new Float64Array(Math.max(nodes, 2 * d2Scratch.length));
  const d2 = squaredDistanceTransform(mask, lat.nx, lat.ny, d2Scratch.subarray(0, nodes));
  let maxD2 = 0;
  for (let q = 0; q < d2.length; q++) if ((d2[q] as number) > maxD2 && (d2[q] as number) !== Infinity) maxD2 = d2[q] as number;
  if (maxD2 === 0) {
    // Thinner than the lattice: fall back to the mean width.
    const w = perimeter > 0 ? (2 * area) / perimeter : 0;
    return { minWidth: w, maxWidth: w, step, exact: false };
  }
  const sc = smallestSelfCentred(d2, lat.nx, lat.ny, exact ? 0 : 1);
  // Off the exact lattice, polish the narrowest centre on the exact distance within two steps (reaches the ridge
  // of a straight-sided trench, whose lattice nodes sit up to half a step off the centre line).
  const edges = edgeList(coords, rings);
  const minW = exact || sc.node < 0 ? sc.width : (2 * polishLocal(edges, lat, sc.node)) / step;
  // The largest disk's centre may lie between nodes (e.g. a Manhattan frame corner, where it touches a concave
  // corner): polish the best nodes by pattern search on the exact distance to the rings.
  const maxD = refineLargestDisk(edges, lat, d2);
  return { minWidth: Math.min(minW * step, 2 * maxD), maxWidth: 2 * maxD, step, exact };
}

/**
 * Smallest diameter (lattice units) among self-centred disk centres: centres c such that no disk centred at a
 * node b with D(b) > D(c) contains c. Checked in increasing D, so the first hit is the answer. `slack` (lattice
 * units) widens the covering disks: off the exact Manhattan lattice, D is measured to the nearest outside node
 * and can exceed the true distance by up to 0.71 step, which leaves lone nodes in sharp corners uncovered.
 */
function smallestSelfCentred(d2: Float64Array, nx: number, ny: number, slack: number): { width: number; node: number } {
  const tol = 1e-9;
  const centres = maximalDiskCentres(d2, nx, ny);
  const desc = centres.sort((a, b) => (d2[b] as number) - (d2[a] as number));
  for (let ci0 = desc.length - 1; ci0 >= 0; ci0--) {
    const c = desc[ci0] as number;
    const dc = Math.sqrt(d2[c] as number);
    const ci = c % nx, cj = (c - ci) / nx;
    let covered = false;
    // Neighbours first: lattice rounding breaks transitivity of disk containment, so a covering disk may belong
    // to a node that is not itself a maximal centre.
    for (let dj = -2; dj <= 2 && !covered; dj++) {
      for (let di = -2; di <= 2; di++) {
        const i = ci + di, j = cj + dj;
        if (i < 0 || j < 0 || i >= nx || j >= ny) continue;
        const q = d2[j * nx + i] as number;
        if (2 * Math.sqrt(q) > 2 * dc + tol && di * di + dj * dj <= (Math.sqrt(q) + slack) ** 2) {
          covered = true;
          break;
        }
      }
    }
    if (!covered) for (const b of desc) {
      const db = Math.sqrt(d2[b] as number);
      if (2 * db <= 2 * dc + tol) break;
      const bi = b % nx, bj = (b - bi) / nx;
      if ((bi - ci) ** 2 + (bj - cj) ** 2 <= (db + slack) ** 2) {
        covered = true;
        break;
      }
    }
    if (!covered) return { width: 2 * dc, node: c };
  }
  return { width: 0, node: -1 };
}

/** Ring edges as flat (ax, ay, dx, dy, |d|²) quintuples, built once per feature for the exact distance queries. */
function edgeList(coords: ArrayLike<number>, rings: [number, number][]): Float64Array {
  let total = 0;
  for (const [s, e] of rings) total += e - s;
  const out = new Float64Array(5 * total);
  let o = 0;
  for (const [s, e] of rings) {
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      const ax = coords[2 * k] as number, ay = coords[2 * k + 1] as number;
      const dx = (coords[2 * n] as number) - ax, dy = (coords[2 * n + 1] as number) - ay;
      out[o++] = ax;
      out[o++] = ay;
      out[o++] = dx;
      out[o++] = dy;
      out[o++] = dx * dx + dy * dy;
    }
  }
  return out;
}

/** Exact distance from (x, y) to the nearest edge of `edges` (edgeList form, dbu). */
function distanceToEdges(edges: Float64Array, x: number, y: number): number {
  let best = Infinity;
  for (let o = 0; o < edges.length; o += 5) {
    const ax = edges[o] as number, ay = edges[o + 1] as number, dx = edges[o + 2] as number, dy = edges[o + 3] as number;
    const l2 = edges[o + 4] as number;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    const ex = x - ax - t * dx, ey = y - ay - t * dy;
    const d2 = ex * ex + ey * ey;
    if (d2 < best) best = d2;
  }
  return Math.sqrt(best);
}

/** Edge offset that last rejected a probe in `distanceAbove` (a heuristic only: tried first next time). */
let lastRejecter = 0;

/**
 * Exact distance from (x, y) to `edges` when it exceeds `floor`, else −1. A probe of the pattern search is
 * rejected as soon as one edge is within `floor`; the edge that rejected the previous probe is tried first, so most
 * rejections cost one edge test. Same answers as comparing `distanceToEdges` with `floor`.
 */
function distanceAbove(edges: Float64Array, x: number, y: number, floor: number): number {
  const m = edges.length;
  if (m === 0) return Infinity;
  let best = Infinity;
  const first = lastRejecter < m ? lastRejecter : 0;
  for (let q = 0; q < m; q += 5) {
    let o = first + q;
    if (o >= m) o -= m;
    const ax = edges[o] as number, ay = edges[o + 1] as number, dx = edges[o + 2] as number, dy = edges[o + 3] as number;
    const l2 = edges[o + 4] as number;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    const ex = x - ax - t * dx, ey = y - ay - t * dy;
    const d2 = ex * ex + ey * ey;
    if (Math.sqrt(d2) <= floor) {
      lastRejecter = o;
      return -1;
    }
    if (d2 < best) best = d2;
  }
  return Math.sqrt(best);
}

/** The 16 pattern-search directions (cos, sin of k·π/8). */
const DIR_X = Float64Array.from({ length: 16 }, (_, k) => Math.cos((k * Math.PI) / 8));
const DIR_Y = Float64Array.from({ length: 16 }, (_, k) => Math.sin((k * Math.PI) / 8));

/**
 * Radius (dbu) of the largest inscribed disk: the best lattice nodes refined by a 16-direction pattern search
 * with halving steps (moves shorter than the current radius never leave the opening).
 */
function refineLargestDisk(edges: Float64Array, lat: Lattice, d2: Float64Array): number {
  // The eight best nodes (ties broken by position); of these, up to three more than two steps apart seed the
  // search. Neighbouring top nodes sit on the same maximum and their searches end at the same point.
  const top: number[] = [];
  for (let q = 0; q < d2.length; q++) {
    const v = d2[q] as number;
    if (v === 0 || v === Infinity) continue;
    if (top.length < 8) top.push(q);
    else if (v > (d2[top[7] as number] as number)) top[7] = q;
    else continue;
    for (let k = top.length - 1; k > 0 && (d2[top[k] as number] as number) > (d2[top[k - 1] as number] as number); k--) {
      const t = top[k] as number;
      top[k] = top[k - 1] as number;
      top[k - 1] = t;
    }
  }
  const starts: number[] = [];
  for (const q of top) {
    if (starts.length === 3) break;
    const qi = q % lat.nx, qj = (q - qi) / lat.nx;
    if (starts.every((s) => (s % lat.nx - qi) ** 2 + ((s - (s % lat.nx)) / lat.nx - qj) ** 2 > 4)) starts.push(q);
  }
  // Lattice D can exceed the true distance off the exact lattice: use exact distances only.
  let best = 0;
  for (const q of starts) {
    const i = q % lat.nx, j = (q - i) / lat.nx;
    let x = lat.x0 + i * lat.step, y = lat.y0 + j * lat.step;
    let d = distanceToEdges(edges, x, y);
    let h = lat.step;
    for (let it = 0; it < 120 && h > lat.step * 1e-6; it++) {
      let moved = false;
      for (let k = 0; k < 16; k++) {
        if (!(h < d)) break;
        const nxp = x + (DIR_X[k] as number) * h, nyp = y + (DIR_Y[k] as number) * h;
        const nd = distanceAbove(edges, nxp, nyp, d + 1e-12);
        if (nd > d + 1e-12) {
          x = nxp;
          y = nyp;
          d = nd;
          moved = true;
          break;
        }
      }
      if (!moved) h /= 2;
    }
    if (d > best) best = d;
  }
  return best;
}

/** Largest exact distance to the rings within two lattice steps of node q (pattern search, dbu). */
function polishLocal(edges: Float64Array, lat: Lattice, q: number): number {
  const i = q % lat.nx, j = (q - i) / lat.nx;
  const cx = lat.x0 + i * lat.step, cy = lat.y0 + j * lat.step;
  let x = cx, y = cy;
  let d = distanceToEdges(edges, x, y);
  let h = lat.step / 2;
  for (let it = 0; it < 80 && h > lat.step * 1e-6; it++) {
    let moved = false;
    for (let k = 0; k < 16; k++) {
      const nxp = x + (DIR_X[k] as number) * h, nyp = y + (DIR_Y[k] as number) * h;
      if (Math.hypot(nxp - cx, nyp - cy) > 2 * lat.step) continue;
      if (!(h < d)) break;
      const nd = distanceAbove(edges, nxp, nyp, d + 1e-12);
      if (nd > d + 1e-12) {
        x = nxp;
        y = nyp;
        d = nd;
        moved = true;
        break;
      }
    }
    if (!moved) h /= 2;
  }
  return d;
}
