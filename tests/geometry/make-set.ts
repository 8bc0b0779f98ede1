export { mulberry32 } from '@/lib/random';
/** Build PolygonSets in tests from plain rings (dbu). */
import type { PolygonSet } from '@/lib/layout/types';

export type Ring = number[]; // x0,y0,x1,y1,... in dbu

export function makeSet(rings: Ring[], layer = 1, datatype = 0): PolygonSet {
  const total = rings.reduce((s, r) => s + r.length, 0);
  const coords = new Float64Array(total);
  const offsets = new Uint32Array(rings.length + 1);
  let k = 0;
  rings.forEach((r, i) => {
    coords.set(r, k);
    k += r.length;
    offsets[i + 1] = k / 2;
  });
  return { layer, datatype, coords, offsets, count: rings.length };
}

export const rect = (x0: number, y0: number, x1: number, y1: number): Ring => [x0, y0, x1, y0, x1, y1, x0, y1];

/** Regular n-gon of circumradius r about (cx, cy), rounded to integer dbu. */
export function ngon(cx: number, cy: number, r: number, n: number, phase = 0): Ring {
  const out: number[] = [];
  for (let k = 0; k < n; k++) {
    const a = phase + (2 * Math.PI * k) / n;
    out.push(Math.round(cx + r * Math.cos(a)), Math.round(cy + r * Math.sin(a)));
  }
  return out;
}

/** Rotate a ring by a multiple of 90° about the origin (exact on integers). */
export function rot90(r: Ring, quarterTurns: number): Ring {
  const out: number[] = [];
  for (let k = 0; k < r.length; k += 2) {
    let x = r[k] as number, y = r[k + 1] as number;
    for (let q = 0; q < ((quarterTurns % 4) + 4) % 4; q++) [x, y] = [-y, x];
    out.push(x, y);
  }
  return out;
}

export const translate = (r: Ring, dx: number, dy: number): Ring => r.map((v, k) => (k % 2 ? v + dy : v + dx));

