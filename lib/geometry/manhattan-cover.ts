/**
 * minWidth on the compressed Manhattan lattice (manhattan-widths.ts): the self-centred test. Candidates are the nodes
 * that are local maxima of D, certified on the exact edges (ridge-snap.ts isLocalMaximum: no other point is
 * self-centred), in increasing D; the first that no larger disk covers sets minWidth. Then the isolated maxima of D
 * between nodes (medial-axis vertices at reflex corners), climbed to from the lattice maxima that are not maxima of D,
 * which can be self-centred and narrower than every plateau in chunky unions.
 */
import { climbed, climbToMaximum } from './disk-search';
import { distanceAbove, distanceToEdges, hypot2 } from './edge-distance';
import { stableSortBy } from './index-sort';
import type { ManhattanLines } from './manhattan-lines';
import { isLocalMaximum, snapToRidge, snapped } from './ridge-snap';

/** The 16 pattern-search directions (cos, sin of k·π/8). */
const DIR_X = Float64Array.from({ length: 16 }, (_, k) => Math.cos((k * Math.PI) / 8));
const DIR_Y = Float64Array.from({ length: 16 }, (_, k) => Math.sin((k * Math.PI) / 8));

/** Candidate nodes, and the nodes to climb from for off-lattice maxima (reused). */
let localsS = new Int32Array(64), climbFromS = new Int32Array(64);

/**
 * Radius (dbu) of the smallest self-centred disk, at most maxD. `cand[0..m)` lists the maximal centres in increasing node
 * order, `top` flags those that are local maxima of the lattice (≥ their 8 neighbours); `root` is D at the nodes.
 */
export function smallestSelfCentred(L: ManhattanLines, edges: Float64Array, root: Float64Array, cand: Int32Array, m: number, top: Uint8Array, maxD: number): number {
  const { xs, ys, nx } = L;
  if (localsS.length < m) localsS = new Int32Array(Math.max(m, 2 * localsS.length));
  const locals = localsS;
  let nl = 0;
  for (let k = 0; k < m; k++) if (top[k] && (root[cand[k] as number] as number) < maxD) locals[nl++] = cand[k] as number;
  // Increasing D, ties in node order (cand is in node order and the sort is stable).
  stableSortBy(locals, nl, root, false);
  let nClimb = 0;
  let minD = maxD;
  for (let g = 0; g < nl && minD === maxD; ) {
    // One group of equal D at a time: a node deep inside a long trench settles it without a cover search.
    const dc = root[locals[g] as number] as number;
    let g1 = g;
    while (g1 < nl && root[locals[g1] as number] === dc) g1++;
    let found = false;
    for (let k = g; k < g1 && !found; k++) {
      const c = locals[k] as number, ci = c % nx;
      if (uncoverable(edges, xs[ci] as number, ys[(c - ci) / nx] as number, dc, 2 * maxD)) found = isLocalMaximum(edges, xs[ci] as number, ys[(c - ci) / nx] as number, dc);
    }
    for (let k = g; k < g1 && !found; k++) {
      const c = locals[k] as number, ci = c % nx, cj = (c - ci) / nx;
      if (!isLocalMaximum(edges, xs[ci] as number, ys[cj] as number, dc)) {
        if (climbFromS.length <= nClimb) {
          const grown = new Int32Array(2 * climbFromS.length);
          grown.set(climbFromS);
          climbFromS = grown;
        }
        climbFromS[nClimb++] = c;
      } else found = !coveredAt(cand, m, root, xs, nx, ys, edges, xs[ci] as number, ys[cj] as number, dc);
    }
    if (found) minD = dc;
    g = g1;
  }
  // Isolated maxima of D between nodes: climbed to from the nodes that are local maxima of the lattice but not of D.
  for (let k = 0; k < nClimb; k++) {
    const c = climbFromS[k] as number;
    const dc = root[c] as number;
    if (dc >= minD) continue;
    const ci = c % nx, cj = (c - ci) / nx;
    const h = Math.min((xs[ci + 1] as number) - (xs[ci] as number), (xs[ci] as number) - (xs[ci - 1] as number), (ys[cj + 1] as number) - (ys[cj] as number), (ys[cj] as number) - (ys[cj - 1] as number));
    const snap = snapToRidge(edges, xs[ci] as number, ys[cj] as number, dc, 2 * Math.SQRT2 * h, dc);
    const dv = snap ? (snapped[2] as number) : climbToMaximum(edges, xs[ci] as number, ys[cj] as number, h);
    const vx = (snap ? snapped[0] : climbed[0]) as number, vy = (snap ? snapped[1] : climbed[1]) as number;
    if (!(dv < minD) || !isLocalMaximum(edges, vx, vy, dv)) continue;
    if (!coveredAt(cand, m, root, xs, nx, ys, edges, vx, vy, dv)) minD = dv;
  }
  return minD;
}

/**
 * Whether a disk larger than dc contains c = (cx, cy): a pattern search from (sx, sy) (where D > dc) over centres p
 * with D(p) > dc for D(p) − |p − c| ≥ 0, maximising that margin. Finding one proves c covered; not finding one
 * leaves c self-centred (a covering disk missed this way makes minWidth smaller, never larger).
 */
function coverFound(edges: Float64Array, cx: number, cy: number, dc: number, sx: number, sy: number): boolean {
  const floor = dc * (1 + 1e-9);
  let x = sx, y = sy;
  let d = distanceToEdges(edges, x, y);
  let m = d - hypot2(x - cx, y - cy);
  if (m >= 0) return true;
  const h0 = hypot2(x - cx, y - cy) / 4;
  let h = h0;
  for (let it = 0; it < 120 && h > h0 * 1e-5; it++) {
    let moved = false;
    // Moves shorter than the current distance stay inside the opening (D is unsigned outside it too).
    for (let k = 0; k < 16 && h < d; k++) {
      const px = x + (DIR_X[k] as number) * h, py = y + (DIR_Y[k] as number) * h;
      const e = distanceAbove(edges, px, py, floor);
      if (e < 0) continue;
      const mm = e - hypot2(px - cx, py - cy);
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
function coveredAt(cand: Int32Array, m: number, root: Float64Array, xs: Float64Array, nx: number, ys: Float64Array, edges: Float64Array, x: number, y: number, d: number): boolean {
  let near = -1, nearMargin = -Infinity;
  const floor = d * (1 + 1e-9);
  for (let k = 0; k < m; k++) {
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
