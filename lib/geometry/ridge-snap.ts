/**
 * Lands a point that a pattern search has brought near a local maximum of D (the distance to a feature's edges)
 * exactly on it. Near such a maximum D is the distance to a few sites — edge lines (nearest point inside the edge)
 * and edge end points — and the maximum is either a point equidistant to three sites (a vertex of the medial axis:
 * two lines, a line and two corners, ...) or a point on the midline of two facing parallel edges (a plateau, where D
 * is constant along the line). Each candidate is solved for (Newton's method on g_i(p) = r for three sites, a
 * projection for the plateau) and kept only when the exact D there, over all edges, is larger than the caller's.
 * A returned point is therefore a real point of the opening (it lies within D of the start, so the straight move
 * never crosses the boundary) whose distance is at least the start's: the search result can only get closer to the
 * true local maximum.
 */
import { distanceToEdges } from './edge-distance';

/** Most sites (nearest first) combined into candidates. */
const MAX_SITES = 8;

// Sites relative to the start point: kind 0 = line n·p = c (unit normal n pointing at the start), 1 = point (px, py).
const kind = new Int8Array(MAX_SITES), sa = new Float64Array(MAX_SITES), sb = new Float64Array(MAX_SITES), sc = new Float64Array(MAX_SITES), sd = new Float64Array(MAX_SITES);
const usedS = new Uint8Array(64);
const candKind = new Int8Array(64), candA = new Float64Array(64), candB = new Float64Array(64), candC = new Float64Array(64), candD = new Float64Array(64);

/** The snapped point: x, y (dbu) and its exact distance to the edges. */
export const snapped = new Float64Array(3);

function addCandidate(n: number, k: number, a: number, b: number, c: number, dist: number, outsideCone = false): number {
  // Same point site from two edges sharing a corner: keep one, dropped (kind 2) when either edge rules it out.
  if (k === 1) {
    for (let q = 0; q < n; q++) {
      if ((candKind[q] !== 1 && candKind[q] !== 2) || candA[q] !== a || candB[q] !== b) continue;
      if (outsideCone) candKind[q] = 2;
      return n;
    }
  }
  if (n >= candKind.length) return n;
  candKind[n] = k === 1 && outsideCone ? 2 : k;
  candA[n] = a;
  candB[n] = b;
  candC[n] = c;
  candD[n] = dist;
  return n + 1;
}

/**
 * Tries to snap (x, y), at exact distance d from `edges` (edgeList form), to a local maximum of D nearby.
 * `reach` bounds how far the candidate sites may be beyond d (a few search steps). `maxMove` bounds the move
 * (callers restrict their search region; always < d); corners that cannot be a site of any point within maxMove are
 * left out. On success writes `snapped` and returns true.
 * Of the candidates above d, the snap lands on the nearest certified local maximum (the ridge the start lies on: what
 * a polish of the narrowest centre needs, where a larger vertex beside a trench plateau must not replace the plateau);
 * with `largest`, on the largest candidate if it is certified (the maxWidth climbs, which want the largest maximum
 * near the start).
 */
export function snapToRidge(edges: Float64Array, x: number, y: number, d: number, reach: number, maxMove: number, largest = false): boolean {
  // A small wrapper the compiler inlines into the hot callers: the numbers go through typed slots instead of being
  // boxed as arguments of the large function (those allocations made garbage collection a tenth of the time).
  args[0] = x;
  args[1] = y;
  args[2] = d;
  args[3] = reach;
  args[4] = maxMove;
  args[5] = largest ? 1 : 0;
  return snapAt(edges);
}

/** Numeric arguments of snapAt / localMaximumAt (see snapToRidge). */
const args = new Float64Array(6);

