/**
 * Placing a cell's own polygons into the flattened frame: the one place where local coordinates become output
 * coordinates, shared by the whole-file flatten (flatten.ts) and the tile reader (gdsii-tile-source.ts) so both
 * give identical vertices.
 *
 * - Every output vertex is Math.round(a·x + b·y + tx), Math.round(c·x + d·y + ty): snapped to the integer dbu grid
 *   after the transform (path outlines are built in floats in the cell's frame, so even the identity snaps them).
 * - Rings stay counter-clockwise: under a reflection each ring is written in reverse order.
 * - Absolute-width PATHs (negative WIDTH) are outlined after transforming the centre line (width not magnified).
 */
import type { AbsolutePath } from './library';
import { pathOutline } from './path-outline';
import type { Placement } from './transform';

/**
 * Write polygons `0..np` of a shape set (`src` interleaved points, `starts[k]` first point of polygon k, `npts`
 * points in all) transformed by `t` into `dst` from point `pt`, their start offsets into `offs` from `poly`.
 */
export function placeShapes(
  src: Float64Array, starts: Uint32Array, np: number, npts: number, t: Placement,
  dst: Float64Array, offs: Uint32Array, poly: number, pt: number,
): void {
  const { a, b, c, d, tx, ty } = t;
  if (a === 1 && b === 0 && c === 0 && d === 1 && tx === 0 && ty === 0) {
    for (let k = 0; k < np; k++) offs[poly + k] = pt + (starts[k] as number);
    let w = 2 * pt;
    for (let k = 0; k < 2 * npts; k++) dst[w++] = Math.round(src[k] as number);
  } else if (!t.reflect) {
    for (let k = 0; k < np; k++) offs[poly + k] = pt + (starts[k] as number);
    let w = 2 * pt;
    for (let k = 0; k < 2 * npts; k += 2) {
      const x = src[k] as number;
      const y = src[k + 1] as number;
      dst[w++] = Math.round(a * x + b * y + tx);
      dst[w++] = Math.round(c * x + d * y + ty);
    }
  } else {
    let w = 2 * pt;
    for (let k = 0; k < np; k++) {
      const from = starts[k] as number;
      const to = k + 1 < np ? (starts[k + 1] as number) : npts;
      offs[poly + k] = w >> 1;
      for (let q = to - 1; q >= from; q--) {
        const x = src[2 * q] as number;
        const y = src[2 * q + 1] as number;
        dst[w++] = Math.round(a * x + b * y + tx);
        dst[w++] = Math.round(c * x + d * y + ty);
      }
    }
  }
}

/** Outline of absolute-width path `p` under `t`, counter-clockwise and snapped, written into `dst` from point `pt`. Returns the point count. */
export function placeAbsolutePath(p: AbsolutePath, t: Placement, scratch: number[], dst: Float64Array, pt: number): number {
  const { a, b, c, d, tx, ty } = t;
  const m = p.centre.length;
  const centre = new Float64Array(m);
  for (let k = 0; k < m; k += 2) {
    const x = p.centre[k] as number;
    const y = p.centre[k + 1] as number;
    centre[k] = a * x + b * y + tx;
    centre[k + 1] = c * x + d * y + ty;
  }
  scratch.length = 0;
  const n = pathOutline(centre, m >> 1, p, scratch);
  let area2 = 0;
  for (let k = 0; k < n; k++) {
    const j = (k + 1) % n;
    area2 += (scratch[2 * k] as number) * (scratch[2 * j + 1] as number) - (scratch[2 * j] as number) * (scratch[2 * k + 1] as number);
  }
  for (let k = 0; k < n; k++) {
    const q = area2 >= 0 ? k : n - 1 - k;
    dst[2 * (pt + k)] = Math.round(scratch[2 * q] as number);
    dst[2 * (pt + k) + 1] = Math.round(scratch[2 * q + 1] as number);
  }
  return n;
}
