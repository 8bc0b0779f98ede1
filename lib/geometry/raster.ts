/**
 * Exact area coverage raster. Each ring edge adds its signed trapezoid area to the pixels it passes (the
 * accumulation scheme of outline font rasterisers), and a prefix sum along each row turns the accumulated
 * differences into coverage. For straight edges this is exact up to float64 rounding; no per-pixel polygon test.
 * Overlaps would be summed, so the input is the tiled union from `openRegions` (pieces never overlap, outer rings
 * counter-clockwise and holes clockwise, so holes subtract).
 */
import type { PolygonSet } from '../layout/types';
import type { Box, Grid, Polarity } from './types';
import { openRegions, type OpenRegions } from './open-regions';

/** Accumulate one edge (pixel units, y up) into `acc` ((nx + 2) × ny differences). */
function accumulateEdge(acc: Float64Array, win: AccWindow, nx: number, ny: number, xa: number, ya: number, xb: number, yb: number): void {
  // Split at the grid's left and right sides and clamp: winding left of x = 0 still reaches every pixel in the row.
  if ((xa < 0 && xb > 0) || (xa > 0 && xb < 0)) {
    const ym = ya + ((0 - xa) * (yb - ya)) / (xb - xa);
    accumulateEdge(acc, win, nx, ny, xa, ya, 0, ym);
    accumulateEdge(acc, win, nx, ny, 0, ym, xb, yb);
    return;
  }
  if ((xa < nx && xb > nx) || (xa > nx && xb < nx)) {
    const ym = ya + ((nx - xa) * (yb - ya)) / (xb - xa);
    accumulateEdge(acc, win, nx, ny, xa, ya, nx, ym);
    accumulateEdge(acc, win, nx, ny, nx, ym, xb, yb);
    return;
  }
  if (ya === yb) return;
  xa = Math.min(Math.max(xa, 0), nx);
  xb = Math.min(Math.max(xb, 0), nx);
  // Counter-clockwise rings (y up) go down on their left side: that side opens coverage (+1).
  let dir = -1, x0 = xa, y0 = ya, x1 = xb, y1 = yb;
  if (ya > yb) { dir = 1; x0 = xb; y0 = yb; x1 = xa; y1 = ya; }
  if (y1 <= 0 || y0 >= ny) return;
  const dxdy = (x1 - x0) / (y1 - y0);
  // The window only decides which differences are stored; every value is computed exactly as for the whole grid,
  // so windows stitched together equal the whole-grid accumulation bit for bit (tiled analysis relies on it).
  const { i0: wi0, j0: wj0, nx: wnx, ny: wny } = win;
  const wi1 = wi0 + wnx;
  const rowStart = Math.max(0, wj0, Math.floor(y0));
  const rowEnd = Math.min(ny, wj0 + wny, Math.ceil(y1));
  for (let row = rowStart; row < rowEnd; row++) {
    const ys = Math.max(row, y0), ye = Math.min(row + 1, y1);
    const dy = ye - ys;
    if (dy <= 0) continue;
    let xs = x0 + (ys - y0) * dxdy, xe = x0 + (ye - y0) * dxdy;
    xs = Math.min(Math.max(xs, 0), nx);
    xe = Math.min(Math.max(xe, 0), nx);
    const d = dy * dir;
    const line = (row - wj0) * wnx - wi0;
    const lo = Math.min(xs, xe), hi = Math.max(xs, xe);
    const i0 = Math.floor(lo);
    const i1 = Math.ceil(hi);
    if (i1 < wi0 || i0 >= wi1) continue;
    if (i1 <= i0 + 1) {
      // Within one pixel column: the part right of the edge's mean x is covered.
      const xm = 0.5 * (xs + xe) - i0;
      if (i0 >= wi0) acc[line + i0]! += d * (1 - xm);
      if (i0 + 1 < wi1) acc[line + i0 + 1]! += d * xm;
    } else {
      // Spread across columns: exact areas of the triangle/trapezoid pieces (font-rs scheme).
      const s = 1 / (hi - lo);
      const f0 = lo - i0;
      const a0 = 0.5 * s * (1 - f0) * (1 - f0);
      const f1 = hi - i1 + 1;
      const am = 0.5 * s * f1 * f1;
      if (i0 >= wi0) acc[line + i0]! += d * a0;
      if (i1 === i0 + 2) {
        if (i0 + 1 >= wi0 && i0 + 1 < wi1) acc[line + i0 + 1]! += d * (1 - a0 - am);
      } else {
        const a1 = s * (1.5 - f0);
        if (i0 + 1 >= wi0 && i0 + 1 < wi1) acc[line + i0 + 1]! += d * (a1 - a0);
        const mEnd = Math.min(i1 - 1, wi1);
        for (let i = Math.max(i0 + 2, wi0); i < mEnd; i++) acc[line + i]! += d * s;
        const a2 = a1 + (i1 - i0 - 3) * s;
        if (i1 - 1 >= wi0 && i1 - 1 < wi1) acc[line + i1 - 1]! += d * (1 - a2 - am);
      }
      if (i1 < wi1) acc[line + i1]! += d * am;
    }
  }
}

/**
 * A block of the accumulation buffer: columns i0 .. i0+nx-1 and rows j0 .. j0+ny-1 of the whole grid's
 * (grid.nx + 2) × grid.ny differences, stored row-major with stride nx.
 */
export interface AccWindow {
  i0: number;
  j0: number;
  nx: number;
  ny: number;
}

/**
 * Accumulate the pieces' edge differences into the block `win` of the grid's difference buffer (see AccWindow).
 * Pieces first, then the coverage-only rings, each in order: the additions into any one cell happen in the same
 * order as in a whole-grid pass over the same regions, so the sums are identical.
 */
