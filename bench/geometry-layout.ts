import { mulberry32 } from '../lib/random';
import { GdsiiWriter } from '../lib/layout/gdsii-writer';

/**
 * Seeded synthetic etch layer for the geometry benchmark (mirrored exactly by bench/gdspy_density.py):
 * 1000 × 1000 sites of 10 µm over 10 mm × 10 mm, one polygon per site, 1 dbu = 1 nm.
 * 55 % square holes 1–4 µm, 30 % short trenches 0.8–2 × 5–9 µm, 12 % long trenches 12–30 µm that cross into
 * neighbouring sites (unions, L/T/cross shapes), 3 % 24-gon round holes, 0.002 % (≈ 20) open fields 100–300 µm.
 * Only integer arithmetic and Math.floor on the PRNG output, so Python reproduces it bit for bit (24-gon vertices
 * use cos/sin, which may differ by one ulp across languages; rounding to nm hides that in practice).
 */
export function benchLayout(sites = 1000, seed = 4242) {
  const rnd = mulberry32(seed);
  const coords: number[] = [];
  const offsets: number[] = [0];
  const F = Math.floor;
  const pushRect = (x0: number, y0: number, x1: number, y1: number) => {
    coords.push(x0, y0, x1, y0, x1, y1, x0, y1);
    offsets.push(coords.length / 2);
  };
  for (let sj = 0; sj < sites; sj++) {
    for (let si = 0; si < sites; si++) {
      const bx = si * 10000, by = sj * 10000;
      const u = rnd();
      if (u < 0.55) {
        const s = 1000 + F(rnd() * 3000);
        const x0 = bx + 500 + F(rnd() * (9000 - s)), y0 = by + 500 + F(rnd() * (9000 - s));
        pushRect(x0, y0, x0 + s, y0 + s);
      } else if (u < 0.85 || u < 0.97) {
        const long = u >= 0.85;
        const w = 800 + F(rnd() * 1200);
        const len = long ? 12000 + F(rnd() * 18000) : 5000 + F(rnd() * 4000);
        const horizontal = rnd() < 0.5;
        const a = 500 + F(rnd() * (9000 - w));
        const b = 500 + F(rnd() * Math.max(1, 9000 - len));
        if (horizontal) pushRect(bx + b, by + a, Math.min(bx + b + len, sites * 10000), by + a + w);
        else pushRect(bx + a, by + b, bx + a + w, Math.min(by + b + len, sites * 10000));
      } else if (u < 0.99998) {
        const r = 1000 + F(rnd() * 1500);
        const cx = bx + 5000, cy = by + 5000;
        for (let k = 0; k < 24; k++) coords.push(cx + F(r * Math.cos((2 * Math.PI * k) / 24) + 0.5), cy + F(r * Math.sin((2 * Math.PI * k) / 24) + 0.5));
        offsets.push(coords.length / 2);
      } else {
        const s = 100000 + F(rnd() * 200000);
        pushRect(bx, by, Math.min(bx + s, sites * 10000), Math.min(by + s, sites * 10000));
      }
    }
  }
  return { coords: Float64Array.from(coords), offsets: Uint32Array.from(offsets), count: offsets.length - 1, layer: 1, datatype: 0 };
}

/** The invented process model the end-to-end benches analyse with (continuous, neutral-limited). */
export const BENCH_MODEL = {
  name: 'bench model (invented)',
  version: 'bench-1',
  openRateUmPerMin: 3,
  reactionProbability: 0.2,
  loading: { coefficient: 0.3, lengthUm: 800 },
  etch: { timeMin: 10, targetDepthUm: 25, toleranceUm: 1.5, maxAspectRatio: 30 },
  mode: 'continuous',
};

/** benchLayout() written flat as GDSII, with a 10 mm die outline on layer 0/0. */
export function benchLayoutGds(libraryName: string): { bytes: Uint8Array; polygons: number } {
  const set = benchLayout();
  const w = new GdsiiWriter({ libraryName, dbuUm: 0.001 });
  w.beginCell('TOP');
  w.rect(0, 0, 0, 0, 10_000_000, 10_000_000);
  for (let p = 0; p < set.count; p++) {
    const a = set.offsets[p] as number;
    const b = set.offsets[p + 1] as number;
    w.boundary(set.layer, set.datatype, set.coords.subarray(2 * a, 2 * b));
  }
  w.endCell();
  return { bytes: w.finish(), polygons: set.count + 1 };
}
