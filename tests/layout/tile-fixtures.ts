/** Generated GDSII layouts and comparison helpers for the on-disk tile source tests (invented geometry). */
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';
import type { BboxDbu } from '@/lib/layout/bbox';
import type { TileSource } from '@/lib/layout/tile-source';
import type { FlatLayout } from '@/lib/layout/types';
import { mulberry32 } from '@/lib/random';

/** Deterministic pseudo-random numbers (mulberry32). */
export const rng = mulberry32;

/**
 * A hierarchical die: a top cell with 600 own rectangles (bucket grid) and a few huge ones, SREFs rotated by 30°,
 * 90°, 180°, reflected, magnified ×2 / ×0.5 / ×1.5, absolute flags, AREFs (axis-aligned, skewed, with fractional
 * steps, rotated), PATHs of every type with odd widths and a diagonal, an absolute-width PATH under
 * magnification, BOX and TEXT elements, and a 1500-element block placed several times (large-cell path).
 */
export function hierarchicalDie(seed = 7): Uint8Array {
  const r = rng(seed);
  const w = new GdsiiWriter({ libraryName: 'KESTREL3' });
  w.beginCell('DIE');
  for (let k = 0; k < 600; k++) {
    const x = Math.floor(r() * 400_000), y = Math.floor(r() * 300_000);
    w.rect(1, 0, x, y, x + 200 + Math.floor(r() * 3000), y + 200 + Math.floor(r() * 3000));
  }
  w.rect(1, 0, -5000, -5000, 410_000, -1000); // spans every tile column
  w.rect(2, 0, 100_000, -20_000, 101_000, 320_000);
  w.path(3, 0, [0, 310_000, 150_000, 310_000, 150_000, 330_000], 1001, { pathtype: 2 });
  w.path(3, 1, [10_000, 10_000, 60_000, 43_333], 777, { pathtype: 0 }); // diagonal
  w.box(4, 0, 5_000, 5_000, 9_000, 8_000);
  w.text(9, 0, 100, 100, 'KESTREL-3');
  // Large polygons: XY over two records (10 000 points) and an element longer than the reader's window (40 000).
  for (const [n, cx, cy, rad] of [[10_000, 330_000, 120_000, 9_000], [40_000, 60_000, 250_000, 30_000]] as const) {
    const ring: number[] = [];
    for (let k = 0; k < n; k++) ring.push(Math.round(cx + rad * Math.cos((2 * Math.PI * k) / n)), Math.round(cy + rad * Math.sin((2 * Math.PI * k) / n)));
    w.boundary(11, 0, ring);
  }
  w.sref('GYRO', 50_000, 50_000);
  w.sref('GYRO', 200_000, 60_000, { angleDeg: 30 });
  w.sref('GYRO', 300_000, 200_000, { angleDeg: 90, reflect: true });
  w.sref('GYRO', 120_000, 220_000, { angleDeg: 180, mag: 0.5 });
  w.sref('GYRO', 250_000, 250_000, { mag: 1.5, angleDeg: 270 });
  w.sref('PADRING', 0, 0);
  w.sref('BLOCK', 20_000, 150_000);
  w.sref('BLOCK', 360_000, 40_000, { angleDeg: 90 });
  w.sref('BLOCK', 230_000, 150_000, { angleDeg: 45, reflect: true });
  w.endCell();

  w.beginCell('GYRO');
  w.rect(1, 0, 0, 0, 20_000, 2_000);
  w.boundary(2, 0, [0, 0, 5000, 0, 5000, 5000, 2500, 2500, 0, 5000]); // non-convex
  w.path(3, 0, [0, 0, 8000, 0, 8000, 6000], 501, { pathtype: 1 });
  w.path(3, 0, [0, 9000, 9000, 9000], 300, { pathtype: 4, bgnExt: 120, endExt: -40 });
  w.path(5, 0, [0, -3000, 7000, -3000], -201); // absolute width
  w.aref('VIA', 6, 4, [1000, 3000], [1000 + 6 * 1500, 3000], [1000, 3000 + 4 * 1100]);
  w.sref('VIA', 15_000, 15_000, { mag: 2, absMag: true });
  w.sref('VIA', 17_000, 15_000, { angleDeg: 60, absAngle: true });
  w.endCell();

  w.beginCell('VIA').rect(6, 0, 0, 0, 400, 400).path(7, 0, [0, 0, 400, 400], 101, { pathtype: 2 }).endCell();

  w.beginCell('PADRING');
  w.aref('PAD', 40, 1, [0, -15_000], [400_000, -15_000], [0, -5_000]);
  w.aref('PAD', 7, 3, [-20_000, 0], [-20_000 + 7 * 3333, 7_000], [-20_000 - 3 * 1000, 3 * 40_001], { angleDeg: 90 }); // skewed, fractional steps
  w.aref('PAD', 5, 5, [420_000, 0], [420_000 + 5 * 8000, 5 * 1000], [420_000, 5 * 8000], { angleDeg: 17, mag: 1.25 });
  w.endCell();
  w.beginCell('PAD').rect(8, 0, 0, 0, 6000, 6000).rect(8, 1, 1000, 1000, 5000, 5000).endCell();

  w.beginCell('BLOCK');
  for (let k = 0; k < 1500; k++) {
    const x = Math.floor(r() * 60_000), y = Math.floor(r() * 60_000);
    if (k % 5 === 0) w.path(10, 0, [x, y, x + 2000, y, x + 2000, y + 1500], 99 + 2 * (k % 7), { pathtype: (k % 3 === 0 ? 1 : 0) as 0 | 1 });
    else w.rect(10, k % 2, x, y, x + 100 + Math.floor(r() * 900), y + 100 + Math.floor(r() * 900));
  }
  w.endCell();
  return w.finish();
}

