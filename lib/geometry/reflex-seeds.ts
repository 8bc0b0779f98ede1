/**
 * More starts for the largest-disk climb off the exact lattice: points inside the opening on the inward bisector of
 * reflex (concave) corners. A junction disk (the corner of an L, the joint of a T) touches a reflex corner and is
 * only slightly larger than the arms' plateaus around it (an L of 3 and 4 µm arms: 4.20 vs 4.00 µm), so with lattice
 * D noisy by up to 0.71 step every lattice seed may sit on a plateau, where the climb cannot move (rotated L and T
 * openings measured 4.00 and 3.00 µm instead of 4.20 and 3.125). A start near the reflex corner lies on the slope
 * up to the junction maximum.
 */
import { climbToMaximum } from './disk-search';
import { distanceToEdges } from './edge-distance';

/** Reflex corners looked at, and climbs made from the best of their starts (bounds the cost per opening). */
const MAX_REFLEX = 64, MAX_CLIMBS = 2;
const seedX = new Float64Array(MAX_REFLEX), seedY = new Float64Array(MAX_REFLEX), seedD = new Float64Array(MAX_REFLEX);

/** Nonzero winding number of (x, y) in the rings (interior on the left: outer rings counter-clockwise). */
function winding(coords: ArrayLike<number>, rings: [number, number][], x: number, y: number): number {
  let w = 0;
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      const ax = coords[2 * k] as number, ay = coords[2 * k + 1] as number, bx = coords[2 * n] as number, by = coords[2 * n + 1] as number;
      const side = (bx - ax) * (y - ay) - (x - ax) * (by - ay);
      if (ay <= y) {
        if (by > y && side > 0) w++;
      } else if (by <= y && side < 0) w--;
    }
  }
  return w;
}

/**
 * Largest distance (dbu) reached by climbing from reflex-corner starts, or `best` when none is higher.
 * @param best the largest disk radius found so far (dbu): the starts sit that far from their corner
 */
export function reflexSeededMaximum(coords: ArrayLike<number>, rings: [number, number][], edges: Float64Array, step: number, best: number): number {
  let m = 0;
  for (let ri = 0; ri < rings.length && m < MAX_REFLEX; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
    if (e - s < 4) continue;
    for (let k = s; k < e && m < MAX_REFLEX; k++) {
      const p = k > s ? k - 1 : e - 1, n = k + 1 < e ? k + 1 : s;
      const vx = coords[2 * k] as number, vy = coords[2 * k + 1] as number;
      let d1x = vx - (coords[2 * p] as number), d1y = vy - (coords[2 * p + 1] as number);
      let d2x = (coords[2 * n] as number) - vx, d2y = (coords[2 * n + 1] as number) - vy;
      const l1 = Math.hypot(d1x, d1y), l2 = Math.hypot(d2x, d2y);
      if (!(l1 > 0 && l2 > 0) || d1x * d2y - d1y * d2x >= 0) continue; // left turn or straight: not reflex
      d1x /= l1; d1y /= l1; d2x /= l2; d2y /= l2;
      // Mean of the two inward (left) normals points into the opening's wide angle.
      let ux = -d1y - d2y, uy = d1x + d2x;
      const lu = Math.hypot(ux, uy);
      if (!(lu > 0)) continue;
      ux /= lu; uy /= lu;
      const x = vx + ux * best, y = vy + uy * best;
      if (winding(coords, rings, x, y) === 0) continue;
      seedX[m] = x;
      seedY[m] = y;
      seedD[m] = distanceToEdges(edges, x, y);
      m++;
    }
  }
  let out = best;
  for (let c = 0; c < MAX_CLIMBS; c++) {
    let b = -1;
    for (let q = 0; q < m; q++) if ((seedD[q] as number) >= 0 && (b < 0 || (seedD[q] as number) > (seedD[b] as number))) b = q;
    if (b < 0) break;
    seedD[b] = -1;
    // Two first steps: the lattice step can jump past a junction maximum onto the plateau beside it (measured on
    // rotated Ls), a quarter of it stays on the slope.
    for (const first of [step, step / 4]) {
      const d = climbToMaximum(edges, seedX[b] as number, seedY[b] as number, first);
      if (d > out) out = d;
    }
  }
  return out;
}
