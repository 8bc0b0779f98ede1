/**
 * Window density as density rules define it: square windows of side W stepped by S. A summed-area table (float64)
 * makes every window O(1), so many window sizes over one coverage raster are cheap.
 */
import type { Grid, WindowCell, WindowDensity } from './types';

export interface WindowDensityOptions {
  windowUm: number;
  stepUm: number;
  /** Lower-left corner of window (0,0), µm. Default: the grid's lower-left corner (the layout or region bbox). */
  originUm?: [number, number];
  /** 'full' (default): only windows lying wholly inside the reference region. 'clipped': windows past the far edge
   * are kept and clipped; their denominator is the window ∩ region area. */
  edge?: 'full' | 'clipped';
  /** Reference rectangle [x0, y0, x1, y1] µm (window count and clipping); default: the grid extent. The grid
   * may extend past it (pixels rounded up). */
  regionUm?: [number, number, number, number];
  /** Reference region as a coverage raster on the same grid (e.g. a boundary layer); default: the whole grid. */
  regionCoverage?: Float32Array | Float64Array;
  /** Words naming the reference region for the method block (default "the layout bounding box"). */
  regionName?: string;
}

/** Summed-area table with a zero first row/column: sat[(j)(nx+1) + i] = Σ of pixels with index < i, < j. */
export function summedAreaTable(values: ArrayLike<number>, nx: number, ny: number): Float64Array {
  const w = nx + 1;
  const sat = new Float64Array(w * (ny + 1));
  for (let j = 0; j < ny; j++) {
    let row = 0;
    for (let i = 0; i < nx; i++) {
      row += values[j * nx + i] as number;
      sat[(j + 1) * w + i + 1] = (sat[j * w + i + 1] as number) + row;
    }
  }
  return sat;
}

/** Integral of the raster over [0, u] × [0, v] in pixel units (bilinear between SAT nodes; exact at integers). */
function satAt(sat: Float64Array, nx: number, ny: number, u: number, v: number): number {
  u = Math.min(Math.max(u, 0), nx);
  v = Math.min(Math.max(v, 0), ny);
  const i = Math.min(Math.floor(u), nx - 1), j = Math.min(Math.floor(v), ny - 1);
  const fu = u - i, fv = v - j;
  const w = nx + 1;
  const a = sat[j * w + i] as number, b = sat[j * w + i + 1] as number;
  const c = sat[(j + 1) * w + i] as number, d = sat[(j + 1) * w + i + 1] as number;
  if (fu === 0 && fv === 0) return a;
  return a * (1 - fu) * (1 - fv) + b * fu * (1 - fv) + c * (1 - fu) * fv + d * fu * fv;
}

function boxSum(sat: Float64Array, nx: number, ny: number, u0: number, v0: number, u1: number, v1: number): number {
  return satAt(sat, nx, ny, u1, v1) - satAt(sat, nx, ny, u0, v1) - satAt(sat, nx, ny, u1, v0) + satAt(sat, nx, ny, u0, v0);
}

/** Number of window positions along one axis. */
export function windowCount(extentUm: number, windowUm: number, stepUm: number, edge: 'full' | 'clipped'): number {
  const eps = 1e-9 * Math.max(1, windowUm);
  if (edge === 'full') return extentUm + eps < windowUm ? 0 : Math.floor((extentUm - windowUm + eps) / stepUm) + 1;
  // Clipped: keep stepping until a window reaches the far edge.
  if (extentUm <= windowUm + eps) return extentUm > 0 ? 1 : 0;
  return Math.ceil((extentUm - windowUm - eps) / stepUm) + 1;
}

/**
 * Window density of a coverage raster. Window (i, j) has lower-left corner origin + (i·S, j·S) and side W (µm).
 * Value = open area in the window / reference area in the window (W² for full windows). With W, S and the origin
 * offset multiples of the pixel size the sums are exact up to float64 rounding (~1e-12); otherwise the summed-area
 * table is interpolated bilinearly, which assumes coverage is uniform inside each pixel.
 * @example windowDensity(cov, grid, { windowUm: 100, stepUm: 50 }).values[j * nx + i]
 */
