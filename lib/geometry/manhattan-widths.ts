/**
 * Exact widths of a Manhattan (axis-parallel) opening on its compressed lattice (manhattan-lines.ts), whatever grid
 * its vertices lie on. Definitions as in widths.ts (maxWidth, self-centred centres, minWidth).
 *
 * - D at the nodes: the squared Euclidean distance transform to the non-interior nodes, by Felzenszwalb &
 *   Huttenlocher's lower envelope of parabolas, which works on arbitrary sample positions (P. Felzenszwalb,
 *   D. Huttenlocher, "Distance Transforms of Sampled Functions", Theory of Computing 8, 2012): exact, since every
 *   node's nearest boundary point is a non-interior node.
 * - minWidth: nodes in increasing D; the first one that no node with a larger disk covers and that is a true local
 *   maximum of D (ridge-snap.ts isLocalMaximum, on the exact edges) is self-centred, its 2·D the answer. A centre that
 *   is not a local maximum is never self-centred (a point a little uphill has a larger disk containing it), so that
 *   test only removes nodes whose covering disk is centred between nodes (near a convex corner or an off-lattice
 *   medial-axis vertex, where a non-uniform lattice may have no covering node). The self-centred points of a
 *   Manhattan opening are plateaus of D (trench midlines, nodes by construction, with lines where they end and where
 *   the coverage from a wider region stops) and isolated medial-axis vertices, which are larger than the arms
 *   around them in the shapes tested.
 * - maxWidth: the largest node D, and the pattern search with ridge snap (disk-search.ts climbToMaximum) from the
 *   largest corner of every lattice cell whose Lipschitz bound (largest corner D + half the diagonal, or where the
 *   corner cones meet) beats the best so far, largest bound first, at most MAX_CLIMBS climbs (a medial-axis vertex at
 *   reflex corners lies between nodes).
 */
import type { ManhattanLines } from './manhattan-lines';
import { climbed, climbToMaximum } from './disk-search';
import { distanceAbove, distanceToEdges } from './edge-distance';
import { isLocalMaximum, snapToRidge, snapped } from './ridge-snap';

/** The 16 pattern-search directions (cos, sin of k·π/8). */
const DIR_X = Float64Array.from({ length: 16 }, (_, k) => Math.cos((k * Math.PI) / 8));
const DIR_Y = Float64Array.from({ length: 16 }, (_, k) => Math.sin((k * Math.PI) / 8));

let maskS = new Uint8Array(0);
let d2S = new Float64Array(0);
let rootS = new Float64Array(0);
let candS = new Int32Array(0);
/** Most climbs for maxWidth per opening (cells with the largest bound first). */
const MAX_CLIMBS = 8;
let topS = new Uint8Array(0), maximalS = new Uint8Array(0);
let fS = new Float64Array(0), dS = new Float64Array(0), zS = new Float64Array(0), vS = new Int32Array(0);

/** Interior nodes (all four quadrants inside) from the vertex-grid cells, into module scratch. */
function interiorMask(L: ManhattanLines): Uint8Array {
  const { xs, ys, bx, by, cellIn } = L;
  const nx = xs.length, ny = ys.length, ncx = bx.length - 1, ncy = by.length - 1;
  if (maskS.length < nx * ny) maskS = new Uint8Array(Math.max(nx * ny, 2 * maskS.length));
  const mask = maskS.subarray(0, nx * ny).fill(0);
  if (rowLo.length < ny) {
    rowLo = new Int32Array(2 * ny);
    rowHi = new Int32Array(2 * ny);
  }
  if (colLo.length < nx) {
    colLo = new Int32Array(2 * nx);
    colHi = new Int32Array(2 * nx);
  }
  rowLo.fill(nx, 0, ny);
  rowHi.fill(-1, 0, ny);
  colLo.fill(ny, 0, nx);
  colHi.fill(-1, 0, nx);
  // Vertex-grid column left and right of each x line (−1 or ncx outside), rows likewise.
  const cl = new Int32Array(nx), cr = new Int32Array(nx), rl = new Int32Array(ny), ru = new Int32Array(ny);
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
  for (let j = 1; j + 1 < ny; j++) {
    const a = rl[j] as number, b = ru[j] as number;
    if (a < 0 || b < 0) continue;
    for (let i = 1; i + 1 < nx; i++) {
      const p = cl[i] as number, q = cr[i] as number;
      if (p < 0 || q < 0) continue;
      if (cellIn[a * ncx + p] && cellIn[a * ncx + q] && cellIn[b * ncx + p] && cellIn[b * ncx + q]) {
        mask[j * nx + i] = 1;
        if (i < (rowLo[j] as number)) rowLo[j] = i;
        rowHi[j] = i;
        if (j < (colLo[i] as number)) colLo[i] = j;
        colHi[i] = j;
      }
    }
  }
  return mask;
}

