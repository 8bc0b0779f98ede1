/**
 * maxWidth on the compressed Manhattan lattice (manhattan-widths.ts): the largest node D, then climbs towards larger
 * maxima between nodes (medial-axis vertices at reflex corners) from the cells that could hold one.
 *
 * D is 1-Lipschitz, so nothing in a lattice cell exceeds its largest corner D plus half its diagonal (a gap wider
 * than the refinement step counts as 0 across: D does not change along it, manhattan-lines.ts). The cells whose bound
 * beats the best so far are climbed from their largest corner (pattern search with ridge snap, disk-search.ts
 * climbToMaximum), largest bound first, at most MAX_CLIMBS climbs. (Until Dec 2026 at most 4 climbs from the largest
 * maximal centres, each skipping later starts within its reach: on the 1M bench layout that missed 29 maxima by up to
 * 9 %, where a climb left its start for a plateau on one side or stalled at a neck between two corners while the
 * larger maximum lay on the other side.)
 */
import { climbToMaximum } from './disk-search';
import { stableSortBy } from './index-sort';
import type { ManhattanLines } from './manhattan-lines';
import { isLocalMaximum, snapToRidge, snapped } from './ridge-snap';

/** Most climbs for maxWidth per opening (cells with the largest bound first). */
const MAX_CLIMBS = 8;

/** Cells that may hold a larger off-lattice maximum: bound, largest corner, sort order; gaps per column and row. */
let cellBoundS = new Float64Array(0), cellCornerS = new Int32Array(0), cellOrderS = new Int32Array(0);
let gapXS = new Float64Array(0), gapYS = new Float64Array(0);

/**
 * Radius (dbu) of the largest inscribed disk. `root` is D at the nodes (0 outside), `best` its largest value, rowMax
 * the largest per row, rowLo/rowHi the interior span per row; `maximal` flags the maximal centres (cleared here
 * as corners are tried).
 */
export function largestDisk(L: ManhattanLines, edges: Float64Array, root: Float64Array, best: number, rowMax: Float64Array, rowLo: Int32Array, rowHi: Int32Array, maximal: Uint8Array): number {
  const { xs, ys, nx, ny } = L;
  const near = L.h * (1 + 1e-9);
  // Gaps up to the refinement step count; wider ones lie where D does not change along them and add nothing.
  if (gapXS.length < nx) gapXS = new Float64Array(2 * nx);
  if (gapYS.length < ny) gapYS = new Float64Array(2 * ny);
  const gapX = gapXS, gapY = gapYS;
  let gxMax = 0;
  for (let i = 0; i + 1 < nx; i++) {
    const g = (xs[i + 1] as number) - (xs[i] as number);
    gapX[i] = g <= near ? g : 0;
    if ((gapX[i] as number) > gxMax) gxMax = gapX[i] as number;
  }
  for (let j = 0; j + 1 < ny; j++) {
    const g = (ys[j + 1] as number) - (ys[j] as number);
    gapY[j] = g <= near ? g : 0;
  }
  let maxD = best;
  const thr = maxD * (1 + 1e-12);
  let nc = 0;
  for (let j = 0; j + 1 < ny; j++) {
    const gy = gapY[j] as number;
    // No cell of this row pair passes the cheap bound below (rounding is monotone, so the row's largest D and gap
    // bound every cell's sum): skip it.
    const rm = Math.max(rowMax[j] as number, rowMax[j + 1] as number);
    if (rm === 0 || rm + 0.5 * (gxMax + gy) <= thr) continue;
    // Cells with an interior corner: from the column left of the first interior node to the last one.
    const i0 = Math.max(0, Math.min(rowLo[j] as number, rowLo[j + 1] as number) - 1), i1 = Math.min(nx - 2, Math.max(rowHi[j] as number, rowHi[j + 1] as number));
    for (let i = i0; i <= i1; i++) {
      const q = j * nx + i;
      let c = q, dc = root[q] as number;
      if ((root[q + 1] as number) > dc) dc = root[(c = q + 1)] as number;
      if ((root[q + nx] as number) > dc) dc = root[(c = q + nx)] as number;
      if ((root[q + nx + 1] as number) > dc) dc = root[(c = q + nx + 1)] as number;
      if (dc === 0) continue;
      const gx = gapX[i] as number;
      // Half the diagonal is at most half the two gaps: most cells fail this cheaper bound already.
      if (dc + 0.5 * (gx + gy) <= thr) continue;
      // Along one column of corners the cones meet at most at (D_below + D_above + gap)/2, and a point is at most
      // half the other gap from its nearer column: the tighter of these and the half-diagonal bound.
      const d00 = root[q] as number, d10 = root[q + 1] as number, d01 = root[q + nx] as number, d11 = root[q + nx + 1] as number;
      const byCols = 0.5 * (gx + gy + Math.max(d00 + d01, d10 + d11));
      const byRows = 0.5 * (gx + gy + Math.max(d00 + d10, d01 + d11));
      const bound = Math.min(dc + 0.5 * Math.sqrt(gx * gx + gy * gy), byCols, byRows);
      if (bound <= thr) continue;
      if (cellBoundS.length <= nc) {
        const gb = new Float64Array(Math.max(64, 2 * nc)), gq = new Int32Array(gb.length);
        gb.set(cellBoundS);
        gq.set(cellCornerS);
        cellBoundS = gb;
        cellCornerS = gq;
        cellOrderS = new Int32Array(gb.length);
      }
      cellBoundS[nc] = bound;
      cellCornerS[nc] = c;
      nc++;
    }
  }
  const order = cellOrderS;
  for (let k = 0; k < nc; k++) order[k] = k;
  stableSortBy(order, nc, cellBoundS, true);
  let nClimbs = 0;
  for (let o = 0; o < nc; o++) {
    const cell = order[o] as number;
    if ((cellBoundS[cell] as number) <= maxD * (1 + 1e-12)) break;
    const q = cellCornerS[cell] as number;
    // Only maximal centres, each once: a corner whose disk lies in a neighbour's sits on a slope, with a larger
    // corner nearby.
    if (!maximal[q]) continue;
    maximal[q] = 0;
    const i = q % nx, j = (q - i) / nx;
    const hx = Math.max(i + 1 < nx ? (gapX[i] as number) : 0, i > 0 ? (gapX[i - 1] as number) : 0);
    const hy = Math.max(j + 1 < ny ? (gapY[j] as number) : 0, j > 0 ? (gapY[j - 1] as number) : 0);
    const reach = 2 * Math.sqrt(hx * hx + hy * hy);
    const x = xs[i] as number, y = ys[j] as number, dq = root[q] as number;
    // A certified local maximum at the corner: the cell's own maximum is that corner or one the neighbours' climbs find.
    if (isLocalMaximum(edges, x, y, dq)) continue;
    if (nClimbs >= MAX_CLIMBS) break;
    nClimbs++;
    // The maximum next to a node is usually a medial-axis vertex solved directly from the sites near the node
    // (ridge-snap.ts, certified); otherwise the pattern search climbs to it.
    const snap = snapToRidge(edges, x, y, dq, reach, dq, true);
    const d = snap ? (snapped[2] as number) : climbToMaximum(edges, x, y, Math.max(hx, hy));
    if (d > maxD) maxD = d;
  }
  return maxD;
}
