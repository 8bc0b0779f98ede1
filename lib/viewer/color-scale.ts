/**
 * Colour scales for the heat maps: perceptually uniform sequential maps from d3-scale-chromatic, whose viridis
 * and magma are the 256-entry tables published with matplotlib (van der Walt & Smith, 2015) and whose cividis
 * is Nuñez, Anderton & Renslow's colour-vision-deficiency-friendly map (PLOS ONE 2018, d3's fitted form).
 * Values are mapped linearly between user limits [lo, hi] and clamped; NaN stays transparent.
 */
import { interpolateCividis, interpolateMagma, interpolateViridis } from 'd3-scale-chromatic';

export const SCALE_NAMES = ['viridis', 'cividis', 'magma'] as const;
export type ScaleName = (typeof SCALE_NAMES)[number];

const INTERPOLATORS: Record<ScaleName, (t: number) => string> = {
  viridis: interpolateViridis,
  cividis: interpolateCividis,
  magma: interpolateMagma,
};

/** A 256-entry RGB table (r, g, b per entry), built once per scale. */
export type Lut = Uint8Array;
const luts = new Map<ScaleName, Lut>();

/** Parses "#rrggbb" or "rgb(r, g, b)" (the two forms d3's interpolators return). */
export function parseCssColor(css: string): [number, number, number] {
  if (css.startsWith('#') && css.length === 7) return [parseInt(css.slice(1, 3), 16), parseInt(css.slice(3, 5), 16), parseInt(css.slice(5, 7), 16)];
  const m = /^rgb\((\d+),\s*(\d+),\s*(\d+)\)$/.exec(css);
  if (!m) throw new Error(`unexpected colour "${css}"`);
  return [Number(m[1]), Number(m[2]), Number(m[3])];
}

export function lutOf(name: ScaleName): Lut {
  let lut = luts.get(name);
  if (!lut) {
    lut = new Uint8Array(256 * 3);
    // Entry k samples the interpolator at the centre of its 1/256 bin, which for viridis/magma is table entry k.
    for (let k = 0; k < 256; k++) lut.set(parseCssColor(INTERPOLATORS[name]((k + 0.5) / 256)), 3 * k);
    luts.set(name, lut);
  }
  return lut;
}

/** Position 0..1 of `value` between lo and hi (clamped); NaN for NaN/±∞ values. */
export function normalise(value: number, lo: number, hi: number): number {
  if (!Number.isFinite(value)) return Number.NaN;
  if (!(hi > lo)) return value >= hi ? 1 : 0;
  const t = (value - lo) / (hi - lo);
  return t <= 0 ? 0 : t >= 1 ? 1 : t;
}

/** Table index 0..255 of a normalised position. */
export const lutIndex = (t: number): number => Math.min(255, Math.floor(t * 256));

/** RGB of one value. */
export function colorOf(name: ScaleName, value: number, lo: number, hi: number): [number, number, number] | null {
  const t = normalise(value, lo, hi);
  if (Number.isNaN(t)) return null;
  const lut = lutOf(name);
  const k = 3 * lutIndex(t);
  return [lut[k] as number, lut[k + 1] as number, lut[k + 2] as number];
}

/**
 * Paints a row-major raster (row 0 = bottom, as TRGRID1) into RGBA in the same row order; the viewer places the
 * texture at (x0, y0) in its y-up world, so no flip is needed. NaN pixels are transparent black.
 */
export function paintRaster(values: ArrayLike<number>, nx: number, ny: number, name: ScaleName, lo: number, hi: number, out = new Uint8ClampedArray(nx * ny * 4)): Uint8ClampedArray {
  const lut = lutOf(name);
  const span = hi > lo ? hi - lo : 0;
  for (let j = 0; j < ny; j++) {
    const src = j * nx;
    const dst = src * 4;
    for (let i = 0; i < nx; i++) {
      const v = values[src + i] as number;
      const o = dst + 4 * i;
      if (!Number.isFinite(v)) {
        out[o] = out[o + 1] = out[o + 2] = out[o + 3] = 0;
        continue;
      }
      const t = span > 0 ? (v - lo) / span : v >= hi ? 1 : 0;
      const k = 3 * (t <= 0 ? 0 : t >= 1 ? 255 : Math.min(255, Math.floor(t * 256)));
      out[o] = lut[k] as number;
      out[o + 1] = lut[k + 1] as number;
      out[o + 2] = lut[k + 2] as number;
      out[o + 3] = 255;
    }
  }
  return out;
}

/** Finite min and max of a raster (null when it has no finite value). */
export function finiteRange(values: ArrayLike<number>): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < values.length; k++) {
    const v = values[k] as number;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return lo <= hi ? [lo, hi] : null;
}

/** CSS linear-gradient stops for the legend bar (left = lo). */
export function gradientCss(name: ScaleName, stops = 16): string {
  const lut = lutOf(name);
  const parts: string[] = [];
  for (let s = 0; s < stops; s++) {
    const k = 3 * Math.round((s / (stops - 1)) * 255);
    parts.push(`rgb(${lut[k]},${lut[k + 1]},${lut[k + 2]}) ${((s / (stops - 1)) * 100).toFixed(1)}%`);
  }
  return `linear-gradient(to right, ${parts.join(', ')})`;
}

/** Coverage (open fraction 0..1) as a grey raster, premultiplied RGBA, for when polygons are too many to draw. */
export function paintCoverage(values: ArrayLike<number>, nx: number, ny: number, out = new Uint8ClampedArray(nx * ny * 4)): Uint8ClampedArray {
  for (let p = 0; p < nx * ny; p++) {
    const v = values[p] as number;
    const a = Number.isFinite(v) ? Math.min(1, Math.max(0, v)) * 0.85 : 0;
    out[4 * p] = 40 * a;
    out[4 * p + 1] = 44 * a;
    out[4 * p + 2] = 60 * a;
    out[4 * p + 3] = 255 * a;
  }
  return out;
}
