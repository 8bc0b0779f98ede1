/**
 * Local-width map on a raster grid: at each pixel inside an opening, the diameter of the largest disk inside the
 * opening that contains the pixel (µm); 0 outside. Pixels are classified by their exact coverage (≥ 0.5 counts
 * as open), distances are the exact Euclidean distance transform between pixel centres, and disk diameters are
 * painted from maximal disks (distance.ts). Accuracy: ±1 pixel in width (the opening's edge is resolved only to
 * the pixel); use `extractFeatures` for exact per-feature widths.
 */
import type { PolygonSet } from '../layout/types';
import { squaredDistanceTransform, thicknessTransform } from './distance';
import { coverageRaster64, type CoverageOptions } from './raster';
import type { Grid } from './types';

/** Thickness map from a coverage raster already computed on `grid`. */
export function localWidthFromCoverage(coverage: ArrayLike<number>, grid: Grid): Float32Array {
  const n = grid.nx * grid.ny;
  const inside = new Uint8Array(n);
  for (let q = 0; q < n; q++) inside[q] = (coverage[q] as number) >= 0.5 ? 1 : 0;
  const d2 = squaredDistanceTransform(inside, grid.nx, grid.ny);
  // Pixels at the grid border see no background beyond it: treat outside the grid as closed.
  for (let q = 0; q < n; q++) if ((d2[q] as number) === Infinity) d2[q] = 0;
  const border = borderLimited(d2, inside, grid.nx, grid.ny);
  const t = thicknessTransform(border, grid.nx, grid.ny);
  const out = new Float32Array(n);
  // Distances run centre to the nearest closed pixel centre; the edge lies half a pixel before it.
  for (let q = 0; q < n; q++) out[q] = t[q] ? Math.max(((t[q] as number) - 1) * grid.pixelUm, grid.pixelUm) : 0;
  return out;
}

/** Clamp squared distances so disks never leave the grid (outside the grid counts as closed). */
function borderLimited(d2: Float64Array, inside: Uint8Array, nx: number, ny: number): Float64Array {
  const out = new Float64Array(d2.length);
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const q = j * nx + i;
      if (!inside[q]) continue;
      const b = Math.min(i + 1, j + 1, nx - i, ny - j);
      out[q] = Math.min(d2[q] as number, b * b);
    }
  }
  return out;
}

/** Local-width map (µm) of one layer on `grid`. */
export function localWidthMap(set: PolygonSet, dbuUm: number, grid: Grid, opts: CoverageOptions = {}): Float32Array {
  return localWidthFromCoverage(coverageRaster64(set, dbuUm, grid, opts), grid);
}