/** First and last interior node per row and per column (set by interiorMask; lo > hi when none). */
let rowLo = new Int32Array(0), rowHi = new Int32Array(0), colLo = new Int32Array(0), colHi = new Int32Array(0);

/** Squared distance from each node to the nearest non-interior node (0 there), positions xs × ys. */
function distanceTransform(mask: Uint8Array, xs: Float64Array, ys: Float64Array): Float64Array {
  const nx = xs.length, ny = ys.length;
  if (d2S.length < nx * ny) d2S = new Float64Array(Math.max(nx * ny, 2 * d2S.length));
  const out = d2S.subarray(0, nx * ny);
  // Columns: binary input, so the nearest non-interior node above or below (two scans), over the column's interior
  // span and the non-interior node on each side of it (nothing beyond can be nearer).
  for (let i = 0; i < nx; i++) {
    const j0 = colLo[i] as number, j1 = colHi[i] as number;
    if (j0 > j1) continue;
    let last = j0 - 1;
    for (let j = j0; j <= j1; j++) {
      const q = j * nx + i;
      if (!mask[q]) {
        last = j;
        out[q] = 0;
      } else {
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
  // Rows: lower envelope of the parabolas (x − xs[p])² + f(p) at the sample positions xs (Felzenszwalb–Huttenlocher).
  if (fS.length < nx) {
    fS = new Float64Array(2 * nx);
    dS = new Float64Array(2 * nx);
    zS = new Float64Array(2 * nx + 1);
    vS = new Int32Array(2 * nx);
  }
  const f = fS, d = dS, z = zS, v = vS;
  for (let j = 1; j + 1 < ny; j++) {
    if ((rowLo[j] as number) > (rowHi[j] as number)) continue;
    // The row's interior span and the non-interior node on each side (f = 0 there), re-based at i0.
    const i0 = (rowLo[j] as number) - 1, n = (rowHi[j] as number) + 2 - i0;
    const line = j * nx + i0;
    for (let i = 0; i < n; i++) f[i] = mask[line + i] ? (out[line + i] as number) : 0;
    let k = 0;
    v[0] = 0;
    z[0] = -Infinity;
    z[1] = Infinity;
    for (let q = 1; q < n; q++) {
      const fq = f[q] as number;
      if (fq === Infinity) continue;
      const xq = xs[i0 + q] as number;
      let s: number;
      for (;;) {
        const p = v[k] as number, xp = xs[i0 + p] as number;
        s = (fq + xq * xq - ((f[p] as number) + xp * xp)) / (2 * (xq - xp));
        if (s <= (z[k] as number) && k > 0) k--;
        else break;
      }
      k++;
      v[k] = q;
      z[k] = s;
      z[k + 1] = Infinity;
    }
    k = 0;
    for (let q = 0; q < n; q++) {
      const xq = xs[i0 + q] as number;
      while ((z[k + 1] as number) < xq) k++;
      const p = v[k] as number;
      const g = xq - (xs[i0 + p] as number);
      d[q] = g * g + (f[p] as number);
    }
    for (let i = 0; i < n; i++) if (mask[line + i]) out[line + i] = d[i] as number;
  }
  return out;
}

/** minWidth and maxWidth (dbu) of the opening whose exact edges are `edges` (edgeList form), on lattice L. */
export function manhattanWidths(L: ManhattanLines, edges: Float64Array): { minWidth: number; maxWidth: number } | null {
  const { xs, ys } = L;
  const nx = xs.length, ny = ys.length, nodes = nx * ny;
  const mask = interiorMask(L);
  const d2 = distanceTransform(mask, xs, ys);
  if (rootS.length < nodes) rootS = new Float64Array(Math.max(nodes, 2 * rootS.length));
  const root = rootS.subarray(0, nodes).fill(0);
  let best = 0;
  for (let q = 0; q < nodes; q++) {
    if (!mask[q]) continue;
    const r = Math.sqrt(d2[q] as number);
    root[q] = r;
    if (r > best) best = r;
  }
  if (!(best > 0) || best === Infinity) return null;
  // Maximal centres: interior nodes whose disk is not inside a neighbour's (D(n) ≥ D(c) + |n − c|); the others are
  // covered by that neighbour and never set a width. Also marks which are local maxima of the lattice (≥ neighbours).
  if (candS.length < nodes) {
    candS = new Int32Array(Math.max(nodes, 2 * candS.length));
    topS = new Uint8Array(candS.length);
  }
  let m = 0;
  for (let j = 1; j + 1 < ny; j++) {
    const yj = ys[j] as number, dyl = yj - (ys[j - 1] as number), dyu = (ys[j + 1] as number) - yj;
    for (let i = 1; i + 1 < nx; i++) {
      const q = j * nx + i;
      const dc = root[q] as number;
      if (dc === 0) continue;
      const xi = xs[i] as number, dxl = xi - (xs[i - 1] as number), dxr = (xs[i + 1] as number) - xi;
      const lim = dc - 1e-9 * (1 + dc);
      const l = root[q - 1] as number, r = root[q + 1] as number, b = root[q - nx] as number, t = root[q + nx] as number;
      if (l >= lim + dxl || r >= lim + dxr || b >= lim + dyl || t >= lim + dyu) continue;
      const bl = root[q - nx - 1] as number, br = root[q - nx + 1] as number, tl = root[q + nx - 1] as number, tr = root[q + nx + 1] as number;
      if (bl >= lim + Math.sqrt(dxl * dxl + dyl * dyl) || br >= lim + Math.sqrt(dxr * dxr + dyl * dyl) || tl >= lim + Math.sqrt(dxl * dxl + dyu * dyu) || tr >= lim + Math.sqrt(dxr * dxr + dyu * dyu)) continue;
      topS[m] = l > dc || r > dc || b > dc || t > dc || bl > dc || br > dc || tl > dc || tr > dc ? 0 : 1;
      candS[m++] = q;
    }
  }
  const cand = candS.subarray(0, m), top = topS;
  if (maximalS.length < nodes) maximalS = new Uint8Array(Math.max(nodes, 2 * maximalS.length));
  const maximal = maximalS.subarray(0, nodes).fill(0);
  for (let k = 0; k < m; k++) maximal[cand[k] as number] = 1;
  // maxWidth: the best node, and climbs towards larger off-lattice maxima (medial-axis vertices at reflex corners).
  // Along a gap wider than the refinement step D does not change (manhattan-lines.ts), so such gaps add nothing.
  const near = L.h * (1 + 1e-9);
  const nearGap = (a: number, b: number) => (b - a <= near ? b - a : 0);
  let maxD = best;
  // Cells that could hold a larger off-lattice maximum: D is 1-Lipschitz, so nothing in a cell exceeds its largest
  // corner D plus half its diagonal (a wide gap counts as 0 across: D does not change along it). Climbed from that
  // corner, largest bound first, until the bound cannot beat maxD. (Until Dec 2026 at most 4 climbs from the
  // largest maximal centres, each skipping later starts within its reach: on the 1M bench layout that missed 29
  // maxima by up to 9 %, where a climb left its start for a plateau on one side or stalled at a neck between two
  // corners while the larger maximum lay on the other side.)
  let nc = 0;
  for (let j = 0; j + 1 < ny; j++) {
    const gy = nearGap(ys[j] as number, ys[j + 1] as number);
    for (let i = 0; i + 1 < nx; i++) {
      const q = j * nx + i;
      let c = q, dc = root[q] as number;
      if ((root[q + 1] as number) > dc) dc = root[(c = q + 1)] as number;
      if ((root[q + nx] as number) > dc) dc = root[(c = q + nx)] as number;
      if ((root[q + nx + 1] as number) > dc) dc = root[(c = q + nx + 1)] as number;
      if (dc === 0) continue;
      const gx = nearGap(xs[i] as number, xs[i + 1] as number);
      // Half the diagonal is at most half the two gaps: most cells fail this cheaper bound already.
      if (dc + 0.5 * (gx + gy) <= maxD * (1 + 1e-12)) continue;
      // Along one column of corners the cones meet at most at (D_below + D_above + gap)/2, and a point is at most
      // half the other gap from its nearer column: the tighter of these and the half-diagonal bound.
      const d00 = root[q] as number, d10 = root[q + 1] as number, d01 = root[q + nx] as number, d11 = root[q + nx + 1] as number;
      const byCols = 0.5 * (gx + gy + Math.max(d00 + d01, d10 + d11));
      const byRows = 0.5 * (gx + gy + Math.max(d00 + d10, d01 + d11));
      const bound = Math.min(dc + 0.5 * Math.sqrt(gx * gx + gy * gy), byCols, byRows);
      if (bound <= maxD * (1 + 1e-12)) continue;
      if (cellBoundS.length <= nc) {
        const gb = new Float64Array(Math.max(64, 2 * nc)), gq = new Int32Array(gb.length), go = new Int32Array(gb.length);
        gb.set(cellBoundS);
        gq.set(cellCornerS);
        cellBoundS = gb;
        cellCornerS = gq;
        cellOrderS = go;
      }
      cellBoundS[nc] = bound;
      cellCornerS[nc] = c;
      nc++;
    }
  }
  for (let k = 0; k < nc; k++) cellOrderS[k] = k;
  const order = cellOrderS.subarray(0, nc).sort((a, b) => (cellBoundS[b] as number) - (cellBoundS[a] as number) || a - b);
  let nClimbs = 0;
  tried.clear();
  for (let o = 0; o < nc; o++) {
    const cell = order[o] as number;
    if ((cellBoundS[cell] as number) <= maxD * (1 + 1e-12)) break;
    const q = cellCornerS[cell] as number;
    // Only maximal centres: a corner whose disk lies in a neighbour's sits on a slope, with a larger corner nearby.
    if (tried.has(q) || !maximal[q]) continue;
    tried.add(q);
    const i = q % nx, j = (q - i) / nx;
    const hx = Math.max(i + 1 < nx ? nearGap(xs[i] as number, xs[i + 1] as number) : 0, i > 0 ? nearGap(xs[i - 1] as number, xs[i] as number) : 0);
    const hy = Math.max(j + 1 < ny ? nearGap(ys[j] as number, ys[j + 1] as number) : 0, j > 0 ? nearGap(ys[j - 1] as number, ys[j] as number) : 0);
    const reach = 2 * Math.sqrt(hx * hx + hy * hy);
    const x = xs[i] as number, y = ys[j] as number, dq = root[q] as number;
    // A certified local maximum at the corner: the cell's own maximum is that corner or one the neighbours' climbs find.
    if (isLocalMaximum(edges, x, y, dq)) continue;
    if (nClimbs >= MAX_CLIMBS) break;
    nClimbs++;
    // The maximum next to a node is usually a medial-axis vertex solved directly from the sites near the node
    // (ridge-snap.ts, certified); otherwise the pattern search climbs to it.
    const snap = snapToRidge(edges, x, y, dq, reach, dq);
    const d = snap ? (snapped[2] as number) : climbToMaximum(edges, x, y, Math.max(hx, hy));
    if (d > maxD) maxD = d;
  }
  // minWidth: the nodes that are local maxima of D (certified on the exact edges; no other point is self-centred) in
  // increasing D; the first that no larger disk covers.
  const locals: number[] = [];
  for (let k = 0; k < m; k++) if (top[k] && (root[cand[k] as number] as number) < maxD) locals.push(cand[k] as number);
  locals.sort((a, b) => (root[a] as number) - (root[b] as number) || a - b);
  let minD = maxD;
  for (let g = 0; g < locals.length && minD === maxD; ) {
    // One group of equal D at a time: a node deep inside a long trench settles it without a cover search.
    const dc = root[locals[g] as number] as number;
    let g1 = g;
    while (g1 < locals.length && root[locals[g1] as number] === dc) g1++;
    let found = false;
    for (let k = g; k < g1 && !found; k++) {
      const c = locals[k] as number, ci = c % nx;
      if (uncoverable(edges, xs[ci] as number, ys[(c - ci) / nx] as number, dc, 2 * maxD)) found = isLocalMaximum(edges, xs[ci] as number, ys[(c - ci) / nx] as number, dc);
    }
    for (let k = g; k < g1 && !found; k++) {
      const c = locals[k] as number, ci = c % nx, cj = (c - ci) / nx;
      if (!isLocalMaximum(edges, xs[ci] as number, ys[cj] as number, dc)) climbFrom.push(c);
      else found = !coveredAt(cand, root, xs, ys, edges, xs[ci] as number, ys[cj] as number, dc);
    }
    if (found) minD = dc;
    g = g1;
  }
  // Isolated maxima of D between nodes (medial-axis vertices at reflex corners) can be self-centred and narrower than
  // every plateau in chunky unions: climbed to from the nodes that are local maxima of the lattice but not of D.
  for (const c of climbFrom) {
    const dc = root[c] as number;
    if (dc >= minD) continue;
    const ci = c % nx, cj = (c - ci) / nx;
    const h = Math.min((xs[ci + 1] as number) - (xs[ci] as number), (xs[ci] as number) - (xs[ci - 1] as number), (ys[cj + 1] as number) - (ys[cj] as number), (ys[cj] as number) - (ys[cj - 1] as number));
    const snap = snapToRidge(edges, xs[ci] as number, ys[cj] as number, dc, 2 * Math.SQRT2 * h, dc);
    const dv = snap ? (snapped[2] as number) : climbToMaximum(edges, xs[ci] as number, ys[cj] as number, h);
    const vx = (snap ? snapped[0] : climbed[0]) as number, vy = (snap ? snapped[1] : climbed[1]) as number;
    if (!(dv < minD) || !isLocalMaximum(edges, vx, vy, dv)) continue;
    if (!coveredAt(cand, root, xs, ys, edges, vx, vy, dv)) minD = dv;
  }
  climbFrom.length = 0;
  return { minWidth: 2 * minD, maxWidth: 2 * maxD };
}

/** Cells that may hold a larger off-lattice maximum: bound, largest corner, sort order (reused). */
let cellBoundS = new Float64Array(0), cellCornerS = new Int32Array(0), cellOrderS = new Int32Array(0);
/** Corners climbed from or rejected for maxWidth in the current opening (reused). */
const tried = new Set<number>();
/** Nodes to climb from for off-lattice maxima (reused). */
const climbFrom: number[] = [];

/**
 * Whether a disk larger than dc contains c = (cx, cy): a pattern search from (sx, sy) (where D > dc) over centres p
 * with D(p) > dc for D(p) − |p − c| ≥ 0, maximising that margin. Finding one proves c covered; not finding one
 * leaves c self-centred (a covering disk missed this way makes minWidth smaller, never larger).
 */
function coverFound(edges: Float64Array, cx: number, cy: number, dc: number, sx: number, sy: number): boolean {
  const floor = dc * (1 + 1e-9);
  let x = sx, y = sy;
  let d = distanceToEdges(edges, x, y);
  let m = d - Math.hypot(x - cx, y - cy);
  if (m >= 0) return true;
  const h0 = Math.hypot(x - cx, y - cy) / 4;
  let h = h0;
  for (let it = 0; it < 120 && h > h0 * 1e-5; it++) {
    let moved = false;
    // Moves shorter than the current distance stay inside the opening (D is unsigned outside it too).
    for (let k = 0; k < 16 && h < d; k++) {
      const px = x + (DIR_X[k] as number) * h, py = y + (DIR_Y[k] as number) * h;
      const e = distanceAbove(edges, px, py, floor);
      if (e < 0) continue;
      const mm = e - Math.hypot(px - cx, py - cy);
      if (mm > m) {
        x = px;
        y = py;
        d = e;
        m = mm;
        moved = true;
        break;
      }
    }
    if (m >= 0) return true;
    if (!moved) h /= 2;
  }
  return false;
}

/**
 * Whether a disk larger than d contains (x, y): a maximal node's (every node's disk lies in one of theirs), or one
 * found by coverFound from the node that came closest.
 */
function coveredAt(cand: Int32Array, root: Float64Array, xs: Float64Array, ys: Float64Array, edges: Float64Array, x: number, y: number, d: number): boolean {
  const nx = xs.length;
  let near = -1, nearMargin = -Infinity;
  const floor = d * (1 + 1e-9);
  for (let k = 0; k < cand.length; k++) {
    const q = cand[k] as number;
    const db = root[q] as number;
    if (db <= floor) continue;
    const qi = q % nx, qj = (q - qi) / nx;
    const ex = (xs[qi] as number) - x, ey = (ys[qj] as number) - y;
    const e2 = ex * ex + ey * ey;
    if (e2 <= db * db * (1 + 1e-9)) return true;
    const margin = db - Math.sqrt(e2);
    if (margin > nearMargin) {
      nearMargin = margin;
      near = q;
    }
  }
  if (near < 0) return false;
  const qi = near % nx, qj = (near - qi) / nx;
  return coverFound(edges, x, y, d, xs[qi] as number, ys[qj] as number);
}

/**
 * Whether no larger disk can contain (x, y), at distance d from two opposite parallel edges whose segments run on
 * beyond reach ≥ 2·maxD on both sides of its feet: a disk containing the point with radius R > d does not fit between
 * the two lines, so it crosses one of them within 2R of the point, where that edge is.
 */
function uncoverable(edges: Float64Array, x: number, y: number, d: number, reach: number): boolean {
  const tol = 1e-9 * (1 + d);
  let pos = 0, neg = 0;
  for (let o = 0; o < edges.length; o += 5) {
    const ax = edges[o] as number, ay = edges[o + 1] as number, dx = edges[o + 2] as number, dy = edges[o + 3] as number;
    const len = Math.sqrt(edges[o + 4] as number);
    if (len === 0) continue;
    // Signed distance across and position along the edge (unit direction).
    const ux = dx / len, uy = dy / len;
    const along = (x - ax) * ux + (y - ay) * uy, across = (x - ax) * uy - (y - ay) * ux;
    if (Math.abs(Math.abs(across) - d) > tol || along < reach || along > len - reach) continue;
    // Which side of the point the edge lies on, in a fixed frame (edges of either orientation).
    const nxs = across > 0 ? -uy : uy, nys = across > 0 ? ux : -ux;
    if (nxs > 0.5 || nys > 0.5) pos |= nxs > 0.5 ? 1 : 2;
    else neg |= nxs < -0.5 ? 1 : 2;
  }
  return (pos & neg) !== 0;
}
