/**
 * Exact-distance searches of the widths lattice path (widths.ts): the distance from a point to a feature's edges, the
 * largest inscribed disk grown from the best lattice nodes, and the local polish of the narrowest self-centred node.
 * Both searches are 16-direction pattern searches with halving steps; once the step is small they try to land
 * exactly on the local maximum (ridge-snap.ts) and stop there when no probe at the current step improves on it.
 */
import type { Lattice } from './lattice';
import { runTopNodes, type InteriorRuns } from './lattice-runs';
import { distanceAbove, distanceToEdges } from './edge-distance';
import { snapToRidge, snapped } from './ridge-snap';

/** The 16 pattern-search directions (cos, sin of k·π/8). */
const DIR_X = Float64Array.from({ length: 16 }, (_, k) => Math.cos((k * Math.PI) / 8));
const DIR_Y = Float64Array.from({ length: 16 }, (_, k) => Math.sin((k * Math.PI) / 8));

/**
 * Search step (in lattice steps) below which a search lands on the maximum exactly (ridge-snap.ts) and stops there;
 * how far beyond the current distance (in search steps) the sites it combines may lie. A first snap at step 1/2 is
 * only kept as a floor for the result: pattern searches stall on slanted creases of D (the bisector of two concave
 * corners is not one of the 16 directions) and at saddles, where the search ends below the maximum it is climbing to.
 */
const SNAP_STEP = 1 / 64, SNAP_REACH = 8, SNAP_EARLY = 1 / 2;

/** The best lattice nodes of one measurement (reused). */
const topScratch = new Int32Array(8), startScratch = new Int32Array(5);
const candQ = new Int32Array(512), candD = new Float64Array(512);

/**
 * Radius (dbu) of the largest inscribed disk: the best lattice nodes refined by a 16-direction pattern search
 * with halving steps (moves shorter than the current radius never leave the opening).
 */
export function refineLargestDisk(edges: Float64Array, lat: Lattice, d2: Float64Array, runs: InteriorRuns): number {
  // The eight best nodes (ties broken by position); of these, up to three more than two steps apart seed the
  // search. Neighbouring top nodes sit on the same maximum and their searches end at the same point.
  const nTop = runTopNodes(runs, d2, lat.nx, lat.ny, topScratch);
  const top = topScratch;
  const starts = startScratch;
  let nStarts = 0;
  for (let t = 0; t < nTop && nStarts < 3; t++) {
    const q = top[t] as number;
    const qi = q % lat.nx, qj = (q - qi) / lat.nx;
    let apart = true;
    for (let u = 0; u < nStarts && apart; u++) {
      const s = starts[u] as number;
      if ((s % lat.nx - qi) ** 2 + ((s - (s % lat.nx)) / lat.nx - qj) ** 2 <= 4) apart = false;
    }
    if (apart) starts[nStarts++] = q;
  }
  const firstStarts = nStarts;
  nStarts = extraSeeds(edges, lat, d2, runs, nStarts);
  // Lattice D can exceed the true distance off the exact lattice: use exact distances only.
  let best = 0;
  seededBest = 0;
  for (let u = 0; u < nStarts; u++) {
    if (u === firstStarts) seededBest = best;
    const q = starts[u] as number;
    const i = q % lat.nx, j = (q - i) / lat.nx;
    const d = climbToMaximum(edges, lat.x0 + i * lat.step, lat.y0 + j * lat.step, lat.step);
    if (d > best) best = d;
  }
  if (nStarts === firstStarts) seededBest = best;
  return best;
}

/**
 * Exact distance (dbu) at the local maximum of D reached from (x, y): the 16-direction pattern search with halving
 * steps from `step` (moves shorter than the current distance never leave the opening), landing on the maximum by
 * ridge-snap.ts once the step is small (its `largest` choice: a climb is after the largest maximum near it). Used from
 * lattice nodes, uniform (refineLargestDisk) or not (manhattan-widths.ts).
 */
export function climbToMaximum(edges: Float64Array, x: number, y: number, step: number): number {
  // Inlined wrapper: numbers through typed slots, not boxed arguments and result (see ridge-snap.ts snapToRidge).
  search[0] = x;
  search[1] = y;
  search[2] = step;
  search[3] = step;
  search[4] = 120;
  search[5] = Infinity;
  search[6] = 1;
  searchAt(edges);
  return climbed[2] as number;
}

/** searchAt's arguments: start x, y; base step (snap and stop thresholds); first step; most iterations; reach (how
 * far from the start probes and snapped points may lie); 1 for the snap's `largest` choice. */
const search = new Float64Array(7);

/**
 * The 16-direction pattern search of climbToMaximum and polishLocal (arguments in `search`, result in `climbed`):
 * halving steps (moves shorter than the current distance never leave the opening) within `reach` of the start, a first
 * snap at SNAP_EARLY steps kept as a floor, the landing snap at SNAP_STEP, done when no probe improves on that.
 */
