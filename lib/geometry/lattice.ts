/**
 * Interior test of a set of rings on a node lattice. Node (i, j) sits at (x0 + i·step, y0 + j·step) (dbu).
 * A node is interior when the nonzero winding is nonzero in all four quadrants around it, so nodes on the
 * boundary are not interior, while nodes on a seam between two abutting pieces (tile cuts) are.
 */
export interface Lattice {
  x0: number;
  y0: number;
  step: number;
  nx: number;
  ny: number;
}

/**
 * @param rings list of [start, end) point ranges into `coords` (interleaved x,y, dbu), nonzero fill
 * @param into optional buffer of length nx·ny to write into (cleared first): callers measuring many lattices reuse one
 * @returns Uint8Array nx·ny, 1 = interior node
 */
export function latticeInterior(coords: ArrayLike<number>, rings: [number, number][], lat: Lattice, into?: Uint8Array): Uint8Array {
  let total = 0;
  for (const [s, e] of rings) total += e - s;
  // Non-horizontal edges as ymin, ymax, xa, ya, xb, yb, sorted by ymin (typed arrays: this runs per feature).
  const raw = new Float64Array(6 * total);
  let ne = 0;
  for (const [s, e] of rings) {
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      const xa = coords[2 * k] as number, ya = coords[2 * k + 1] as number, xb = coords[2 * n] as number, yb = coords[2 * n + 1] as number;
      if (ya === yb) continue;
      const o = 6 * ne++;
      raw[o] = ya < yb ? ya : yb;
      raw[o + 1] = ya < yb ? yb : ya;
      raw[o + 2] = xa;
      raw[o + 3] = ya;
      raw[o + 4] = xb;
      raw[o + 5] = yb;
    }
  }
  const order = new Int32Array(ne);
  for (let k = 0; k < ne; k++) order[k] = k;
  order.sort((a, b) => (raw[6 * a] as number) - (raw[6 * b] as number));
  const mask = into ? into.fill(0) : new Uint8Array(lat.nx * lat.ny);
  const active = new Int32Array(ne);
  let nActive = 0;
  let next = 0;
  const upX = new Float64Array(ne), upD = new Int8Array(ne), loX = new Float64Array(ne), loD = new Int8Array(ne);
  const rowUp = new Uint8Array(lat.nx);
  for (let j = 0; j < lat.ny; j++) {
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
      if (ymin <= y && y < ymax) {
        insertSorted(upX, upD, nu++, x, dir);
      }
      if (ymin < y && y <= ymax) {
        insertSorted(loX, loD, nl++, x, dir);
      }
    }
    nActive = keep;
    if (nu === 0 || nl === 0) continue;
    windingRow(upX, upD, nu, lat, rowUp);
    windingRowAnd(loX, loD, nl, lat, rowUp, mask, j * lat.nx);
  }
  return mask;
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

/** For one half-row: 1 where the winding left of the node is nonzero and crossings through the node cancel. */
function windingRow(xs: Float64Array, ds: Int8Array, n: number, lat: Lattice, out: Uint8Array): void {
  let w = 0;
  let c = 0;
  for (let i = 0; i < lat.nx; i++) {
    const x = lat.x0 + i * lat.step;
    while (c < n && (xs[c] as number) < x) w += ds[c++] as number;
    let through = 0;
    for (let q = c; q < n && (xs[q] as number) === x; q++) through += ds[q] as number;
    out[i] = w !== 0 && through === 0 ? 1 : 0;
  }
}

/** Same test on the other half-row, AND-ed with `up` into mask[line + i]. */
function windingRowAnd(xs: Float64Array, ds: Int8Array, n: number, lat: Lattice, up: Uint8Array, mask: Uint8Array, line: number): void {
  let w = 0;
  let c = 0;
  for (let i = 0; i < lat.nx; i++) {
    const x = lat.x0 + i * lat.step;
    while (c < n && (xs[c] as number) < x) w += ds[c++] as number;
    if (w === 0 || !up[i]) continue;
    let through = 0;
    for (let q = c; q < n && (xs[q] as number) === x; q++) through += ds[q] as number;
    if (through === 0) mask[line + i] = 1;
  }
}
