import type { PolygonSet } from './types';

export type BboxDbu = [number, number, number, number];

/** Bounding box [x0, y0, x1, y1] of every point of the given sets, in dbu; null when there are no points. */
export function polygonSetsBbox(sets: readonly PolygonSet[]): BboxDbu | null {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (const s of sets) {
    const c = s.coords;
    for (let k = 0; k < c.length; k += 2) {
      const x = c[k] as number;
      const y = c[k + 1] as number;
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
  }
  return x0 <= x1 ? [x0, y0, x1, y1] : null;
}