function snapAt(edges: Float64Array): boolean {
  const x = args[0] as number, y = args[1] as number, d = args[2] as number, reach = args[3] as number, maxMove = args[4] as number;
  const largest = args[5] === 1;
  // Candidate sites within d + reach, relative to (x, y); end points clearly beyond (squared distance over (d + reach)²
  // by a 1e-9 relative margin, far beyond rounding) are passed over without a √.
  let n = 0;
  const far2 = (d + reach) * (d + reach) * (1 + 1e-9);
  for (let o = 0; o < edges.length; o += 5) {
    const ax = (edges[o] as number) - x, ay = (edges[o + 1] as number) - y, dx = edges[o + 2] as number, dy = edges[o + 3] as number;
    const l2 = edges[o + 4] as number;
    if (l2 === 0) continue;
    const t = -(ax * dx + ay * dy) / l2;
    const len = Math.sqrt(l2);
    // Line site: the foot of the perpendicular lies on the edge (or within reach of it).
    const lineDist = Math.abs(ax * dy - ay * dx) / len;
    if (lineDist <= d + reach && t * len >= -reach && (t - 1) * len <= reach) {
      // Unit normal pointing from the line towards the start point (origin).
      let nx = -dy / len, ny = dx / len;
      let c = nx * ax + ny * ay;
      if (c > 0) {
        nx = -nx;
        ny = -ny;
        c = -c;
      }
      n = addCandidate(n, 0, nx, ny, c, lineDist);
    }
    // End point sites. A corner v is the nearest boundary point only of points q in its normal cone, behind both of
    // its edges: (q − v)·u ≤ 0 for the unit direction u along each edge away from v. A q within maxMove of the start
    // p has (p − v)·u ≤ maxMove there, so a corner failing this for one edge is no site of any candidate:
    // this drops convex corners (their cone lies outside the opening), which would otherwise crowd the site list.
    const pa2 = ax * ax + ay * ay, pb2 = (ax + dx) * (ax + dx) + (ay + dy) * (ay + dy);
    // (p − a)·(d/len) for the start corner a; (p − b)·(−d/len) = len − that for the end corner b.
    const along = -(ax * dx + ay * dy) / len;
    if (!(pa2 > far2)) {
      const pa = Math.sqrt(pa2);
      if (pa <= d + reach) n = addCandidate(n, 1, ax, ay, 0, pa, along > maxMove);
    }
    if (!(pb2 > far2)) {
      const pb = Math.sqrt(pb2);
      if (pb <= d + reach) n = addCandidate(n, 1, ax + dx, ay + dy, 0, pb, len - along > maxMove);
    }
  }
  // Nearest MAX_SITES sites.
  let m = 0;
  const used = usedS.fill(0, 0, n);
  while (m < MAX_SITES) {
    let best = -1;
    for (let q = 0; q < n; q++) if (!used[q] && candKind[q] !== 2 && (best < 0 || (candD[q] as number) < (candD[best] as number))) best = q;
    if (best < 0) break;
    used[best] = 1;
    kind[m] = candKind[best] as number;
    sa[m] = candA[best] as number;
    sb[m] = candB[best] as number;
    sc[m] = candC[best] as number;
    sd[m] = candD[best] as number;
    m++;
  }
  best.edges = edges;
  best.x = x;
  best.y = y;
  best.d = d;
  best.px = 0;
  best.py = 0;
  best.found = false;
  best.maxMove = maxMove;
  best.d0 = d;
  best.n = 0;
  best.largest = largest;
  // Plateaus: two facing parallel lines; the start point projected onto their midline.
  for (let a = 0; a < m; a++) {
    if (kind[a] !== 0) continue;
    for (let b = a + 1; b < m; b++) {
      if (kind[b] !== 0) continue;
      const dot = (sa[a] as number) * (sa[b] as number) + (sb[a] as number) * (sb[b] as number);
      if (dot > -1 + 1e-12) continue;
      // g_a(p) = n_a·p − c_a; at the origin g_a = −c_a. Half the gap is r; move along n_a by r − g_a(0).
      const ga = -(sc[a] as number), gb = -(sc[b] as number);
      const r = (ga + gb) / 2;
      consider((sa[a] as number) * (r - ga), (sb[a] as number) * (r - ga));
    }
  }
  // Medial-axis vertices: equidistant to three sites.
  tripleIn[0] = d;
  tripleIn[1] = maxMove;
  for (let a = 0; a < m; a++) for (let b = a + 1; b < m; b++) for (let c = b + 1; c < m; c++) {
    // D there is at most the triple's radius: only a radius above the start's (largest: the best so far's) can win.
    if (solveTriple(a, b, c) && (sol[2] as number) > (largest ? best.d : d)) consider(sol[0] as number, sol[1] as number);
  }
  if (largest) {
    if (!best.found || !isLocalMaximum(edges, x + best.px, y + best.py, best.d)) return false;
    snapped[0] = x + best.px;
    snapped[1] = y + best.py;
    snapped[2] = best.d;
    return true;
  }
  // Nearest first: the first candidate (in increasing distance from the start) that is a certified maximum.
  for (let left = best.n; left > 0; left--) {
    let k = -1, k2 = Infinity;
    for (let q = 0; q < best.n; q++) {
      const q2 = (ptX[q] as number) ** 2 + (ptY[q] as number) ** 2;
      if ((ptD[q] as number) >= 0 && q2 < k2) {
        k = q;
        k2 = q2;
      }
    }
    const px = x + (ptX[k] as number), py = y + (ptY[k] as number), pd = ptD[k] as number;
    ptD[k] = -1;
    if (!isLocalMaximum(edges, px, py, pd)) continue;
    snapped[0] = px;
    snapped[1] = py;
    snapped[2] = pd;
    return true;
  }
  return false;
}

