/**
 * 2-D convolution by FFT (fft.js, radix-4, power-of-two sizes) with zero or mirror padding, and the effective
 * (kernel-smoothed) pattern density used for microloading.
 */
import FFT from 'fft.js';
import type { Grid } from './types';

const nextPow2 = (n: number) => 2 ** Math.ceil(Math.log2(Math.max(2, n)));

/** In-place 2-D complex FFT of interleaved data (nxP × nyP, row-major). */
function fft2d(data: Float64Array, nxP: number, nyP: number, inverse: boolean): void {
  const fx = new FFT(nxP), fy = new FFT(nyP);
  const rowIn = new Float64Array(2 * nxP), rowOut = new Float64Array(2 * nxP);
  for (let j = 0; j < nyP; j++) {
    rowIn.set(data.subarray(2 * j * nxP, 2 * (j + 1) * nxP));
    if (inverse) fx.inverseTransform(rowOut, rowIn);
    else fx.transform(rowOut, rowIn);
    data.set(rowOut, 2 * j * nxP);
  }
  const colIn = new Float64Array(2 * nyP), colOut = new Float64Array(2 * nyP);
  for (let i = 0; i < nxP; i++) {
    for (let j = 0; j < nyP; j++) {
      colIn[2 * j] = data[2 * (j * nxP + i)] as number;
      colIn[2 * j + 1] = data[2 * (j * nxP + i) + 1] as number;
    }
    if (inverse) fy.inverseTransform(colOut, colIn);
    else fy.transform(colOut, colIn);
    for (let j = 0; j < nyP; j++) {
      data[2 * (j * nxP + i)] = colOut[2 * j] as number;
      data[2 * (j * nxP + i) + 1] = colOut[2 * j + 1] as number;
    }
  }
}

/** Symmetric reflection of an index into [0, n): … c b a | a b c … (edge sample repeated; scipy 'reflect'). */
export function reflectIndex(i: number, n: number): number {
  const period = 2 * n;
  const m = ((i % period) + period) % period;
  return m < n ? m : period - 1 - m;
}

/**
 * Convolution out = input ∗ kernel, same size as input (like scipy.signal.fftconvolve(input, kernel, 'same') for
 * an odd (2r+1)² kernel). `padding` 'zero' treats everything outside the input as 0; 'mirror' reflects it.
 * @param kernel row-major (2r+1) × (2r+1), centre at (r, r)
 */
export function convolve2d(input: ArrayLike<number>, nx: number, ny: number, kernel: ArrayLike<number>, r: number, padding: 'zero' | 'mirror' = 'zero'): Float64Array {
  const pad = padding === 'mirror' ? r : 0;
  const ex = nx + 2 * pad, ey = ny + 2 * pad;
  // Zero padding of at least r beyond the extended input keeps the circular wrap out of the kept region.
  const nxP = nextPow2(ex + r), nyP = nextPow2(ey + r);
  const a = new Float64Array(2 * nxP * nyP);
  for (let j = 0; j < ey; j++) {
    const sj = padding === 'mirror' ? reflectIndex(j - pad, ny) : j;
    for (let i = 0; i < ex; i++) {
      const si = padding === 'mirror' ? reflectIndex(i - pad, nx) : i;
      a[2 * (j * nxP + i)] = input[sj * nx + si] as number;
    }
  }
  const k = new Float64Array(2 * nxP * nyP);
  const kw = 2 * r + 1;
  for (let dj = -r; dj <= r; dj++) {
    for (let di = -r; di <= r; di++) {
      const ii = (di + nxP) % nxP, jj = (dj + nyP) % nyP;
      k[2 * (jj * nxP + ii)] = kernel[(dj + r) * kw + (di + r)] as number;
    }
  }
  fft2d(a, nxP, nyP, false);
  fft2d(k, nxP, nyP, false);
  for (let q = 0; q < nxP * nyP; q++) {
    const ar = a[2 * q] as number, ai = a[2 * q + 1] as number, br = k[2 * q] as number, bi = k[2 * q + 1] as number;
    a[2 * q] = ar * br - ai * bi;
    a[2 * q + 1] = ar * bi + ai * br;
  }
  fft2d(a, nxP, nyP, true);
  const out = new Float64Array(nx * ny);
  for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) out[j * nx + i] = a[2 * ((j + pad) * nxP + i + pad)] as number;
  return out;
}

