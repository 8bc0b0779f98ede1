/** Exact distance from a point to a feature's edges (the widths searches, disk-search.ts and ridge-snap.ts). */

let edgeScratch = new Float64Array(0);

/**
 * Ring edges as flat (ax, ay, dx, dy, |d|²) quintuples, built once per feature for the exact distance queries.
 * `reuse`: written into module scratch (valid until the next reusing call), for callers measuring one feature at a time.
 */
export function edgeList(coords: ArrayLike<number>, rings: [number, number][], reuse = false): Float64Array {
  let total = 0;
  for (let ri = 0; ri < rings.length; ri++) total += rings[ri]![1] - rings[ri]![0];
  if (reuse && edgeScratch.length < 5 * total) edgeScratch = new Float64Array(Math.max(10 * total, 2 * edgeScratch.length));
  const out = reuse ? edgeScratch.subarray(0, 5 * total) : new Float64Array(5 * total);
  let o = 0;
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
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
export function distanceToEdges(edges: Float64Array, x: number, y: number): number {
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
export function distanceAbove(edges: Float64Array, x: number, y: number, floor: number): number {
  const m = edges.length;
  if (m === 0) return Infinity;
  let best = Infinity;
  const first = lastRejecter < m ? lastRejecter : 0;
  // √d2 ≤ floor decided on d2 where it is clear by a margin (1e-9 relative, far beyond rounding); √ only in between.
  const f2 = floor * floor;
  const below = floor > 0 ? f2 * (1 - 1e-9) : -1, above = f2 * (1 + 1e-9);
  for (let q = 0; q < m; q += 5) {
    let o = first + q;
    if (o >= m) o -= m;
    const ax = edges[o] as number, ay = edges[o + 1] as number, dx = edges[o + 2] as number, dy = edges[o + 3] as number;
    const l2 = edges[o + 4] as number;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    const ex = x - ax - t * dx, ey = y - ay - t * dy;
    const d2 = ex * ex + ey * ey;
    if (d2 < below || (!(d2 > above) && Math.sqrt(d2) <= floor)) {
      lastRejecter = o;
      return -1;
    }
    if (d2 < best) best = d2;
  }
  return Math.sqrt(best);
}

/**
 * Math.hypot(a, b), the same number (V8's algorithm for two arguments: both scaled by the larger magnitude,
 * √(n² + m²)·max; checked bit for bit on 2·10⁷ random pairs), without the builtin's argument list, which cost an
 * allocation per call in the cover search.
 */
export function hypot2(a: number, b: number): number {
  const x = Math.abs(a), y = Math.abs(b);
  const max = x < y ? y : x;
  if (max === 0) return 0;
  if (max === Infinity) return Infinity;
  const n = x / max, m = y / max;
  return Math.sqrt(n * n + m * m) * max;
}
