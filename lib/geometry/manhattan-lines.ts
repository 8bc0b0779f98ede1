/**
 * The lines of the compressed Manhattan lattice (manhattan-widths.ts): a non-uniform rectilinear node lattice on which
 * the distance D to the boundary of a Manhattan (axis-parallel) opening is exact at every node, whatever grid its
 * vertices lie on.
 *
 * Lines (x; y likewise with the roles swapped):
 * - every vertex x. With every vertex y a y line too, the nearest boundary point of any node — the foot of the
 *   perpendicular on an edge, or a vertex — is itself a node, and a non-interior one, so the distance to the nearest
 *   non-interior node is exact.
 * - the midline (xL + xR)/2 of every pair of vertical edges that face each other across the interior (the two ends of
 *   a maximal inside run of a horizontal band of the vertex grid): the plateau of D of every trench, stub included,
 *   has nodes, so its half-width is a node distance.
 * - for each horizontal facing pair (yB, yT; half-gap r) over the x stretch [x0, x1] where they face: x0 + r and
 *   x1 − r. These are where the plateau ends against a closing edge (a stub's end: its last self-centred point when
 *   the stub is as long as it is wide) and where the coverage by the disks of the wider region beyond an open end
 *   stops (a disk centred just outside a mouth of width 2r reaches less than r into it); and, when the stretch is
 *   shorter than 2r, a line just outside each end whose disk covers the far plateau end (a stub shorter than its
 *   width is covered there and has no self-centred point: without the line a coarse lattice would not see that).
 * - refinement: gaps wider than `h` get lines every `h` within `reach` of their ends (where the shape changes, D is
 *   not constant along the gap, and disks from beyond the ends can reach in: a disk of an opening reaches less than
 *   the strip width into a strip, see manhattan-widths.ts) and one at the middle; farther in, the opening is a set of
 *   straight strips along the gap and nothing changes along it.
 *
 * The vertex grid's cells are each wholly inside or outside the opening; `cellIn` (row-major, (nbx−1)·(nby−1))
 * records which, and nodes are classified from it.
 *
 * Every array of the result is module scratch reused from opening to opening (a few hundred thousand openings per
 * layout: fresh arrays per opening cost more than the arithmetic): valid until the next call.
 */

/** Lines of the compressed lattice and the vertex grid they refine. */
export interface ManhattanLines {
  /** Line positions xs[0..nx), ys[0..ny) (the arrays may be longer: scratch). */
  xs: Float64Array;
  ys: Float64Array;
  nx: number;
  ny: number;
  /** Sorted distinct vertex coordinates (the vertex grid), bx[0..nbx), by[0..nby). */
  bx: Float64Array;
  by: Float64Array;
  nbx: number;
  nby: number;
  /** 1 = vertex-grid cell (column c, row r) inside, at r·(nbx − 1) + c. */
  cellIn: Uint8Array;
  /** Refinement step: gaps wider than this lie where D does not change along them (far from every vertex line). */
  h: number;
}

/** A growable list of numbers in a typed buffer (module scratch: cleared, not reallocated, per opening). */
interface NumList {
  a: Float64Array;
  n: number;
}

const numList = (): NumList => ({ a: new Float64Array(64), n: 0 });

function push(l: NumList, v: number): void {
  if (l.n === l.a.length) {
    const grown = new Float64Array(2 * l.a.length);
    grown.set(l.a);
    l.a = grown;
  }
  l.a[l.n++] = v;
}

/** Sorts a[0..n) (numeric, as Float64Array sort: −0 before 0) and drops repeats in place; returns the distinct count.
 * Short lists by insertion (no subarray view per call). */
function distinctSortedInPlace(a: Float64Array, n: number): number {
  if (n > 64) a.subarray(0, n).sort();
  else {
    for (let k = 1; k < n; k++) {
      const v = a[k] as number;
      let q = k - 1;
      for (; q >= 0; q--) {
        const u = a[q] as number;
        if (!(u > v || (u === 0 && v === 0 && 1 / u > 0 && 1 / v < 0))) break;
        a[q + 1] = u;
      }
      a[q + 1] = v;
    }
  }
  let m = 0;
  for (let k = 0; k < n; k++) if (k === 0 || (a[k] as number) !== (a[m - 1] as number)) a[m++] = a[k] as number;
  return m;
}

const vxL = numList(), vyL = numList(), xlL = numList(), ylL = numList(), xsL = numList(), ysL = numList(), tmpL = numList();
/** The one result object (module scratch, like its arrays). */
const result: ManhattanLines = { xs: new Float64Array(0), ys: new Float64Array(0), nx: 0, ny: 0, bx: new Float64Array(0), by: new Float64Array(0), nbx: 0, nby: 0, cellIn: new Uint8Array(0), h: 0 };
let windS = new Int32Array(0), cellInS = new Uint8Array(0), reachXS = new Float64Array(0), reachYS = new Float64Array(0);