/** erf(x): Maclaurin series for |x| < 0.5, Abramowitz & Stegun 7.1.26 beyond (|error| < 1.5e-7). */
export function erf(x: number): number {
  const s = x < 0 ? -1 : 1;
  const ax = Math.abs(x);
  if (ax < 0.5) {
    // Maclaurin series converges fast here (error < 1e-12 with 12 terms).
    let term = ax, sum = ax;
    for (let n = 1; n < 14; n++) {
      term *= (-ax * ax) / n;
      sum += term / (2 * n + 1);
    }
    return (s * 2 * sum) / Math.sqrt(Math.PI);
  }
  const t = 1 / (1 + 0.3275911 * ax);
  const y = 1 - ((((1.061405429 * t - 1.453152027) * t + 1.421413741) * t - 0.284496736) * t + 0.254829592) * t * Math.exp(-ax * ax);
  return s * y;
}

export type KernelShape = 'gaussian' | 'exponential';

/** Truncation radius in units of L: Gaussian 4σ per axis (drops 1.3e-4 of the mass), exponential 10 L (5e-4). */
export const KERNEL_RADIUS_IN_L: Record<KernelShape, number> = { gaussian: 4, exponential: 10 };
/** Smallest L in pixels before the grid is coarsened (keeps the discrete kernel close to the continuous one). */
// Exponential: 8, not 4 — at 4 coarse pixels per L the block average and bilinear return of its cusp-shaped kernel
// were off by up to 3e-3 in density against scipy (tests/geometry/outside-density.test.ts); at 8 by about 7e-4.
export const MIN_L_PIXELS: Record<KernelShape, number> = { gaussian: 8, exponential: 8 };

/**
 * Normalised discrete kernel for length L given in pixels: pixel (di, dj) holds the kernel's integral over that
 * pixel, truncated at KERNEL_RADIUS_IN_L·L (square support) and rescaled to sum to 1.
 * Gaussian: exp(−r²/2L²)/(2πL²) (per-axis σ = L), integrated exactly per pixel with erf.
 * Exponential: exp(−r/L)/(2πL²), integrated with 4×4 sub-samples per pixel.
 */
export function densityKernel(shape: KernelShape, lPx: number): { kernel: Float64Array; r: number } {
  const r = Math.max(1, Math.ceil(KERNEL_RADIUS_IN_L[shape] * lPx));
  const w = 2 * r + 1;
  const kernel = new Float64Array(w * w);
  if (shape === 'gaussian') {
    const g = new Float64Array(w);
    const c = 1 / (Math.SQRT2 * lPx);
    for (let d = -r; d <= r; d++) g[d + r] = 0.5 * (erf((d + 0.5) * c) - erf((d - 0.5) * c));
    for (let j = 0; j < w; j++) for (let i = 0; i < w; i++) kernel[j * w + i] = (g[j] as number) * (g[i] as number);
  } else {
    const sub = 4;
    for (let j = 0; j < w; j++) {
      for (let i = 0; i < w; i++) {
        let s = 0;
        for (let b = 0; b < sub; b++) {
          for (let a = 0; a < sub; a++) {
            const x = i - r - 0.5 + (a + 0.5) / sub, y = j - r - 0.5 + (b + 0.5) / sub;
            s += Math.exp(-Math.hypot(x, y) / lPx);
          }
        }
        kernel[j * w + i] = s;
      }
    }
  }
  let total = 0;
  for (const v of kernel) total += v;
  for (let q = 0; q < kernel.length; q++) kernel[q] = (kernel[q] as number) / total;
  return { kernel, r };
}

export interface EffectiveDensityOptions {
  /** Characteristic length L, µm: Gaussian per-axis σ, or the exponential's decay length (exp(−r/L)). */
  lengthUm: number;
  kernel?: KernelShape;
  /** Outside the die: 'empty' counts it as closed (zeros), 'mirror' reflects the die's own pattern. */
  outside?: 'empty' | 'mirror';
  /** Largest padded FFT side before the grid is coarsened further (default 2048). */
  maxFftSide?: number;
}

/**
 * Block-average by an integer factor f onto a coarse grid with `m` extra coarse pixels on every side. Block (ci, cj)
 * (ci in [−m, cx + m)) averages fine pixels ci·f … ci·f + f − 1; fine pixels outside the die are zeros ('empty') or
 * the die reflected at its own edge ('mirror', reflectIndex), so the partial last block and the margin hold what
 * lies there. (Reflecting the coarse grid instead would put the mirror at the coarse grid's edge, up to f − 1 fine
 * pixels past the die's, and averaging only the existing pixels of a partial block would stretch them over the block.)
 * Separable: block sums along x for every fine row, then along y.
 */
