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
 * @returns Uint8Array nx·ny, 1 = interior node
 */
export function latticeInterior(coords: ArrayLike<number>, rings: [number, number][], lat: Lattice): Uint8Array {
  const edges: number[] = []; // ymin, ymax, xa, ya, xb, yb
  for (const [s, e] of rings) {
    for (let k = s; k < e; k++) {
      const n = k + 1 < e ? k + 1 : s;
      const xa = coords[2 * k] as number, ya = coords[2 * k + 1] as number, xb = coords[2 * n] as number, yb = coords[2 * n + 1] as number;
      if (ya !== yb) edges.push(Math.min(ya, yb), Math.max(ya, yb), xa, ya, xb, yb);
    }
  }
  const ne = edges.length / 6;
  const order = Array.from({ length: ne }, (_, k) => k).sort((a, b) => (edges[6 * a] as number) - (edges[6 * b] as number));
  const mask = new Uint8Array(lat.nx * lat.ny);
  let next = 0;
  let active: number[] = [];
  const up: number[] = [], lo: number[] = []; // pairs (x, dir)
  for (let j = 0; j < lat.ny; j++) {
    const y = lat.y0 + j * lat.step;
    while (next < ne && (edges[6 * (order[next] as number)] as number) <= y) active.push(order[next++] as number);
    active = active.filter((k) => (edges[6 * k + 1] as number) >= y);
    up.length = 0;
    lo.length = 0;
    for (const k of active) {
      const ymin = edges[6 * k] as number, ymax = edges[6 * k + 1] as number;
      const xa = edges[6 * k + 2] as number, ya = edges[6 * k + 3] as number, xb = edges[6 * k + 4] as number, yb = edges[6 * k + 5] as number;
      const x = xa === xb ? xa : xa + ((y - ya) * (xb - xa)) / (yb - ya);
      const dir = yb > ya ? 1 : -1;
      if (ymin <= y && y < ymax) up.push(x, dir);
      if (ymin < y && y <= ymax) lo.push(x, dir);
    }
    const rowUp = windingRow(up, lat);
    const rowLo = windingRow(lo, lat);
    const line = j * lat.nx;
    for (let i = 0; i < lat.nx; i++) if (rowUp[i] && rowLo[i]) mask[line + i] = 1;
  }
  return mask;
}

/** For one half-row: 1 where the winding left of the node is nonzero and crossings through the node cancel. */
function windingRow(cross: number[], lat: Lattice): Uint8Array {
  const out = new Uint8Array(lat.nx);
  const n = cross.length / 2;
  if (n === 0) return out;
  const idx = Array.from({ length: n }, (_, k) => k).sort((a, b) => (cross[2 * a] as number) - (cross[2 * b] as number));
  let w = 0;
  let c = 0;
  for (let i = 0; i < lat.nx; i++) {
    const x = lat.x0 + i * lat.step;
    while (c < n && (cross[2 * (idx[c] as number)] as number) < x) w += cross[2 * (idx[c++] as number) + 1] as number;
    let through = 0;
    for (let q = c; q < n && (cross[2 * (idx[q] as number)] as number) === x; q++) through += cross[2 * (idx[q] as number) + 1] as number;
    if (w !== 0 && through === 0) out[i] = 1;
  }
  return out;
}