export function accumulateRegions(regions: OpenRegions, grid: Grid, win: AccWindow, acc: Float64Array = new Float64Array(win.nx * win.ny)): Float64Array {
  const { nx, ny } = grid;
  const scale = regions.dbuUm / grid.pixelUm;
  const ox = grid.x0Um / grid.pixelUm, oy = grid.y0Um / grid.pixelUm;
  const c = regions.coords;
  const ringsOf = (xy: Float64Array, offsets: Uint32Array, r0: number, r1: number) => {
    for (let r = r0; r < r1; r++) {
      const s = offsets[r] as number, e = offsets[r + 1] as number;
      for (let k = s; k < e; k++) {
        const n = k + 1 < e ? k + 1 : s;
        accumulateEdge(acc, win, nx, ny, (xy[2 * k] as number) * scale - ox, (xy[2 * k + 1] as number) * scale - oy, (xy[2 * n] as number) * scale - ox, (xy[2 * n + 1] as number) * scale - oy);
      }
    }
  };
  // A window of some rows only (the two-thread raster, tiles): skip pieces whose points all lie outside its rows.
  // An edge only adds to rows between its end points' rows (computed from the same transformed values); the
  // extra row of margin covers an edge split at the grid's side, whose split point may round past an end point.
  const someRows = win.j0 > 0 || win.j0 + win.ny < ny;
  const jLo = win.j0, jHi = win.j0 + win.ny;
  const pieceY = regions.pieceY;
  for (let p = 0; p < regions.pieceCount; p++) {
    if (!regions.pieceCoverage[p]) continue;
    const r0 = regions.pieceRings[p] as number, r1 = regions.pieceRings[p + 1] as number;
    if (someRows) {
      let ylo = Infinity, yhi = -Infinity;
      if (pieceY) {
        // The transform is monotone, so the extremes transform to the extremes of the transformed points.
        ylo = (pieceY[2 * p] as number) * scale - oy;
        yhi = (pieceY[2 * p + 1] as number) * scale - oy;
      } else {
        const e = regions.ringOffsets[r1] as number;
        for (let k = regions.ringOffsets[r0] as number; k < e; k++) {
          const y = (c[2 * k + 1] as number) * scale - oy;
          if (y < ylo) ylo = y;
          if (y > yhi) yhi = y;
        }
      }
      if (Math.ceil(yhi) + 1 <= jLo || Math.floor(ylo) - 1 >= jHi) continue;
    }
    ringsOf(c, regions.ringOffsets, r0, r1);
  }
  ringsOf(regions.coverageCoords, regions.coverageRingOffsets, 0, regions.coverageRingOffsets.length - 1);
  return acc;
}

/** Coverage from the whole grid's difference buffer ((nx + 2) × ny, or nx × ny: the last two columns are never read). */
export function coverageFromDifferences(acc: Float64Array, grid: Grid, stride = grid.nx + 2): Float64Array {
  const { nx, ny } = grid;
  const out = new Float64Array(nx * ny);
  for (let j = 0; j < ny; j++) {
    let run = 0;
    const line = j * stride;
    for (let i = 0; i < nx; i++) {
      run += acc[line + i] as number;
      // Clamp float noise only; a correct union never leaves [0, 1] by more than rounding.
      out[j * nx + i] = run < 0 ? 0 : run > 1 ? 1 : run;
    }
  }
  return out;
}

/**
 * Exact covered fraction per pixel of the open pieces (float64). Pieces outside the grid are ignored.
 */
export function rasterizeOpenRegions(regions: OpenRegions, grid: Grid): Float64Array {
  const win: AccWindow = { i0: 0, j0: 0, nx: grid.nx + 2, ny: grid.ny };
  return coverageFromDifferences(accumulateRegions(regions, grid, win), grid);
}

export interface CoverageOptions {
  polarity?: Polarity;
  /** Reference region in dbu for 'dark' (default: the grid extent, rounded outward to dbu). */
  regionDbu?: Box;
  /** Tile size for the union, dbu (default automatic). */
  tileDbu?: number;
}

/** The grid extent in dbu, rounded outward. */
export function gridExtentDbu(grid: Grid, dbuUm: number): Box {
  return [
    Math.floor(grid.x0Um / dbuUm + 1e-9),
    Math.floor(grid.y0Um / dbuUm + 1e-9),
    Math.ceil((grid.x0Um + grid.nx * grid.pixelUm) / dbuUm - 1e-9),
    Math.ceil((grid.y0Um + grid.ny * grid.pixelUm) / dbuUm - 1e-9),
  ];
}

/**
 * Exact open-area fraction per pixel (float64) of one layer: nonzero union of the drawn polygons ('clear'),
 * or the reference region minus that union ('dark').
 */
export function coverageRaster64(set: PolygonSet, dbuUm: number, grid: Grid, opts: CoverageOptions = {}): Float64Array {
  const polarity = opts.polarity ?? 'clear';
  const regionDbu = opts.regionDbu ?? (polarity === 'dark' ? gridExtentDbu(grid, dbuUm) : undefined);
  const regions = openRegions(set, dbuUm, { polarity, regionDbu, tileDbu: opts.tileDbu });
  return rasterizeOpenRegions(regions, grid);
}

/** `coverageRaster64` stored as float32 (relative rounding 6e-8; use the float64 form for 1e-9 window checks). */
export function coverageRaster(set: PolygonSet, dbuUm: number, grid: Grid, opts: CoverageOptions = {}): Float32Array {
  return Float32Array.from(coverageRaster64(set, dbuUm, grid, opts));
}