/** Index of value v in sorted distinct a[0..n) (v must be present). */
function indexOf(a: Float64Array, n: number, v: number): number {
  let lo = 0, hi = n - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if ((a[mid] as number) < v) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Stretches found by facingPairs: lo, hi (across), s0, s1 (along), four numbers each (reused). */
let pairS = new Float64Array(64);
let curS = new Int32Array(0), nextS = new Int32Array(0);

/**
 * Facing pairs along one axis: for each band (row r of the vertex grid when `rows`, else column), the maximal runs of
 * inside cells; a run continuing over the next band with the same ends extends the stretch. Returns the stretch count,
 * written to pairS as (lo, hi, s0, s1): the run's ends (coordinates across) and the stretch (coordinates along).
 */
function facingPairs(cellIn: Uint8Array, ncx: number, ncy: number, rows: boolean, across: Float64Array, along: Float64Array): number {
  const nb = rows ? ncy : ncx, nc = rows ? ncx : ncy;
  // Open stretches as (first cell, last cell, start band) triples.
  if (curS.length < 3 * (nc + 1)) {
    curS = new Int32Array(3 * (nc + 1));
    nextS = new Int32Array(3 * (nc + 1));
  }
  let cur = curS, next = nextS, nCur = 0, nPairs = 0;
  for (let b = 0; b <= nb; b++) {
    let nNext = 0;
    if (b < nb) {
      for (let c = 0; c < nc; ) {
        if (!(rows ? cellIn[b * ncx + c] : cellIn[c * ncx + b])) {
          c++;
          continue;
        }
        let e = c;
        while (e + 1 < nc && (rows ? cellIn[b * ncx + e + 1] : cellIn[(e + 1) * ncx + b])) e++;
        let start = b;
        for (let u = 0; u < nCur; u++) if (cur[3 * u] === c && cur[3 * u + 1] === e) start = cur[3 * u + 2] as number;
        next[3 * nNext] = c;
        next[3 * nNext + 1] = e;
        next[3 * nNext + 2] = start;
        nNext++;
        c = e + 1;
      }
    }
    for (let u = 0; u < nCur; u++) {
      const c = cur[3 * u] as number, e = cur[3 * u + 1] as number, start = cur[3 * u + 2] as number;
      let goesOn = false;
      for (let w = 0; w < nNext && !goesOn; w++) goesOn = next[3 * w] === c && next[3 * w + 1] === e && next[3 * w + 2] === start;
      if (goesOn) continue;
      if (pairS.length < 4 * (nPairs + 1)) {
        const grown = new Float64Array(2 * pairS.length);
        grown.set(pairS);
        pairS = grown;
      }
      pairS[4 * nPairs] = across[c] as number;
      pairS[4 * nPairs + 1] = across[e + 1] as number;
      pairS[4 * nPairs + 2] = along[start] as number;
      pairS[4 * nPairs + 3] = along[b] as number;
      nPairs++;
    }
    const t = cur;
    cur = next;
    next = t;
    nCur = nNext;
  }
  return nPairs;
}

/** Lines where a plateau of half-width r over the stretch [s0, s1] ends or stops being covered (module doc). */
function pushEnds(lines: NumList, s0: number, s1: number, r: number): void {
  if (s1 - s0 > 2 * r) {
    push(lines, s0 + r);
    push(lines, s1 - r);
    return;
  }
  push(lines, (s0 + s1) / 2);
  if (s1 - s0 > r) {
    push(lines, s0 + r);
    push(lines, s1 - r);
  }
  // Stretch shorter than its width: the plateau end at depth t = (s1 − s0) − r from either end is covered by the
  // disk centred u = (r² − t²)/(2t) outside that end on the midline (radius √(r² + u²) ≥ t + u) when the opening
  // extends there; a line at half that offset puts a node strictly inside the covering range.
  const t = s1 - s0 - r;
  if (t > 0 && t < r) {
    const u = (r * r - t * t) / (4 * t);
    push(lines, s0 - u);
    push(lines, s1 + u);
  }
}

/**
 * Lines of the compressed lattice of a Manhattan opening (rings in its bbox frame, bbox [0, 0, bw, bh]), refined to
 * gaps of at most `h` near the vertex lines; null when the lattice would exceed `maxNodes` nodes.
 */
export function manhattanLines(coords: ArrayLike<number>, rings: [number, number][], h: number, maxNodes: number): ManhattanLines | null {
  vxL.n = 0;
  vyL.n = 0;
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
    for (let k = s; k < e; k++) {
      push(vxL, coords[2 * k] as number);
      push(vyL, coords[2 * k + 1] as number);
    }
  }
  const nbx = distinctSortedInPlace(vxL.a, vxL.n), nby = distinctSortedInPlace(vyL.a, vyL.n);
  const bx = vxL.a, by = vyL.a;
  const ncx = nbx - 1, ncy = nby - 1;
  if (ncx < 1 || ncy < 1) return null;
  // Winding per vertex-grid cell: each vertical edge adds its direction to the cells right of it in its rows.
  if (windS.length < ncx * ncy) {
    windS = new Int32Array(Math.max(ncx * ncy, 2 * windS.length));
    cellInS = new Uint8Array(windS.length);
  }
  const wind = windS.fill(0, 0, ncx * ncy);
  for (let ri = 0; ri < rings.length; ri++) {
    const s = rings[ri]![0], e = rings[ri]![1];
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      const xa = coords[2 * k] as number, ya = coords[2 * k + 1] as number, yb = coords[2 * n + 1] as number;
      if (ya === yb) continue;
      const c = indexOf(bx, nbx, xa);
      const dir = yb > ya ? 1 : -1;
      for (let r = indexOf(by, nby, Math.min(ya, yb)), r1 = indexOf(by, nby, Math.max(ya, yb)); r < r1; r++) if (c < ncx) wind[r * ncx + c]! += dir;
    }
  }
  const cellIn = cellInS;
  for (let r = 0; r < ncy; r++) {
    let w = 0;
    for (let c = 0; c < ncx; c++) {
      w += wind[r * ncx + c] as number;
      cellIn[r * ncx + c] = w !== 0 ? 1 : 0;
    }
  }
  xlL.n = 0;
  ylL.n = 0;
  for (let k = 0; k <= ncx; k++) push(xlL, bx[k] as number);
  for (let k = 0; k <= ncy; k++) push(ylL, by[k] as number);
  // Largest strip width per vertex-grid column / row: how far disks reach into a gap there.
  if (reachXS.length < ncx) reachXS = new Float64Array(Math.max(ncx, 2 * reachXS.length));
  if (reachYS.length < ncy) reachYS = new Float64Array(Math.max(ncy, 2 * reachYS.length));
  const reachX = reachXS.fill(0, 0, ncx), reachY = reachYS.fill(0, 0, ncy);
  let n = facingPairs(cellIn, ncx, ncy, true, bx, by);
  for (let k = 0; k < n; k++) {
    const lo = pairS[4 * k] as number, hi = pairS[4 * k + 1] as number, s0 = pairS[4 * k + 2] as number, s1 = pairS[4 * k + 3] as number;
    push(xlL, (lo + hi) / 2);
    pushEnds(ylL, s0, s1, (hi - lo) / 2);
    for (let r = indexOf(by, nby, s0), r1 = indexOf(by, nby, s1); r < r1; r++) reachY[r] = Math.max(reachY[r] as number, hi - lo);
  }
  n = facingPairs(cellIn, ncx, ncy, false, by, bx);
  for (let k = 0; k < n; k++) {
    const lo = pairS[4 * k] as number, hi = pairS[4 * k + 1] as number, s0 = pairS[4 * k + 2] as number, s1 = pairS[4 * k + 3] as number;
    push(ylL, (lo + hi) / 2);
    pushEnds(xlL, s0, s1, (hi - lo) / 2);
    for (let c = indexOf(bx, nbx, s0), c1 = indexOf(bx, nbx, s1); c < c1; c++) reachX[c] = Math.max(reachX[c] as number, hi - lo);
  }
  const nx = refine(xlL, bx, nbx, reachX, h, xsL), ny = refine(ylL, by, nby, reachY, h, ysL);
  if (nx * ny > maxNodes) return null;
  const L = result;
  L.xs = xsL.a;
  L.ys = ysL.a;
  L.nx = nx;
  L.ny = ny;
  L.bx = bx;
  L.by = by;
  L.nbx = nbx;
  L.nby = nby;
  L.cellIn = cellIn;
  L.h = h;
  return L;
}

