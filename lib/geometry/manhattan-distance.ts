/**
 * D² at the nodes of the compressed Manhattan lattice (manhattan-lines.ts): which nodes are interior, and the squared
 * Euclidean distance from each to the nearest non-interior node, on the lattice's uneven positions xs × ys (exact for
 * a Manhattan opening: every node's nearest boundary point is a non-interior node, see manhattan-lines.ts).
 *
 * The row pass is Felzenszwalb & Huttenlocher's lower envelope of parabolas (distance.ts edt1d, shared with the
 * uniform transform), which works on arbitrary sample positions (P. Felzenszwalb, D. Huttenlocher, "Distance
 * Transforms of Sampled Functions", Theory of Computing 8, 2012).
 *
 * Every array here is module scratch reused from opening to opening: valid until the next call.
 */
import { edt1d } from './distance';
import type { ManhattanLines } from './manhattan-lines';

let maskS = new Uint8Array(0);
let d2S = new Float64Array(0);
/** First and last interior node per row and per column (set by interiorMask; lo > hi when none). */
export let rowLo = new Int32Array(0), rowHi = new Int32Array(0), colLo = new Int32Array(0), colHi = new Int32Array(0);
/** Vertex-grid column left / right of each x line (−1 outside), rows below / above each y line, and one row's
 * "both cells of this column inside" flags. */
let clS = new Int32Array(0), crS = new Int32Array(0), rlS = new Int32Array(0), ruS = new Int32Array(0), okS = new Uint8Array(0);
let fS = new Float64Array(0), dS = new Float64Array(0), zS = new Float64Array(0), vS = new Int32Array(0);

/**
 * Interior nodes (all four quadrants inside) from the vertex-grid cells, into module scratch; also sets rowLo/rowHi
 * and colLo/colHi. A node at (x line i, y line j) is interior when the cells left and right of x in the rows below and
 * above y are all inside; per row that is "both rows' cells inside" (ok) at the column left and right of x.
 */
export function interiorMask(L: ManhattanLines): Uint8Array {
  const { xs, ys, nx, ny, bx, by, cellIn } = L;
  const ncx = L.nbx - 1, ncy = L.nby - 1;
  if (maskS.length < nx * ny) maskS = new Uint8Array(Math.max(nx * ny, 2 * maskS.length));
  const mask = maskS.fill(0, 0, nx * ny);
  if (rowLo.length < ny) {
    rowLo = new Int32Array(2 * ny);
    rowHi = new Int32Array(2 * ny);
    rlS = new Int32Array(2 * ny);
    ruS = new Int32Array(2 * ny);
  }
  if (colLo.length < nx) {
    colLo = new Int32Array(2 * nx);
    colHi = new Int32Array(2 * nx);
    clS = new Int32Array(2 * nx);
    crS = new Int32Array(2 * nx);
  }
  if (okS.length < ncx) okS = new Uint8Array(2 * ncx);
  rowLo.fill(nx, 0, ny);
  rowHi.fill(-1, 0, ny);
  colLo.fill(ny, 0, nx);
  colHi.fill(-1, 0, nx);
  const cl = clS, cr = crS, rl = rlS, ru = ruS, ok = okS;
  for (let i = 0, c = 0; i < nx; i++) {
    const x = xs[i] as number;
    while (c < ncx && (bx[c + 1] as number) <= x) c++;
    // bx[c] ≤ x < bx[c+1] (or c = ncx at the last line).
    cr[i] = c < ncx ? c : -1;
    cl[i] = x === (bx[c] as number) ? c - 1 : c < ncx ? c : -1;
  }
  for (let j = 0, r = 0; j < ny; j++) {
    const y = ys[j] as number;
    while (r < ncy && (by[r + 1] as number) <= y) r++;
    ru[j] = r < ncy ? r : -1;
    rl[j] = y === (by[r] as number) ? r - 1 : r < ncy ? r : -1;
  }
  // Lines inside one band of the vertex grid share (a, b), hence their mask row: a row like the one before is copied,
  // and the last row of such a run sets colHi of its interior columns when the run ends.
  let okA = -1, okB = -1, runFrom = -1, runTo = -1;
  for (let j = 1; j + 1 < ny; j++) {
    const a = rl[j] as number, b = ru[j] as number;
    if (a < 0 || b < 0) continue;
    if (a === okA && b === okB && runTo === j - 1) {
      mask.copyWithin(j * nx, (j - 1) * nx, j * nx);
      rowLo[j] = rowLo[j - 1] as number;
      rowHi[j] = rowHi[j - 1] as number;
      runTo = j;
      continue;
    }
    if (runTo > runFrom) endRun(mask, nx, runFrom, runTo);
    if (a !== okA || b !== okB) {
      for (let c = 0; c < ncx; c++) ok[c] = cellIn[a * ncx + c] && cellIn[b * ncx + c] ? 1 : 0;
      okA = a;
      okB = b;
    }
    const line = j * nx;
    let lo = nx, hi = -1;
    for (let i = 1; i + 1 < nx; i++) {
      const p = cl[i] as number, q = cr[i] as number;
      if (p < 0 || q < 0 || !ok[p] || !ok[q]) continue;
      mask[line + i] = 1;
      if (i < lo) lo = i;
      hi = i;
      if (j < (colLo[i] as number)) colLo[i] = j;
      colHi[i] = j;
    }
    rowLo[j] = lo;
    rowHi[j] = hi;
    runFrom = runTo = j;
  }
  if (runTo > runFrom) endRun(mask, nx, runFrom, runTo);
  return mask;
}