/** A flat cell of `n` rectangles and paths on two layers, with a few polygons crossing many tiles. */
export function flatDie(n: number, seed = 11): Uint8Array {
  const r = rng(seed);
  const w = new GdsiiWriter({ libraryName: 'VIADUCT' });
  w.beginCell('FLAT');
  for (let k = 0; k < n; k++) {
    const x = Math.floor(r() * 1_000_000), y = Math.floor(r() * 800_000);
    if (k % 10 === 0) w.path(2, 0, [x, y, x + 5000, y + 3000], 301, { pathtype: 0 });
    else w.rect(1, 0, x, y, x + 50 + Math.floor(r() * 4000), y + 50 + Math.floor(r() * 4000));
  }
  w.rect(1, 0, 0, 400_000, 1_000_000, 400_500);
  return w.endCell().finish();
}

/** Canonical text of polygon p of a set: ring rotated to start at its smallest vertex. */
export function canonical(set: FlatLayout['layers'][number], p: number): string {
  const f = set.offsets[p] as number, t = set.offsets[p + 1] as number;
  let best = f;
  for (let k = f + 1; k < t; k++) {
    const x = set.coords[2 * k] as number, y = set.coords[2 * k + 1] as number;
    const bx = set.coords[2 * best] as number, by = set.coords[2 * best + 1] as number;
    if (x < bx || (x === bx && y < by)) best = k;
  }
  const parts: string[] = [];
  for (let q = 0; q < t - f; q++) {
    const k = f + ((best - f + q) % (t - f));
    parts.push(`${set.coords[2 * k]},${set.coords[2 * k + 1]}`);
  }
  return `${set.layer}/${set.datatype}:${parts.join(' ')}`;
}

/** Sorted canonical polygons of a layout; with `own`, only those whose bbox's lower-left corner lies in the half-open box. */
export function polygonsOf(l: FlatLayout, own?: { box: BboxDbu; closedX: boolean; closedY: boolean }): string[] {
  const out: string[] = [];
  for (const s of l.layers) {
    for (let p = 0; p < s.count; p++) {
      if (own) {
        let x0 = Infinity, y0 = Infinity;
        for (let k = s.offsets[p] as number; k < (s.offsets[p + 1] as number); k++) {
          x0 = Math.min(x0, s.coords[2 * k] as number);
          y0 = Math.min(y0, s.coords[2 * k + 1] as number);
        }
        const [bx0, by0, bx1, by1] = own.box;
        if (x0 < bx0 || y0 < by0 || x0 > bx1 || y0 > by1 || (x0 === bx1 && !own.closedX) || (y0 === by1 && !own.closedY)) continue;
      }
      out.push(canonical(s, p));
    }
  }
  return out.sort();
}

/** A grid of nx × ny tiles over `bbox` (shared edges), each with whether it is the last column / row. */
export function tileGrid(bbox: BboxDbu, nx: number, ny: number): { box: BboxDbu; closedX: boolean; closedY: boolean }[] {
  const [x0, y0, x1, y1] = bbox;
  const out: { box: BboxDbu; closedX: boolean; closedY: boolean }[] = [];
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const bx0 = Math.floor(x0 + ((x1 - x0) * i) / nx), bx1 = i === nx - 1 ? x1 : Math.floor(x0 + ((x1 - x0) * (i + 1)) / nx);
      const by0 = Math.floor(y0 + ((y1 - y0) * j) / ny), by1 = j === ny - 1 ? y1 : Math.floor(y0 + ((y1 - y0) * (j + 1)) / ny);
      out.push({ box: [bx0, by0, bx1, by1], closedX: i === nx - 1, closedY: j === ny - 1 });
    }
  }
  return out;
}

export const allLayers = (src: TileSource) => src.header.layers.map((l) => ({ layer: l.layer, datatype: l.datatype }));