const angles = new Float64Array(256);

/**
 * Whether D has a local maximum at (x, y), where D = d: the unit vectors from the nearest boundary points (the active
 * sites, within 1e-9 relative of d) to the point leave no angular gap of π or more — every direction then brings the
 * point closer to some site at first order. A gap of exactly π (two facing edges) is a maximum only when every active
 * site is an edge line: D is then locally the minimum of linear functions, concave, so the point is a (plateau)
 * maximum. With a corner among the sites a gap of π can be a saddle (a neck between two corners): not accepted.
 */
export function isLocalMaximum(edges: Float64Array, x: number, y: number, d: number): boolean {
  args[0] = x;
  args[1] = y;
  args[2] = d;
  return localMaximumAt(edges, 1e-9, 0);
}

/**
 * isLocalMaximum up to drawing noise: sites within `relTol` of d, and between two facing edges an angular gap up to
 * π + `gapTol`. Walls of a rotated trench, their vertices rounded to the database grid, converge by about one grid
 * step per edge length (≈ 1e-3 rad over 1 µm): its centre line then has no strict maximum anywhere, though any user
 * reads it as a straight trench. Corners keep the strict test (a gap near π there is a neck, not a trench).
 */
export function isNearLocalMaximum(edges: Float64Array, x: number, y: number, d: number, relTol: number, gapTol: number): boolean {
  args[0] = x;
  args[1] = y;
  args[2] = d;
  return localMaximumAt(edges, relTol, gapTol);
}

function localMaximumAt(edges: Float64Array, relTol: number, gapTol: number): boolean {
  const x = args[0] as number, y = args[1] as number, d = args[2] as number;
  const tol = relTol * (1 + d);
  // Far sites are told apart on the squared distance (a 1e-9 relative margin, far beyond rounding) without a √.
  const far2 = (d + tol) * (d + tol) * (1 + relTol);
  let n = 0, corner = false;
  for (let o = 0; o < edges.length && n < angles.length; o += 5) {
    const ax = edges[o] as number, ay = edges[o + 1] as number, dx = edges[o + 2] as number, dy = edges[o + 3] as number;
    const l2 = edges[o + 4] as number;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    const inside = t > 0 && t < 1;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    const ex = x - ax - t * dx, ey = y - ay - t * dy;
    const e2 = ex * ex + ey * ey;
    if (e2 > far2 || Math.sqrt(e2) > d + tol) continue;
    if (!inside) corner = true;
    angles[n++] = Math.atan2(ey, ex);
  }
  if (n < 2) return false;
  // Insertion sort: a handful of sites (a typed-array sort of a fresh subarray cost more than the rest of the test).
  const a = angles;
  for (let k = 1; k < n; k++) {
    const v = a[k] as number;
    let q = k - 1;
    while (q >= 0 && (a[q] as number) > v) {
      a[q + 1] = a[q] as number;
      q--;
    }
    a[q + 1] = v;
  }
  let gap = (a[0] as number) + 2 * Math.PI - (a[n - 1] as number);
  for (let k = 1; k < n; k++) gap = Math.max(gap, (a[k] as number) - (a[k - 1] as number));
  return corner ? gap < Math.PI - 1e-9 : gap <= Math.PI + 1e-9 + gapTol;
}

/** Best candidate of the current snap; unless `largest`, also the start's distance d0 and the n candidates above it
 * in ptX/ptY/ptD (module state: no closure per call). */
const best: { edges: Float64Array; x: number; y: number; d: number; px: number; py: number; found: boolean; maxMove: number; d0: number; n: number; largest: boolean } = { edges: new Float64Array(0), x: 0, y: 0, d: 0, px: 0, py: 0, found: false, maxMove: 0, d0: 0, n: 0, largest: false };
/** Candidates above the start (relative to it) and their exact distances (−1 once tried). At most 28 + 56 per snap. */
const ptX = new Float64Array(96), ptY = new Float64Array(96), ptD = new Float64Array(96);

/** Keeps candidate (px, py) (relative to the start) when it is within reach and farther from the edges than the best;
 * unless `largest`, records it when farther than the start. */