export function windowDensity(coverage: Float32Array | Float64Array, grid: Grid, opts: WindowDensityOptions): WindowDensity {
  const { windowUm: W, stepUm: S } = opts;
  if (!(W > 0) || !(S > 0)) throw new Error(`window and step must be positive, got ${W} and ${S}`);
  const edge = opts.edge ?? 'full';
  const p = grid.pixelUm;
  const [rx0, ry0, x1, y1] = opts.regionUm ?? [grid.x0Um, grid.y0Um, grid.x0Um + grid.nx * p, grid.y0Um + grid.ny * p];
  const origin: [number, number] = opts.originUm ?? [rx0, ry0];
  const nxw = windowCount(x1 - origin[0], W, S, edge);
  const nyw = windowCount(y1 - origin[1], W, S, edge);
  const sat = summedAreaTable(coverage, grid.nx, grid.ny);
  const regionSat = opts.regionCoverage ? summedAreaTable(opts.regionCoverage, grid.nx, grid.ny) : null;
  const values = new Float64Array(nxw * nyw);
  const pixelArea = p * p;
  let min = Infinity, max = -Infinity, sum = 0, n = 0;
  let minAt: WindowCell = { i: -1, j: -1, xUm: NaN, yUm: NaN }, maxAt: WindowCell = { ...minAt };
  for (let j = 0; j < nyw; j++) {
    for (let i = 0; i < nxw; i++) {
      const wx0 = origin[0] + i * S, wy0 = origin[1] + j * S;
      const u0 = (wx0 - grid.x0Um) / p, v0 = (wy0 - grid.y0Um) / p;
      const u1 = u0 + W / p, v1 = v0 + W / p;
      const open = boxSum(sat, grid.nx, grid.ny, u0, v0, u1, v1) * pixelArea;
      let ref: number;
      if (regionSat) ref = boxSum(regionSat, grid.nx, grid.ny, u0, v0, u1, v1) * pixelArea;
      else ref = Math.max(0, Math.min(wx0 + W, x1) - Math.max(wx0, rx0)) * Math.max(0, Math.min(wy0 + W, y1) - Math.max(wy0, ry0));
      let v = NaN;
      const full = ref >= W * W * (1 - 1e-9);
      if (ref > 0 && (edge === 'clipped' || full)) v = open / ref;
      // Summed-area differences leave round-off of ~1e-13 around 0 and 1; a density below 0 or above 1 would print
      // as "-0.0 %" or exceed a 100 % limit, so snap values within 1e-9 of the bounds.
      if (v < 0 && v > -1e-9) v = 0;
      else if (v > 1 && v < 1 + 1e-9) v = 1;
      values[j * nxw + i] = v;
      if (Number.isNaN(v)) continue;
      sum += v;
      n++;
      if (v < min) { min = v; minAt = { i, j, xUm: wx0, yUm: wy0 }; }
      if (v > max) { max = v; maxAt = { i, j, xUm: wx0, yUm: wy0 }; }
    }
  }
  const maxGradient = { value: 0, a: { i: -1, j: -1 }, b: { i: -1, j: -1 } };
  for (let j = 0; j < nyw; j++) {
    for (let i = 0; i < nxw; i++) {
      const v = values[j * nxw + i] as number;
      if (i + 1 < nxw) {
        const d = Math.abs(v - (values[j * nxw + i + 1] as number));
        if (d > maxGradient.value) Object.assign(maxGradient, { value: d, a: { i, j }, b: { i: i + 1, j } });
      }
      if (j + 1 < nyw) {
        const d = Math.abs(v - (values[(j + 1) * nxw + i] as number));
        if (d > maxGradient.value) Object.assign(maxGradient, { value: d, a: { i, j }, b: { i, j: j + 1 } });
      }
    }
  }
  const totalOpen = (sat[sat.length - 1] as number) * pixelArea;
  const totalRef = regionSat ? (regionSat[regionSat.length - 1] as number) * pixelArea : (x1 - rx0) * (y1 - ry0);
  const regionName = opts.regionName ?? (regionSat ? 'the reference region layer' : 'the layout bounding box');
  const aligned = [W / p, S / p, (origin[0] - grid.x0Um) / p, (origin[1] - grid.y0Um) / p].every((q) => Math.abs(q - Math.round(q)) < 1e-9);
  return {
    windowUm: W,
    stepUm: S,
    originUm: origin,
    nx: nxw,
    ny: nyw,
    values,
    min: n ? min : NaN,
    max: n ? max : NaN,
    mean: n ? sum / n : NaN,
    globalDensity: totalRef > 0 ? totalOpen / totalRef : NaN,
    minAt,
    maxAt,
    maxGradient,
    edge,
    method: {
      origin: opts.originUm
        ? `window (0,0) has its lower-left corner at (${origin[0]}, ${origin[1]}) µm as requested; windows step +x and +y from there`
        : `window (0,0) has its lower-left corner at the lower-left corner of ${regionName}, (${origin[0]}, ${origin[1]}) µm; windows step +x and +y from there`,
      denominator:
        edge === 'full'
          ? `each value is open area / window area (${W} µm × ${W} µm); open area is the exact area of the layer's union (no double counting of overlaps)${aligned ? '' : '; window edges fall inside pixels here, so pixel coverage is interpolated (not exact)'}`
          : `each value is open area / area of the window inside ${regionName}; open area is the exact area of the layer's union${aligned ? '' : '; window edges fall inside pixels here, so pixel coverage is interpolated (not exact)'}`,
      edgePolicy:
        edge === 'full'
          ? `only full windows: per axis n = floor((extent − ${W})/${S}) + 1 windows; a strip narrower than one step at the far edges is not covered by any window start`
          : `windows continue until they reach the far edge; windows past the edge are clipped to ${regionName} and divided by their clipped area`,
    },
  };
}
