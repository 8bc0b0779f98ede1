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
 *   so minWidth reports the widest part of the taper. Known limit of the sampled lattice (non-Manhattan openings that
 *   are neither convex nor polygonised circles, and Manhattan ones beyond the compressed lattice's node cap): a narrow
 *   stub only a node or two wide and long can be missed, so minWidth reports the next wider part — on seeded unions of
 *   2–4 trenches the sampled lattice put 12 % of openings > 1 % off (bench/widths-sampled-vs-exact.ts), which
 *   understates aspect ratios there.
 *
 * Manhattan openings (every edge axis-parallel), on any vertex grid: the compressed lattice (manhattan-lines.ts,
 * manhattan-widths.ts) — lines at every vertex coordinate, at the midline of every pair of facing edges, where those
 * plateaus end, refined near the vertex lines. D is exact at every node (Felzenszwalb–Huttenlocher distance transform
 * on the non-uniform positions), every trench midline has nodes, off-lattice maxima are solved or climbed to on the
 * exact edges, and the self-centred test is finished on the exact distance (a cover search between nodes), so these
 * widths are exact (widthExact): equal to a brute-force 1/2-dbu grid on seeded 1 nm-grid unions
 * (tests/geometry/manhattan-widths.test.ts), where the uniform exact lattice below differs it misses a covering disk in
 * a thin sliver between its nodes. Known limit: maxWidth climbs (at most 8) from the cells whose Lipschitz bound beats
 * the best node, and a climb can stall at a neck between two corners when its snap misses a site of the junction disk:
 * on the 60 k lattice openings of the bench layout that left 4 maxWidths 0.02–0.33 % low until the climbs' snap left
 * out corners that cannot be nearest points and combined 8 sites (those 4 and 2 more now match a brute-force maximum;
 * 29, up to 9 % low, with the earlier 4-seed climbs). No proof covers every shape. Above
 * the node cap (16·maxNodes) the uniform paths below are used. Cost: lines and passes over a few hundred to a few
 * thousand nodes, a few snaps or climbs, all in buffers reused from opening to opening; on the bench dump
 * (bench/widths-run.ts) ≈ 1.8× less CPU than the first version (≈ 210 µs per opening at load 4–5), same results bit
 * for bit.
 *
 * Uniform paths: the feature is sampled on a node lattice (lattice.ts), D by the exact Euclidean distance transform to
 * the nearest non-interior node, T by painting the maximal disks. For Manhattan features whose vertices lie on
 * a lattice of spacing g/2 (g = gcd of the vertex offsets) every nearest boundary point is a node, so D is exact
 * and so are the widths (widthExact). Otherwise the step is 1/5 of the mean width 2·area/perimeter (stepsPerWidth),
 * coarser when the node cap (maxNodes) demands it, and reported in widthStepUm. Lattice D overestimates the true
 * distance by up to step·√2/2, so the narrowest self-centred node and the best largest-disk nodes are refined by
 * pattern search on the exact distance to the edges (polishLocal, refineLargestDisk, disk-search.ts), which lands
 * exactly on the local maximum it approaches — a medial-axis vertex or a plateau midline — once close
 * (ridge-snap.ts, accepted only where the directions to the nearest boundary points certify a maximum; the polish of
 * the narrowest centre takes the nearest certified maximum, the largest-disk searches the largest); a wider snap
 * sets a floor where the search stalls on a slanted crease or a plateau below a nearby larger maximum. The tests hold
 * a curved non-convex shape (an annulus) to 2 % of its analytic width and Manhattan T/L/cross/comb openings off the
 * exact lattice to 1e-6 dbu. A node counts as self-centred when no node with a strictly larger disk covers it, so
 * lattice noise can only raise minWidth; the uncovered nodes up to one step above the narrowest are polished too
 * (narrowestPolished), since lattice D can rank a trench plateau above a via beside it (on the bench dump that put
 * 142 of the 2 991 sampled-path minWidths up to 2× too wide). Those other starts count where they land on a maximum
 * up to drawing noise (walls of a rotated arm, rounded to the grid, converge by ~1e-4 rad, so its centre line has no
 * strict maximum: an L of 3 and 4 µm arms at 5° or 40° read 4 µm before). A first polish that stalls below half its
 * node's lattice radius on no maximum is a lattice artefact beside a corner of a stub about two steps wide (a 1 µm
 * arm of a rotated L read 0.056 µm; 5 openings of the bench dump 6–510 dbu, now within 0–113 dbu of brute force):
 * it does not count. Known limit: such a stub can still read up to 25 % narrow (0.77–0.94 µm for that 1 µm arm at 4 of
 * 90 angles). Largest disks at reflex corners get extra climbs (reflex-seeds.ts); an L at 17° or 41° still reads 4.00
 * instead of 4.20 µm. Axis-aligned
 * rectangles, convex shapes and polygonised circles are
 * computed analytically.
 *
 * Cost: the lattice path is ~40–80 µs per feature (a few thousand nodes, a few hundred inside): the lattice passes
 * run over the interior nodes only, kept as runs per row (lattice-runs.ts), in buffers reused from feature to
 * feature. The pattern searches reject most probes after one edge test (`distanceAbove`), and with a `WidthCache`
 * congruent copies under translation are measured once (width-cache.ts).
 */
