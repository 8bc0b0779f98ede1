/**
 * The widths lattice (widths.ts) kept as runs of interior nodes per row, so every pass touches interior nodes only.
 * Openings measured on the lattice are mostly L/T/cross unions of thin trenches whose bbox is largely outside the
 * opening: a dense pass over the bbox spends most of its time on background nodes.
 *
 * Same answers as the dense functions: `interiorRuns` marks the nodes `latticeInterior` marks (same float
 * comparisons), `runDistanceTransform` gives `squaredDistanceTransform` of that mask on the interior nodes (0 on the
 * others), `runMaximalCentres` lists `maximalDiskCentres` in the same (row-major) order. All buffers are module
 * scratch reused from call to call: the results are valid until the next call.
 */
import type { Lattice } from './lattice';

/** Interior nodes of a lattice: `mask` (1 = interior, nx·ny) and, per row j, runs[2r], runs[2r+1] (first, last i)
 * for r in rowRun[j] .. rowRun[j+1]−1. */
export interface InteriorRuns {
  mask: Uint8Array;
  runs: Int32Array;
  rowRun: Int32Array;
  /** Interior node count. */
  count: number;
}

let maskS = new Uint8Array(0);
let runsS = new Int32Array(64);
let rowRunS = new Int32Array(0);
/** The one result object (module scratch, like its arrays). */
const result: InteriorRuns = { mask: maskS, runs: runsS, rowRun: rowRunS, count: 0 };
let rawS = new Float64Array(0);
let orderS = new Int32Array(0), activeS = new Int32Array(0);
let upX = new Float64Array(0), loX = new Float64Array(0);
let upD = new Int8Array(0), loD = new Int8Array(0);
let upI = new Int32Array(0), loI = new Int32Array(0);

function ensureRuns(n: number): void {
  if (runsS.length < n) {
    const next = new Int32Array(Math.max(n, 2 * runsS.length));
    next.set(runsS);
    runsS = next;
  }
}

/**
 * Nodes where the nonzero winding is nonzero in all four quadrants (the `latticeInterior` rule), as runs per row.
 * @param rings list of [start, end) point ranges into `coords` (interleaved x,y, dbu), nonzero fill
 */
export function interiorRuns(coords: ArrayLike<number>, rings: [number, number][], lat: Lattice): InteriorRuns {
  const { nx, ny } = lat;
  const nodes = nx * ny;
  if (maskS.length < nodes) maskS = new Uint8Array(Math.max(nodes, 2 * maskS.length));
  const mask = maskS.subarray(0, nodes).fill(0);
  if (rowRunS.length < ny + 1) rowRunS = new Int32Array(Math.max(ny + 1, 2 * rowRunS.length));
  const rowRun = rowRunS;
  let total = 0;
  for (const [s, e] of rings) total += e - s;
  if (orderS.length < total) {
    // Capacity for `cap` edges: crossings per half-row ≤ edges; intervals per half-row ≤ 2·crossings + 1.
    const cap = 2 * total;
    rawS = new Float64Array(6 * cap);
    orderS = new Int32Array(cap);
    activeS = new Int32Array(cap);
    upX = new Float64Array(cap);
    loX = new Float64Array(cap);
    upD = new Int8Array(cap);
    loD = new Int8Array(cap);
    upI = new Int32Array(4 * cap + 4);
    loI = new Int32Array(4 * cap + 4);
  }
  const raw = rawS, order = orderS, active = activeS;
  // Non-horizontal edges as ymin, ymax, xa, ya, xb, yb, sorted by ymin.
  let ne = 0;
  for (const [s, e] of rings) {
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      const xa = coords[2 * k] as number, ya = coords[2 * k + 1] as number, xb = coords[2 * n] as number, yb = coords[2 * n + 1] as number;
      if (ya === yb) continue;
      const o = 6 * ne;
      raw[o] = ya < yb ? ya : yb;
      raw[o + 1] = ya < yb ? yb : ya;
      raw[o + 2] = xa;
      raw[o + 3] = ya;
      raw[o + 4] = xb;
      raw[o + 5] = yb;
      // Insertion by ymin (tens of edges per opening).
      let p = ne++;
      const key = raw[o] as number;
      while (p > 0 && (raw[6 * (order[p - 1] as number)] as number) > key) {
        order[p] = order[p - 1] as number;
        p--;
      }
      order[p] = ne - 1;
    }
  }
  let nActive = 0, next = 0, nRuns = 0, count = 0;
  for (let j = 0; j < ny; j++) {
    rowRun[j] = nRuns;
    const y = lat.y0 + j * lat.step;
    while (next < ne && (raw[6 * (order[next] as number)] as number) <= y) active[nActive++] = order[next++] as number;
    let nu = 0, nl = 0, keep = 0;
    for (let a = 0; a < nActive; a++) {
      const k = active[a] as number;
      const ymin = raw[6 * k] as number, ymax = raw[6 * k + 1] as number;
      if (ymax < y) continue;
      active[keep++] = k;
      const xa = raw[6 * k + 2] as number, ya = raw[6 * k + 3] as number, xb = raw[6 * k + 4] as number, yb = raw[6 * k + 5] as number;
      const x = xa === xb ? xa : xa + ((y - ya) * (xb - xa)) / (yb - ya);
      const dir = yb > ya ? 1 : -1;
      if (ymin <= y && y < ymax) insertSorted(upX, upD, nu++, x, dir);
      if (ymin < y && y <= ymax) insertSorted(loX, loD, nl++, x, dir);
    }
    nActive = keep;
    if (nu === 0 || nl === 0) continue;
    const nui = halfRowIntervals(upX, upD, nu, lat, upI);
    const nli = halfRowIntervals(loX, loD, nl, lat, loI);
    // Intersection of the two sorted interval lists.
    ensureRuns(2 * (nRuns + nui + nli));
    const line = j * nx;
    for (let a = 0, b = 0; a < nui && b < nli; ) {
      const a0 = upI[2 * a] as number, a1 = upI[2 * a + 1] as number, b0 = loI[2 * b] as number, b1 = loI[2 * b + 1] as number;
      const lo = a0 > b0 ? a0 : b0, hi = a1 < b1 ? a1 : b1;
      if (lo <= hi) {
        runsS[2 * nRuns] = lo;
        runsS[2 * nRuns + 1] = hi;
        nRuns++;
        mask.fill(1, line + lo, line + hi + 1);
        count += hi - lo + 1;
      }
      if (a1 < b1) a++;
      else b++;
    }
  }
  rowRun[ny] = nRuns;
  result.mask = mask;
  result.runs = runsS;
  result.rowRun = rowRun;
  result.count = count;
  return result;
}