function coarsen(values: ArrayLike<number>, nx: number, ny: number, f: number, m: number, outside: 'empty' | 'mirror') {
  const cx = Math.ceil(nx / f), cy = Math.ceil(ny / f);
  const ex = cx + 2 * m, ey = cy + 2 * m;
  const fine = (i: number, n: number) => (outside === 'mirror' ? reflectIndex(i, n) : i >= 0 && i < n ? i : -1);
  const rowSums = new Float64Array(ny * ex);
  const colOf = new Int32Array(ex * f);
  for (let c = 0; c < ex * f; c++) colOf[c] = fine((c - m * f), nx);
  for (let j = 0; j < ny; j++) {
    for (let c = 0; c < ex; c++) {
      let s = 0;
      for (let a = 0; a < f; a++) {
        const i = colOf[c * f + a] as number;
        if (i >= 0) s += values[j * nx + i] as number;
      }
      rowSums[j * ex + c] = s;
    }
  }
  const out = new Float64Array(ex * ey);
  for (let r = 0; r < ey; r++) {
    for (let b = 0; b < f; b++) {
      const j = fine((r - m) * f + b, ny);
      if (j < 0) continue;
      for (let c = 0; c < ex; c++) out[r * ex + c]! += rowSums[j * ex + c] as number;
    }
  }
  const inv = 1 / (f * f);
  for (let q = 0; q < out.length; q++) out[q] = (out[q] as number) * inv;
  return { values: out, ex, ey };
}

/**
 * Effective pattern density: coverage convolved with a normalised kernel of length L, on the same grid.
 * When L spans more than MIN_L_PIXELS pixels, the coverage is first block-averaged by the largest integer factor
 * keeping L ≥ MIN_L_PIXELS coarse pixels, convolved there, and interpolated back bilinearly (error of order
 * (pixel/L)²/8 of the density's local variation; measured ≤ 1.5e-3 in density against scipy, outside-density.test.ts).
 * Deep-etch loading lengths of millimetres thus cost
 * little. Result in [0, 1] for coverage in [0, 1] ('empty' far inside a filled die → 1).
 */
export function effectiveDensity(coverage: ArrayLike<number>, grid: Grid, opts: EffectiveDensityOptions): Float32Array {
  const shape = opts.kernel ?? 'gaussian';
  const outside = opts.outside ?? 'empty';
  if (!(opts.lengthUm > 0)) throw new Error(`kernel length must be positive, got ${opts.lengthUm}`);
  const maxSide = opts.maxFftSide ?? 2048;
  const lPx = opts.lengthUm / grid.pixelUm;
  let f = Math.max(1, Math.floor(lPx / MIN_L_PIXELS[shape]));
  // Keep the padded FFT within maxSide per axis.
  const side = (ff: number) => Math.max(Math.ceil(grid.nx / ff), Math.ceil(grid.ny / ff)) + 3 * Math.ceil(KERNEL_RADIUS_IN_L[shape] * (lPx / ff));
  while (side(f) > maxSide) f++;
  if (f === 1) {
    const { kernel, r } = densityKernel(shape, lPx);
    const fine = convolve2d(coverage, grid.nx, grid.ny, kernel, r, outside === 'mirror' ? 'mirror' : 'zero');
    return Float32Array.from(fine);
  }
  const { kernel, r } = densityKernel(shape, lPx / f);
  // A margin of coarse pixels: one for the interpolation at the die's edges (no clamping there: the effective density
  // changes fastest at the edge), plus the kernel radius when the outside is the mirrored die.
  const m = outside === 'mirror' ? r + 1 : 1;
  const { values, ex, ey } = coarsen(coverage, grid.nx, grid.ny, f, m, outside);
  const coarse = convolve2d(values, ex, ey, kernel, r, 'zero');
  const out = new Float32Array(grid.nx * grid.ny);
  // Bilinear from coarse pixel centres (fine coordinate (c − m + 0.5)·f) to fine pixel centres (i + 0.5).
  for (let j = 0; j < grid.ny; j++) {
    const v = (j + 0.5) / f - 0.5 + m;
    const j0 = Math.floor(v), fv = v - j0;
    for (let i = 0; i < grid.nx; i++) {
      const u = (i + 0.5) / f - 0.5 + m;
      const i0 = Math.floor(u), fu = u - i0;
      out[j * grid.nx + i] =
        (coarse[j0 * ex + i0] as number) * (1 - fu) * (1 - fv) + (coarse[j0 * ex + i0 + 1] as number) * fu * (1 - fv) +
        (coarse[(j0 + 1) * ex + i0] as number) * (1 - fu) * fv + (coarse[(j0 + 1) * ex + i0 + 1] as number) * fu * fv;
    }
  }
  return out;
}
