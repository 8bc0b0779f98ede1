/** Grid construction helpers (µm). See `Grid` for the pixel convention. */
import type { Box, Grid } from './types';

/**
 * Grid with lower-left corner at the box's lower-left and `pixelUm` pixels covering the whole box (the last
 * column/row may extend past it when the extent is not a multiple of the pixel).
 * @param boxDbu [x0, y0, x1, y1] in dbu
 */
export function gridForBox(boxDbu: Box, dbuUm: number, pixelUm: number): Grid {
  const x0 = boxDbu[0] * dbuUm, y0 = boxDbu[1] * dbuUm;
  const w = (boxDbu[2] - boxDbu[0]) * dbuUm, h = (boxDbu[3] - boxDbu[1]) * dbuUm;
  return { x0Um: x0, y0Um: y0, pixelUm, nx: Math.max(1, Math.ceil(w / pixelUm - 1e-9)), ny: Math.max(1, Math.ceil(h / pixelUm - 1e-9)) };
}

/** Greatest common divisor of two positive lengths on a 1e-6 µm quantum (for W/S-aligned pixels). */
export function lengthGcd(a: number, b: number): number {
  let x = Math.round(a * 1e6), y = Math.round(b * 1e6);
  while (y) [x, y] = [y, x % y];
  return x / 1e6;
}

/**
 * Pixel size for window density: the largest divisor of gcd(W, S) (and of the extent offsets when given) that is
 * ≤ maxPixelUm and keeps the grid under maxPixels. Windows then align with pixels, so sums are exact.
 */
export function alignedPixelUm(windowUm: number, stepUm: number, extentUm: [number, number], opts: { maxPixelUm?: number; maxPixels?: number } = {}): { pixelUm: number; aligned: boolean } {
  const g = lengthGcd(windowUm, stepUm);
  const maxPixels = opts.maxPixels ?? 16e6;
  const maxPixel = opts.maxPixelUm ?? g;
  for (let k = 1; k <= 10000; k++) {
    const p = g / k;
    if (p > maxPixel + 1e-12) continue;
    if ((extentUm[0] / p) * (extentUm[1] / p) <= maxPixels) return { pixelUm: p, aligned: true };
    break;
  }
  // Too many pixels at the aligned size: fall back to a coarser pixel (sums then interpolate inside pixels).
  const p = Math.sqrt((extentUm[0] * extentUm[1]) / maxPixels);
  return { pixelUm: Math.max(p, g), aligned: Math.abs(g / Math.max(p, g) - Math.round(g / Math.max(p, g))) < 1e-9 };
}