function consider(px: number, py: number): void {
  if (!(Math.sqrt(px * px + py * py) < best.maxMove)) return;
  const e = distanceToEdges(best.edges, best.x + px, best.y + py);
  if (!best.largest && e > best.d0 + 1e-12 * (1 + best.d0) && best.n < ptX.length) {
    ptX[best.n] = px;
    ptY[best.n] = py;
    ptD[best.n] = e;
    best.n++;
  }
  if (e > best.d + 1e-12 * (1 + best.d)) {
    best.d = e;
    best.px = px;
    best.py = py;
    best.found = true;
  }
}

/** solveTriple's input (start radius r0, move bound) and result (x, y, radius): typed slots, not arguments or
 * module variables, so the millions of calls do not box a number each (garbage collection was 8 % of the time). */
const tripleIn = new Float64Array(2), sol = new Float64Array(3);

/** Newton's method for the point equidistant (radius r) to sites a, b, c, from the origin with r = r0 (tripleIn);
 * false when it leaves twice the move bound (the triple has no vertex nearby), else true with the point in `sol`.
 * Each row of the Jacobian is (∂g/∂x, ∂g/∂y, −1); kept in locals (some 16 million iterations on the bench layout). */
function solveTriple(a: number, b: number, c: number): boolean {
  const r0 = tripleIn[0] as number, maxMove = tripleIn[1] as number;
  let px = 0, py = 0, r = r0;
  const k0 = kind[a] as number, a0 = sa[a] as number, b0 = sb[a] as number, c0 = sc[a] as number;
  const k1 = kind[b] as number, a1 = sa[b] as number, b1 = sb[b] as number, c1 = sc[b] as number;
  const k2 = kind[c] as number, a2 = sa[c] as number, b2 = sb[c] as number, c2 = sc[c] as number;
  for (let it = 0; it < 12; it++) {
    let g0: number, gx0: number, gy0: number, g1: number, gx1: number, gy1: number, g2: number, gx2: number, gy2: number;
    if (k0 === 0) {
      gx0 = a0;
      gy0 = b0;
      g0 = gx0 * px + gy0 * py - c0;
    } else {
      const ex = px - a0, ey = py - b0;
      g0 = Math.sqrt(ex * ex + ey * ey);
      if (g0 === 0) return false;
      gx0 = ex / g0;
      gy0 = ey / g0;
    }
    if (k1 === 0) {
      gx1 = a1;
      gy1 = b1;
      g1 = gx1 * px + gy1 * py - c1;
    } else {
      const ex = px - a1, ey = py - b1;
      g1 = Math.sqrt(ex * ex + ey * ey);
      if (g1 === 0) return false;
      gx1 = ex / g1;
      gy1 = ey / g1;
    }
    if (k2 === 0) {
      gx2 = a2;
      gy2 = b2;
      g2 = gx2 * px + gy2 * py - c2;
    } else {
      const ex = px - a2, ey = py - b2;
      g2 = Math.sqrt(ex * ex + ey * ey);
      if (g2 === 0) return false;
      gx2 = ex / g2;
      gy2 = ey / g2;
    }
    // Solve J·δ = −F by Cramer's rule.
    const det = det3(gx0, gy0, -1, gx1, gy1, -1, gx2, gy2, -1);
    if (!(Math.abs(det) > 1e-12)) return false;
    const f0 = -(g0 - r), f1 = -(g1 - r), f2 = -(g2 - r);
    const dx = det3(f0, gy0, -1, f1, gy1, -1, f2, gy2, -1) / det;
    const dy = det3(gx0, f0, -1, gx1, f1, -1, gx2, f2, -1) / det;
    const dr = det3(gx0, gy0, f0, gx1, gy1, f1, gx2, gy2, f2) / det;
    px += dx;
    py += dy;
    r += dr;
    if (!Number.isFinite(px + py + r) || r <= 0 || px * px + py * py > 4 * maxMove * maxMove) return false;
    if (Math.abs(dx) + Math.abs(dy) + Math.abs(dr) <= 1e-12 * (1 + r0)) {
      sol[0] = px;
      sol[1] = py;
      sol[2] = r;
      return true;
    }
  }
  // Not settled to 1e-12 (rounding): the last iterate is still a candidate, checked on the exact distance.
  sol[0] = px;
  sol[1] = py;
  sol[2] = r;
  return true;
}

function det3(a: number, b: number, c: number, d: number, e: number, f: number, g: number, h: number, i: number): number {
  return a * (e * i - f * h) - b * (d * i - f * g) + c * (d * h - e * g);
}
