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
  if (rawS.length < 6 * total) {
    rawS = new Float64Array(12 * total);
    orderS = new Int32Array(2 * total);
    activeS = new Int32Array(2 * total);
    upX = new Float64Array(2 * total);
    loX = new Float64Array(2 * total);
    upD = new Int8Array(2 * total);
    loD = new Int8Array(2 * total);
    upI = new Int32Array(4 * total + 4);
    loI = new Int32Array(4 * total + 4);
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
  return { mask, runs: runsS, rowRun, count };
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
let fS = new Float64Array(0), dS = new Float64Array(0), zS = new Float64Array(0), vS = new Int32Array(0);
const NONE = -(2 ** 30);

/**
 * Squared distance (lattice units) from each interior node to the nearest non-interior node; 0 elsewhere, Infinity
 * when a row and a column hold no non-interior node. Column pass by run bookkeeping, row pass (Felzenszwalb &
 * Huttenlocher lower envelope, distance.ts) per run: a parabola beyond a background node never wins past it.
 */
export function runDistanceTransform(r: InteriorRuns, nx: number, ny: number): Float64Array {
  const nodes = nx * ny;
  if (d2S.length < nodes) d2S = new Float64Array(Math.max(nodes, 2 * d2S.length));
  const out = d2S.subarray(0, nodes).fill(0);
  if (colS.length < nx) colS = new Int32Array(Math.max(nx, 2 * colS.length));
  if (fS.length < nx + 3) {
    fS = new Float64Array(2 * nx + 3);
    dS = new Float64Array(2 * nx + 3);
    zS = new Float64Array(2 * nx + 4);
    vS = new Int32Array(2 * nx + 3);
  }
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
  const f = fS, d = dS, z = zS, v = vS;
  for (let j = 0; j < ny; j++) {
    const line = j * nx;
    for (let k = rowRun[j] as number; k < (rowRun[j + 1] as number); k++) {
      const i0 = runs[2 * k] as number, i1 = runs[2 * k + 1] as number;
      // Local row: the background node on each side (f = 0) when the row has one there, then the run.
      const a = i0 > 0 ? i0 - 1 : i0, b = i1 + 1 < nx ? i1 + 1 : i1;
      const len = b - a + 1;
      for (let i = a; i <= b; i++) f[i - a] = i >= i0 && i <= i1 ? (out[line + i] as number) : 0;
      edt1d(f, len, d, v, z);
      for (let i = i0; i <= i1; i++) out[line + i] = d[i - a] as number;
    }
  }
  return out;
}

/** 1-D squared distance transform of f (lower envelope of parabolas), written into d (as in distance.ts). */
function edt1d(f: Float64Array, n: number, d: Float64Array, v: Int32Array, z: Float64Array): void {
  let k = 0;
  v[0] = 0;
  z[0] = -Infinity;
  z[1] = Infinity;
  for (let q = 1; q < n; q++) {
    const fq = f[q] as number;
    if (fq === Infinity) continue;
    if ((f[v[0] as number] as number) === Infinity) {
      v[0] = q;
      continue;
    }
    let s: number;
    for (;;) {
      const vk = v[k] as number;
      s = (fq + q * q - ((f[vk] as number) + vk * vk)) / (2 * q - 2 * vk);
      if (s <= (z[k] as number) && k > 0) k--;
      else break;
    }
    k++;
    v[k] = q;
    z[k] = s;
    z[k + 1] = Infinity;
  }
  if ((f[v[0] as number] as number) === Infinity) {
    d.fill(Infinity, 0, n);
    return;
  }
  k = 0;
  for (let q = 0; q < n; q++) {
    while ((z[k + 1] as number) < q) k++;
    const vk = v[k] as number;
    d[q] = (q - vk) * (q - vk) + (f[vk] as number);
  }
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