/** Insertion into the first n entries kept sorted by x (a handful of crossings per row). */
function insertSorted(xs: Float64Array, ds: Int8Array, n: number, x: number, d: number): void {
  let i = n;
  while (i > 0 && (xs[i - 1] as number) > x) {
    xs[i] = xs[i - 1] as number;
    ds[i] = ds[i - 1] as number;
    i--;
  }
  xs[i] = x;
  ds[i] = d;
}

/** First node index ≥ from whose x (x0 + i·step, as the dense test computes it) is ≥ X. */
function firstAtOrAfter(lat: Lattice, X: number, from: number): number {
  let i = Math.ceil((X - lat.x0) / lat.step);
  if (i < from) i = from;
  if (i > lat.nx) i = lat.nx;
  while (i > from && lat.x0 + (i - 1) * lat.step >= X) i--;
  while (i < lat.nx && lat.x0 + i * lat.step < X) i++;
  return i;
}

/**
 * Node intervals (first, last) of one half-row where the winding left of the node is nonzero and the crossings
 * through the node cancel (windingRow of lattice.ts), merged when adjacent. Returns the interval count.
 */
function halfRowIntervals(xs: Float64Array, ds: Int8Array, n: number, lat: Lattice, out: Int32Array): number {
  let m = 0, w = 0, c = 0, i = 0;
  while (c < n && i < lat.nx) {
    const X = xs[c] as number;
    let through = 0;
    let c2 = c;
    while (c2 < n && (xs[c2] as number) === X) through += ds[c2++] as number;
    const end = firstAtOrAfter(lat, X, i);
    if (w !== 0 && end > i) m = pushInterval(out, m, i, end - 1);
    i = end;
    if (i < lat.nx && lat.x0 + i * lat.step === X) {
      if (w !== 0 && through === 0) m = pushInterval(out, m, i, i);
      i++;
    }
    w += through;
    c = c2;
  }
  if (w !== 0 && i < lat.nx) m = pushInterval(out, m, i, lat.nx - 1);
  return m;
}