import type { Lattice } from './lattice';
import { interiorRuns, lastRoots, runDistanceTransform, runMaximalCentres, runMaxD2, sortByD2Descending } from './lattice-runs';
import { climbed, polishLocal, refineLargestDisk, seededBest } from './disk-search';
import { isNearLocalMaximum } from './ridge-snap';
import { distanceToEdges, edgeList } from './edge-distance';
import { reflexSeededMaximum } from './reflex-seeds';
import { convexInscribedRadius, isConvexRing } from './convex-width';
import { polygonisedCircle } from './circle-width';
import { manhattanLines } from './manhattan-lines';
import { manhattanWidths } from './manhattan-widths';
import type { Box } from './types';
import { lookup, store, type WidthCache } from './width-cache';

export interface WidthOptions {
  /** Largest lattice (nodes) per feature; larger features use a coarser step (reported in widthStepUm). Default 4,096
   * (16× that for the exact Manhattan lattice). */
  maxNodes?: number;
  /** Lattice steps per mean width 2·area/perimeter (non-convex features off the exact lattice). Default 5. */
  stepsPerWidth?: number;
  /** Measure on the sampled lattice even where the exact Manhattan lattice applies (tests compare the two). */
  sampledLattice?: boolean;
  /** Skip the compressed Manhattan lattice: the uniform lattices only (tests and benches compare the methods). */
  uniformLattice?: boolean;
}

export interface WidthResult {
  minWidth: number;
  maxWidth: number;
  /** Lattice step used (dbu); 0 for the analytic rectangle path. */
  step: number;
  exact: boolean;
}

/**
 * Widths of shapes already measured (width-cache.ts), keyed by the rings translated to their bbox corner: the same
 * shapes as equal `shapeKey` strings. Congruent copies under translation (arrays of the same cell) are measured once;
 * the copies share the first one's result.
 */
export type { WidthCache };

/** Most shapes a cache keeps (beyond that, new shapes are measured but not stored), bounding its memory. */
const CACHE_LIMIT = 200_000;

/**
 * Translation-invariant key of a feature's rings (the equality the cache keys by, width-cache.ts): points relative to the bbox corner, each ring rotated to start
 * at its lowest-then-leftmost point, rings sorted. Exact on integer dbu.
 */
