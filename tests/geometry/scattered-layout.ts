/** Seeded scattered layouts for the two-thread tests (parallel-raster, parallel-features); invented geometry. */
import type { PolygonSet } from '@/lib/layout/types';
import { makeSet, mulberry32, ngon, rect, type Ring } from './make-set';

/** Sizes in dbu as [least, least + span): each drawn uniformly and floored. */
export interface ScatterMix {
  /** Every n-th polygon is a 24-gon hole (0: none); the rest are rectangles. */
  ngonEvery: number;
  ngonRadius?: [number, number];
  /** 24-gons turned by a random phase (slanted edges at every angle). */
  turnNgons?: boolean;
  rectW: [number, number];
  rectH: [number, number];
}

/** `n` polygons at seeded positions in [0, size)² dbu: rectangles and, per `mix`, 24-gons. */
export function scatteredRings(seed: number, n: number, size: number, mix: ScatterMix): Ring[] {
  const rnd = mulberry32(seed);
  const draw = ([least, span]: [number, number]) => least + Math.floor(rnd() * span);
  const rings: Ring[] = [];
  for (let k = 0; k < n; k++) {
    const x = Math.floor(rnd() * size), y = Math.floor(rnd() * size);
    if (mix.ngonEvery > 0 && k % mix.ngonEvery === 0) {
      const r = draw(mix.ngonRadius ?? [0, 0]);
      rings.push(ngon(x, y, r, 24, mix.turnNgons ? rnd() : 0));
    } else {
      const w = draw(mix.rectW);
      rings.push(rect(x, y, x + w, y + draw(mix.rectH)));
    }
  }
  return rings;
}

export const scatteredLayout = (seed: number, n: number, size: number, mix: ScatterMix): PolygonSet => makeSet(scatteredRings(seed, n, size, mix));