/** Appends interval (a, b) to the m intervals in out, merged with the last when adjacent; returns the new count. */
function pushInterval(out: Int32Array, m: number, a: number, b: number): number {
  if (m > 0 && (out[2 * m - 1] as number) === a - 1) {
    out[2 * m - 1] = b;
    return m;
  }
  out[2 * m] = a;
  out[2 * m + 1] = b;
  return m + 1;
}

let d2S = new Float64Array(0);
let colS = new Int32Array(0);
let fS = new Float64Array(0);
const NONE = -(2 ** 30);

/**
 * Squared distance (lattice units) from each interior node to the nearest non-interior node; 0 elsewhere, Infinity
 * when a row and a column hold no non-interior node. Column pass by run bookkeeping, row pass per run (the dense
 * transform's lower envelope of parabolas, distance.ts, evaluated directly: runs are a few nodes long).
 */
export function runDistanceTransform(r: InteriorRuns, nx: number, ny: number): Float64Array {
  const nodes = nx * ny;
  if (d2S.length < nodes) d2S = new Float64Array(Math.max(nodes, 2 * d2S.length));
  const out = d2S.subarray(0, nodes).fill(0);
  if (colS.length < nx) colS = new Int32Array(Math.max(nx, 2 * colS.length));
  if (fS.length < nx) fS = new Float64Array(2 * nx);
  const { mask, runs, rowRun } = r;
  const last = colS;
  for (let j = 0; j < ny; j++) {
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number); k++) {
      for (let i = runs[2 * k] as number, i1 = runs[2 * k + 1] as number; i <= i1; i++) {
        const q = j * nx + i;
        if (j === 0) last[i] = NONE;
        else if (!mask[q - nx]) last[i] = j - 1;
        const b = last[i] as number;
        out[q] = b === NONE ? Infinity : (j - b) * (j - b);
      }
    }
  }
  for (let j = ny - 1; j >= 0; j--) {
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number); k++) {
      for (let i = runs[2 * k] as number, i1 = runs[2 * k + 1] as number; i <= i1; i++) {
        const q = j * nx + i;
        if (j === ny - 1) last[i] = NONE;
        else if (!mask[q + nx]) last[i] = j + 1;
        const b = last[i] as number;
        if (b !== NONE) {
          const e = (b - j) * (b - j);
          if (e < (out[q] as number)) out[q] = e;
        }
      }
    }
  }
  // Row pass: d(q) = min over the row of (q − k)² + col(k). Scanned outwards from q while (q − k)² can still win; a
  // background node ends a side (nothing beyond it can win). Integer arithmetic: the same minimum as the envelope.
  const f = fS;
  for (let j = 0; j < ny; j++) {
    const line = j * nx;
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number); k++) {
      const i0 = runs[2 * k] as number, i1 = runs[2 * k + 1] as number;
      const len = i1 - i0 + 1;
      for (let q = 0; q < len; q++) f[q] = out[line + i0 + q] as number;
      const bgLeft = i0 > 0, bgRight = i1 + 1 < nx;
      for (let q = 0; q < len; q++) {
        let best = f[q] as number;
        let left = true, right = true;
        for (let s = 1; s * s < best && (left || right); s++) {
          const s2 = s * s;
          if (left) {
            if (q - s >= 0) {
              const c = s2 + (f[q - s] as number);
              if (c < best) best = c;
            } else {
              if (bgLeft && s2 < best) best = s2;
              left = false;
            }
          }
          if (right) {
            if (q + s < len) {
              const c = s2 + (f[q + s] as number);
              if (c < best) best = c;
            } else {
              if (bgRight && s2 < best) best = s2;
              right = false;
            }
          }
        }
        out[line + i0 + q] = best;
      }
    }
  }
  return out;
}

let rootS = new Float64Array(0);
let centresS = new Int32Array(0);

/**
 * Interior nodes whose disk (radius √d2) is not inside an 8-neighbour's disk, row-major (maximalDiskCentres of
 * distance.ts restricted to the runs). Returns a view of module scratch.
 */