export function shapeKey(coords: ArrayLike<number>, rings: [number, number][], bbox: Box): string {
  const parts: string[] = [];
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
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
  while (b > 1e-9) {
    const t = a % b;
    a = b;
    b = t;
  }
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
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
    for (let k = s; k < e && manhattan; k++) {
      const n = k + 1 < e ? k + 1 : s;
      if ((coords[2 * k] as number) !== (coords[2 * n] as number) && (coords[2 * k + 1] as number) !== (coords[2 * n + 1] as number)) manhattan = false;
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
  if (cache) {
    const hit = lookup(cache, coords, rings, bbox);
    if (hit) return hit;
  }
  // Measured in the bbox's own frame: the lattice arithmetic is then identical for every translated copy, so a
  // cached result equals a fresh measurement bit for bit, and threads or tiles (each with its own cache) agree.
  const local = toBboxFrame(coords, rings, bbox);
  const res = latticeWidths(local, localRings(rings), [0, 0, bbox[2] - bbox[0], bbox[3] - bbox[1]], area, perimeter, manhattan, opts);
  if (cache && cache.size < CACHE_LIMIT) store(cache, res);
  return res;
}

/** gcd of the vertex offsets from the bbox corner (0, 0) of rings already in the bbox frame. */
function vertexGcd(coords: ArrayLike<number>, rings: [number, number][]): number {
  let g = 0;
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
    for (let k = s; k < e; k++) g = gcd(gcd(g, coords[2 * k] as number), coords[2 * k + 1] as number);
  }
  return g;
}

let frameS = new Float64Array(256);
const ringsS: [number, number][] = [[0, 0]];

/** The rings moved so the bbox's lower-left corner is the origin (exact: integer dbu differences), into module
 * scratch (valid until the next feature; the rings keep their point ranges, see localRings). */
function toBboxFrame(coords: ArrayLike<number>, rings: [number, number][], bbox: Box): Float64Array {
  let total = 0;
  for (let ri = 0; ri < rings.length; ri++) total += rings[ri]![1] - rings[ri]![0];
  if (frameS.length < 2 * total) frameS = new Float64Array(Math.max(2 * total, 2 * frameS.length));
  const out = frameS;
  let o = 0;
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
    for (let k = s; k < e; k++, o++) {
      out[2 * o] = (coords[2 * k] as number) - bbox[0];
      out[2 * o + 1] = (coords[2 * k + 1] as number) - bbox[1];
    }
  }
  return out;
}

/** Point ranges of the rings as toBboxFrame packs them (one reused pair for the common single ring). */
function localRings(rings: [number, number][]): [number, number][] {
  if (rings.length === 1) {
    const r = ringsS[0]!;
    r[0] = 0;
    r[1] = rings[0]![1] - rings[0]![0];
    return ringsS;
  }
  const moved: [number, number][] = [];
  let o = 0;
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
    moved.push([o, o + e - s]);
    o += e - s;
  }
  return moved;
}

/** Refinement step of the compressed Manhattan lattice near vertex lines, per mean width 2·area/perimeter. */
const COMPRESSED_STEPS_PER_WIDTH = 4;

/** Manhattan openings the compressed lattice declined (node cap) since the process started: benches report it. */
export let compressedFallbacks = 0;