/** Lines within [base[0], base[nb − 1]], with gaps over h refined near their ends (see module doc), into `out`;
 * returns their count. */
function refine(lines: NumList, base: Float64Array, nb: number, reach: Float64Array, h: number, out: NumList): number {
  const lo = base[0] as number, hi = base[nb - 1] as number;
  tmpL.n = 0;
  for (let k = 0; k < lines.n; k++) {
    const v = lines.a[k] as number;
    if (v >= lo && v <= hi) push(tmpL, v);
  }
  const a = tmpL.a, na = distinctSortedInPlace(tmpL.a, tmpL.n);
  out.n = 0;
  let c = 0;
  for (let k = 0; k + 1 < na; k++) {
    const x0 = a[k] as number, x1 = a[k + 1] as number;
    push(out, x0);
    const gap = x1 - x0;
    if (!(gap > h)) continue;
    while (c + 1 < nb - 1 && (base[c + 1] as number) <= x0) c++;
    const rch = (reach[c] as number) / 2 + h;
    const n = Math.ceil(gap / h);
    if (gap <= 2 * rch + h) {
      for (let q = 1; q < n; q++) push(out, x0 + (gap * q) / n);
      continue;
    }
    const m = Math.ceil(rch / h);
    for (let q = 1; q <= m; q++) push(out, x0 + q * h);
    push(out, (x0 + x1) / 2);
    for (let q = m; q >= 1; q--) push(out, x1 - q * h);
  }
  push(out, a[na - 1] as number);
  return out.n;
}