export function runMaximalCentres(r: InteriorRuns, d2: Float64Array, nx: number, ny: number): Int32Array {
  const nodes = nx * ny;
  if (rootS.length < nodes) rootS = new Float64Array(Math.max(nodes, 2 * rootS.length));
  const d = rootS.subarray(0, nodes).fill(0);
  if (centresS.length < r.count) centresS = new Int32Array(Math.max(r.count, 2 * centresS.length));
  const { runs, rowRun } = r;
  for (let j = 0; j < ny; j++) {
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number); k++) {
      for (let q = j * nx + (runs[2 * k] as number), q1 = j * nx + (runs[2 * k + 1] as number); q <= q1; q++) d[q] = Math.sqrt(d2[q] as number);
    }
  }
  let m = 0;
  for (let j = 0; j < ny; j++) {
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number); k++) {
      for (let i = runs[2 * k] as number, i1 = runs[2 * k + 1] as number; i <= i1; i++) {
        const q = j * nx + i;
        const dc = d[q] as number;
        if (dc === 0 || dc === Infinity) continue;
        // Contained in a neighbour's disk when d(n) ≥ d(c) + |n − c| (1 or √2).
        const e1 = dc + 1 - 1e-9, e2 = dc + Math.SQRT2 - 1e-9;
        const l = i > 0, rr = i + 1 < nx, b = j > 0, t = j + 1 < ny;
        if ((l && (d[q - 1] as number) >= e1) || (rr && (d[q + 1] as number) >= e1) || (b && (d[q - nx] as number) >= e1) || (t && (d[q + nx] as number) >= e1)) continue;
        if ((l && b && (d[q - nx - 1] as number) >= e2) || (rr && b && (d[q - nx + 1] as number) >= e2) || (l && t && (d[q + nx - 1] as number) >= e2) || (rr && t && (d[q + nx + 1] as number) >= e2)) continue;
        centresS[m++] = q;
      }
    }
  }
  return centresS.subarray(0, m);
}

/** Largest finite d2 over the interior nodes (0 when none). */
export function runMaxD2(r: InteriorRuns, d2: Float64Array, nx: number, ny: number): number {
  const { runs, rowRun } = r;
  let best = 0;
  for (let j = 0; j < ny; j++) {
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number); k++) {
      for (let q = j * nx + (runs[2 * k] as number), q1 = j * nx + (runs[2 * k + 1] as number); q <= q1; q++) {
        const v = d2[q] as number;
        if (v > best && v !== Infinity) best = v;
      }
    }
  }
  return best;
}

/** The (up to) `n` interior nodes of largest finite d2, largest first, ties in row-major order; written to `top`. */
export function runTopNodes(r: InteriorRuns, d2: Float64Array, nx: number, ny: number, top: Int32Array): number {
  const { runs, rowRun } = r;
  const n = top.length;
  let m = 0;
  for (let j = 0; j < ny; j++) {
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number); k++) {
      for (let q = j * nx + (runs[2 * k] as number), q1 = j * nx + (runs[2 * k + 1] as number); q <= q1; q++) {
        const v = d2[q] as number;
        if (v === 0 || v === Infinity) continue;
        let p: number;
        if (m < n) p = m++;
        else if (v > (d2[top[n - 1] as number] as number)) p = n - 1;
        else continue;
        while (p > 0 && v > (d2[top[p - 1] as number] as number)) {
          top[p] = top[p - 1] as number;
          p--;
        }
        top[p] = q;
      }
    }
  }
  return m;
}

/** √d2 per node as computed by the last `runMaximalCentres` call (0 off the interior), valid until the next call. */
export function lastRoots(): Float64Array {
  return rootS;
}

let countS = new Int32Array(0);
let sortedS = new Int32Array(0);

/**
 * `centres` ordered by d2 descending, ties in their given order (a stable sort), into module scratch. The lattice
 * distances are integers (sums of squares), so a counting sort does it when the largest is moderate.
 */
export function sortByD2Descending(centres: Int32Array, d2: Float64Array, maxD2: number): Int32Array {
  const m = centres.length;
  if (!(maxD2 <= 65_536) || !Number.isInteger(maxD2)) return centres.slice().sort((a, b) => (d2[b] as number) - (d2[a] as number) || a - b);
  if (countS.length < maxD2 + 2) countS = new Int32Array(Math.max(maxD2 + 2, 2 * countS.length));
  if (sortedS.length < m) sortedS = new Int32Array(Math.max(m, 2 * sortedS.length));
  const count = countS.fill(0, 0, maxD2 + 2);
  // Bucket b = maxD2 − d2 (largest first); prefix sums give each bucket's start.
  for (let k = 0; k < m; k++) count[maxD2 - (d2[centres[k] as number] as number) + 1]!++;
  for (let b = 1; b <= maxD2 + 1; b++) count[b]! += count[b - 1] as number;
  const out = sortedS.subarray(0, m);
  for (let k = 0; k < m; k++) {
    const c = centres[k] as number;
    out[count[maxD2 - (d2[c] as number)]!++] = c;
  }
  return out;
}