/** The lattice method of the module doc (shapes that are neither rectangles nor convex). */
function latticeWidths(coords: ArrayLike<number>, rings: [number, number][], bbox: Box, area: number, perimeter: number, manhattan: boolean, opts: WidthOptions): WidthResult {
  const maxNodes = opts.maxNodes ?? 4_096;
  const bw = bbox[2] - bbox[0], bh = bbox[3] - bbox[1];
  let step: number;
  let exact = false;
  const nodesAt = (s: number) => (Math.ceil(bw / s) + 1) * (Math.ceil(bh / s) + 1);
  const meanWidth = perimeter > 0 ? (2 * area) / perimeter : Math.min(bw, bh);
  const exactCap = 16 * maxNodes;
  if (manhattan && !opts.sampledLattice && !opts.uniformLattice) {
    // Compressed lattice (manhattan-lines.ts): exact on any vertex grid; beyond its node cap, the paths below.
    const h = meanWidth / COMPRESSED_STEPS_PER_WIDTH;
    const lines = manhattanLines(coords, rings, h, exactCap);
    const w = lines ? manhattanWidths(lines, edgeList(coords, rings, true)) : null;
    if (w) return { minWidth: w.minWidth, maxWidth: w.maxWidth, step: h, exact: true };
    compressedFallbacks++;
  }
  // gcd of the vertex offsets: decides whether the exact uniform Manhattan lattice is small enough.
  const g = manhattan ? vertexGcd(coords, rings) : 0;
  if (manhattan && g > 0 && nodesAt(g / 2) <= exactCap && !opts.sampledLattice) {
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
  // Interior nodes as runs per row (lattice-runs.ts): the passes below touch interior nodes only.
  const runs = interiorRuns(coords, rings, lat);
  const d2 = runDistanceTransform(runs, lat.nx, lat.ny);
  const maxD2 = runMaxD2(runs, d2, lat.nx, lat.ny);
  if (maxD2 === 0) {
    // Thinner than the lattice: fall back to the mean width.
    const w = perimeter > 0 ? (2 * area) / perimeter : 0;
    return { minWidth: w, maxWidth: w, step, exact: false };
  }
  const sc = smallestSelfCentred(d2, runMaximalCentres(runs, d2, lat.nx, lat.ny), maxD2, lat.nx, lat.ny, exact ? 0 : 1);
  // Off the exact lattice, polish the narrowest centre on the exact distance within two steps (reaches the ridge
  // of a straight-sided trench, whose lattice nodes sit up to half a step off the centre line).
  const edges = edgeList(coords, rings, true);
  const minW = exact || sc.node < 0 ? sc.width : (2 * narrowestPolished(edges, lat, sc.node, (sc.width / 2) * step)) / step;
  // The largest disk's centre may lie between nodes (e.g. a Manhattan frame corner, where it touches a concave
  // corner): polish the best nodes by pattern search on the exact distance to the rings.
  let maxD = refineLargestDisk(edges, lat, d2, runs);
  const minCap = 2 * seededBest;
  // Off the exact lattice, junction disks at reflex corners can hide behind the arms' plateaus (reflex-seeds.ts).
  if (!exact) maxD = reflexSeededMaximum(coords, rings, edges, step, maxD);
  return { minWidth: Math.min(minW * step, minCap), maxWidth: 2 * maxD, step, exact };
}

/**
 * Smallest diameter (lattice units) among self-centred disk centres: centres c such that no disk centred at a
 * node b with D(b) > D(c) contains c. Checked in increasing D, so the first hit is the answer. `slack` (lattice
 * units) widens the covering disks: off the exact Manhattan lattice, D is measured to the nearest outside node
 * and can exceed the true distance by up to 0.71 step, which leaves lone nodes in sharp corners uncovered.
 */
function smallestSelfCentred(d2: Float64Array, centres: Int32Array, maxD2: number, nx: number, ny: number, slack: number): { width: number; node: number } {
  const tol = 1e-9;
  // Largest first, ties in node order (a stable sort of the row-major centres); √d2 from runMaximalCentres.
  const root = lastRoots();
  const desc = sortByD2Descending(centres, d2, maxD2);
  let first = -1;
  nAlt = 0;
  for (let ci0 = desc.length - 1; ci0 >= 0; ci0--) {
    const c = desc[ci0] as number;
    const dc = root[c] as number;
    const ci = c % nx, cj = (c - ci) / nx;
    let covered = false;
    // Neighbours first: lattice rounding breaks transitivity of disk containment, so a covering disk may belong
    // to a node that is not itself a maximal centre.
    for (let dj = -2; dj <= 2 && !covered; dj++) {
      for (let di = -2; di <= 2; di++) {
        const i = ci + di, j = cj + dj;
        if (i < 0 || j < 0 || i >= nx || j >= ny) continue;
        const rq = root[j * nx + i] as number;
        if (2 * rq > 2 * dc + tol && di * di + dj * dj <= (rq + slack) ** 2) {
          covered = true;
          break;
        }
      }
    }
    if (!covered) for (let bk = 0; bk < desc.length; bk++) {
      const b = desc[bk] as number;
      const db = root[b] as number;
      if (2 * db <= 2 * dc + tol) break;
      const bi = b % nx, bj = (b - bi) / nx;
      if ((bi - ci) ** 2 + (bj - cj) ** 2 <= (db + slack) ** 2) {
        covered = true;
        break;
      }
    }
    if (covered) continue;
    if (first < 0) {
      first = c;
      // On the exact lattice the first is the answer; off it, the nodes up to one step above are polished too.
      if (slack === 0) break;
    } else if (dc > (root[first] as number) + 1) break;
    if (nAlt < altS.length) altS[nAlt++] = c;
    else break;
  }
  return first < 0 ? { width: 0, node: -1 } : { width: 2 * (root[first] as number), node: first };
}

/** Uncovered nodes within one step of lattice D of the narrowest (set by smallestSelfCentred, off the exact lattice). */
const altS = new Int32Array(32);
let nAlt = 0;
const altD = new Float64Array(32);

/**
 * Polished narrowest centre off the exact lattice: lattice D overestimates the true distance by up to 0.71 step, so a
 * node one lattice step above the narrowest can sit on a narrower ridge (a trench plateau beside a via measured wider
 * on the lattice). The narrowest node is polished as before; the other uncovered nodes within one step of it are
 * polished in increasing exact distance (at most POLISHES; a polish never ends below its start's distance, so starts at
 * or above the best so far are skipped), each kept only where it lands on a certified local maximum of D.
 */
function narrowestPolished(edges: Float64Array, lat: Lattice, node: number, latticeRadius: number): number {
  let best = polishLocal(edges, lat, node);
  // A self-centred centre is a local maximum of D. A polish ending far below its node's lattice radius on no maximum
  // is a lattice artefact: a node beside a convex corner of a stub about two steps wide, where the search stalls tens
  // of nanometres from the edge (a 1 µm arm of a rotated L read 0.06 µm that way). Such a start does not count, and
  // more starts are tried (the stub's centre nodes come after its corner nodes in exact distance).
  const artefact = best < ARTEFACT_FRACTION * latticeRadius && !isNearLocalMaximum(edges, climbed[0] as number, climbed[1] as number, best, 1e-9, 0);
  if (artefact) best = Infinity;
  for (let k = 0; k < nAlt; k++) {
    const q = altS[k] as number, i = q % lat.nx, j = (q - i) / lat.nx;
    altD[k] = q === node ? -1 : distanceToEdges(edges, lat.x0 + i * lat.step, lat.y0 + j * lat.step);
  }
  for (let p = 0; p < (artefact ? MORE_POLISHES : POLISHES); p++) {
    let b = -1;
    for (let k = 0; k < nAlt; k++) if ((altD[k] as number) >= 0 && (b < 0 || (altD[k] as number) < (altD[b] as number))) b = k;
    if (b < 0 || (altD[b] as number) >= best) break;
    altD[b] = -1;
    const r = polishLocal(edges, lat, altS[b] as number);
    const onMaximum = isNearLocalMaximum(edges, climbed[0] as number, climbed[1] as number, r, NEAR_REL, NEAR_GAP);
    if (r < best * (1 - 1e-12) && (onMaximum || (artefact && r >= ARTEFACT_FRACTION * latticeRadius))) best = r;
  }
  // Only artefacts near the narrowest lattice centre: its lattice radius (above the true one by < 0.71 step).
  return best === Infinity ? latticeRadius : best;
}

const POLISHES = 4;
/** Starts tried when the first polish is not certified (a stub's centre nodes come after its corner nodes in exact
 * distance), and the fraction of the lattice radius below which an uncertified polish is an artefact. */
const MORE_POLISHES = 12;
const ARTEFACT_FRACTION = 0.5;
/** Other starts count when they land on a maximum, walls converging by drawing noise allowed (isNearLocalMaximum). */
const NEAR_REL = 1e-7;
const NEAR_GAP = 2e-3;