function searchAt(edges: Float64Array): void {
  const cx = search[0] as number, cy = search[1] as number, step = search[2] as number;
  const maxIt = search[4] as number, reach = search[5] as number, largest = search[6] === 1;
  let x = cx, y = cy;
  let d = distanceToEdges(edges, x, y);
  let h = search[3] as number;
  let snapAt = step * SNAP_STEP, justSnapped = false;
  let earlyAt = step * SNAP_EARLY, early = 0, ex = 0, ey = 0;
  for (let it = 0; it < maxIt && h > step * 1e-6; it++) {
    if (h < earlyAt) {
      earlyAt = 0;
      const room = Math.min(d, reach - Math.hypot(x - cx, y - cy));
      if (room > 0 && snapToRidge(edges, x, y, d, SNAP_REACH * h, room, largest)) {
        early = snapped[2] as number;
        ex = snapped[0] as number;
        ey = snapped[1] as number;
      }
    }
    if (h < snapAt) {
      snapAt = 0;
      const room = Math.min(d, reach - Math.hypot(x - cx, y - cy));
      if (room > 0 && snapToRidge(edges, x, y, d, SNAP_REACH * h, room, largest)) {
        x = snapped[0] as number;
        y = snapped[1] as number;
        d = snapped[2] as number;
        justSnapped = true;
      }
    }
    let moved = false;
    if (h < d) {
      for (let k = 0; k < 16; k++) {
        const nxp = x + (DIR_X[k] as number) * h, nyp = y + (DIR_Y[k] as number) * h;
        if ((nxp - cx) * (nxp - cx) + (nyp - cy) * (nyp - cy) > reach * reach) continue;
        const nd = distanceAbove(edges, nxp, nyp, d + 1e-12);
        if (nd > d + 1e-12) {
          x = nxp;
          y = nyp;
          d = nd;
          moved = true;
          break;
        }
      }
    }
    // On the snapped maximum no probe improves: done. Otherwise the snap was not the maximum; search on.
    if (!moved && justSnapped) break;
    if (moved) justSnapped = false;
    else h /= 2;
  }
  const useEarly = early > d;
  climbed[0] = useEarly ? ex : x;
  climbed[1] = useEarly ? ey : y;
  climbed[2] = useEarly ? early : d;
}

/** Where the last climbToMaximum ended: x, y (dbu) and the exact distance there. */
export const climbed = new Float64Array(3);

/**
 * Radius found by the last refineLargestDisk from the position-ordered seeds alone (without extraSeeds). widths.ts
 * caps minWidth with it as before extraSeeds existed: where lattice ties put those seeds in a narrower arm, the
 * narrowest-centre polish can start in the wider one, and this cap is what kept minWidth on the narrow arm.
 */
export let seededBest = 0;

/**
 * Up to two more seeds (appended to startScratch after the nStarts there; returns the new count): nodes whose exact
 * distance beats every seed's. Ties of lattice D (a coarse lattice gives a 1 µm and a 1.4 µm arm the same node
 * distance) put every position-ordered seed in the narrower arm, whose plateau the search cannot leave. Lattice D
 * never underestimates the true distance (the nearest outside node lies beyond the boundary), so only nodes whose
 * lattice D exceeds the best seed's exact distance can beat it; those are checked on the exact distance.
 */
function extraSeeds(edges: Float64Array, lat: Lattice, d2: Float64Array, runs: InteriorRuns, nStarts: number): number {
  const starts = startScratch;
  let floor = 0;
  for (let u = 0; u < nStarts; u++) {
    const q = starts[u] as number;
    const i = q % lat.nx, j = (q - i) / lat.nx;
    floor = Math.max(floor, distanceToEdges(edges, lat.x0 + i * lat.step, lat.y0 + j * lat.step));
  }
  const thr = (floor / lat.step) ** 2 * (1 - 1e-12);
  const { runs: rr, rowRun } = runs;
  let m = 0;
  for (let j = 0; j < lat.ny && m < candQ.length; j++) {
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number) && m < candQ.length; k++) {
      for (let i = rr[2 * k] as number, i1 = rr[2 * k + 1] as number; i <= i1 && m < candQ.length; i++) {
        const q = j * lat.nx + i;
        if (!((d2[q] as number) > thr)) continue;
        // Most candidates are rejected by one edge test (distanceAbove): only beating the floor matters.
        const e = distanceAbove(edges, lat.x0 + i * lat.step, lat.y0 + j * lat.step, floor * (1 + 1e-12));
        if (e > floor * (1 + 1e-12)) {
          candQ[m] = q;
          candD[m] = e;
          m++;
        }
      }
    }
  }
  // Best first, each more than two steps from every seed.
  for (let added = 0; added < 2; ) {
    let b = -1;
    for (let c = 0; c < m; c++) if (candQ[c] as number >= 0 && (b < 0 || (candD[c] as number) > (candD[b] as number))) b = c;
    if (b < 0) break;
    const q = candQ[b] as number;
    candQ[b] = -1;
    const qi = q % lat.nx, qj = (q - qi) / lat.nx;
    let apart = true;
    for (let u = 0; u < nStarts && apart; u++) {
      const s2 = starts[u] as number;
      if ((s2 % lat.nx - qi) ** 2 + ((s2 - (s2 % lat.nx)) / lat.nx - qj) ** 2 <= 4) apart = false;
    }
    if (!apart) continue;
    starts[nStarts++] = q;
    added++;
  }
  return nStarts;
}

/**
 * Largest exact distance to the rings within two lattice steps of node q (pattern search, dbu). Its snaps land on the
 * nearest certified maximum (ridge-snap.ts): the ridge of the narrowest centre, not a larger vertex within the two steps
 * beside a trench plateau (with the largest candidate, 5 trench + via openings of the bench layout had minWidth up to
 * 3 % above their trench width).
 */
export function polishLocal(edges: Float64Array, lat: Lattice, q: number): number {
  const i = q % lat.nx, j = (q - i) / lat.nx;
  search[0] = lat.x0 + i * lat.step;
  search[1] = lat.y0 + j * lat.step;
  search[2] = lat.step;
  search[3] = lat.step / 2;
  search[4] = 80;
  search[5] = 2 * lat.step;
  search[6] = 0;
  searchAt(edges);
  return climbed[2] as number;
}