/** Rows runFrom+1..runTo copied row runFrom: its interior columns reach down to runTo. */
function endRun(mask: Uint8Array, nx: number, runFrom: number, runTo: number): void {
  const line = runFrom * nx;
  for (let i = rowLo[runFrom] as number, i1 = rowHi[runFrom] as number; i <= i1; i++) if (mask[line + i]) colHi[i] = runTo;
}

/**
 * Squared distance from each interior node to the nearest non-interior node, positions xs × ys (nx × ny); after
 * interiorMask. Only the interior nodes' entries are meaningful.
 */
export function distanceTransform(mask: Uint8Array, xs: Float64Array, ys: Float64Array, nx: number, ny: number): Float64Array {
  if (d2S.length < nx * ny) d2S = new Float64Array(Math.max(nx * ny, 2 * d2S.length));
  // Zero first: the row pass then reads every non-interior node as 0 without looking at the mask.
  const out = d2S.fill(0, 0, nx * ny);
  const cl = clS, cr = crS;
  // Columns: binary input, so the nearest non-interior node above or below (two scans), over the column's interior
  // span and the non-interior node on each side of it (nothing beyond can be nearer).
  for (let i = 0; i < nx; i++) {
    const j0 = colLo[i] as number, j1 = colHi[i] as number;
    if (j0 > j1) continue;
    if (i > 0 && cl[i] === cl[i - 1] && cr[i] === cr[i - 1]) {
      // Same vertex-grid columns on both sides as the column before: the same mask column, the same numbers.
      for (let j = j0; j <= j1; j++) out[j * nx + i] = out[j * nx + i - 1] as number;
      continue;
    }
    let last = j0 - 1;
    for (let j = j0; j <= j1; j++) {
      const q = j * nx + i;
      if (!mask[q]) last = j;
      else {
        const e = (ys[j] as number) - (ys[last] as number);
        out[q] = e * e;
      }
    }
    last = j1 + 1;
    for (let j = j1; j >= j0; j--) {
      const q = j * nx + i;
      if (!mask[q]) last = j;
      else {
        const g = (ys[last] as number) - (ys[j] as number);
        if (g * g < (out[q] as number)) out[q] = g * g;
      }
    }
  }
  // Rows: the lower envelope over the row's interior span and the non-interior node on each side (f = 0 there).
  if (fS.length < nx) {
    fS = new Float64Array(2 * nx);
    dS = new Float64Array(2 * nx);
    zS = new Float64Array(2 * nx + 1);
    vS = new Int32Array(2 * nx);
  }
  const f = fS, d = dS;
  for (let j = 1; j + 1 < ny; j++) {
    if ((rowLo[j] as number) > (rowHi[j] as number)) continue;
    const i0 = (rowLo[j] as number) - 1, n = (rowHi[j] as number) + 2 - i0;
    const line = j * nx + i0;
    for (let i = 0; i < n; i++) f[i] = out[line + i] as number;
    edt1d(f, n, d, vS, zS, xs, i0);
    // Non-interior nodes get their own envelope value too; nothing reads them (the row's column input is consumed).
    for (let i = 0; i < n; i++) out[line + i] = d[i] as number;
  }
  return out;
}
