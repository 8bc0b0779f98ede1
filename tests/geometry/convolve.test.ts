import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { convolve2d, densityKernel, effectiveDensity, erf, type Grid } from '@/lib/geometry';

const scipyRef = JSON.parse(readFileSync(new URL('../fixtures/geometry/scipy-ref.json', import.meta.url), 'utf8')) as {
  conv: { nx: number; ny: number; input: number[]; r: number; kernel: number[]; same: number[]; reflect: number[] };
};

const maxAbsDiff = (a: ArrayLike<number>, b: ArrayLike<number>) => {
  let m = 0;
  for (let q = 0; q < a.length; q++) m = Math.max(m, Math.abs((a[q] as number) - (b[q] as number)));
  return m;
};

describe('convolve2d(input, nx, ny, kernel, r, padding)', () => {
  const c = scipyRef.conv;
  it('matches scipy.signal.fftconvolve(mode="same") with zero padding', () => {
    const out = convolve2d(c.input, c.nx, c.ny, c.kernel, c.r, 'zero');
    expect(maxAbsDiff(out, c.same)).toBeLessThan(1e-12); // Source: scipy 1.10.1 signal.fftconvolve (scipy-ref.json)
  });
  it('matches scipy.ndimage.convolve(mode="reflect") with mirror padding', () => {
    const out = convolve2d(c.input, c.nx, c.ny, c.kernel, c.r, 'mirror');
    expect(maxAbsDiff(out, c.reflect)).toBeLessThan(1e-12); // Source: scipy 1.10.1 ndimage.convolve mode='reflect'
  });
  it('matches a direct O(n²) sum on a seeded 9×7 grid', () => {
    const nx = 9, ny = 7, r = 2;
    let s = 7;
    const rnd = () => ((s = (s * 16807) % 2147483647) / 2147483647);
    const input = Array.from({ length: nx * ny }, rnd), kernel = Array.from({ length: 25 }, rnd);
    const out = convolve2d(input, nx, ny, kernel, r);
    for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) {
      let d = 0;
      for (let dj = -r; dj <= r; dj++) for (let di = -r; di <= r; di++) {
        const si = i - di, sj = j - dj;
        if (si >= 0 && si < nx && sj >= 0 && sj < ny) d += (input[sj * nx + si] as number) * (kernel[(dj + r) * 5 + di + r] as number);
      }
      expect(Math.abs((out[j * nx + i] as number) - d)).toBeLessThan(1e-12); // definition of discrete convolution
    }
  });
});

describe('erf(x)', () => {
  it('matches tabulated values', () => {
    // Source: Abramowitz & Stegun, Handbook of Mathematical Functions, Table 7.1 (erf 0.5 = 0.5204998778, erf 1 = 0.8427007929, erf 2 = 0.9953222650)
    expect(Math.abs(erf(0.5) - 0.5204998778)).toBeLessThan(2e-7);
    expect(Math.abs(erf(1) - 0.8427007929)).toBeLessThan(2e-7);
    expect(Math.abs(erf(2) - 0.995322265)).toBeLessThan(2e-7);
  });
});

describe('effectiveDensity(coverage, grid, opts)', () => {
  const n = 512, p = 1;
  const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: p, nx: n, ny: n };
  const L = 12; // µm, 12 pixels (no coarsening below 8 px ratio would apply: 12/8 → factor 1)
  const at = (v: Float32Array, xUm: number, yUm: number) => v[Math.floor(yUm / p) * n + Math.floor(xUm / p)] as number;

  it('a kernel sums to 1 after truncation', () => {
    for (const shape of ['gaussian', 'exponential'] as const) {
      const { kernel } = densityKernel(shape, 5);
      expect(Math.abs(kernel.reduce((a, b) => a + b, 0) - 1)).toBeLessThan(1e-12);
    }
  });

  it('a half-plane open for x < x0 gives ½·erfc(x/(√2 L)) across the edge (Gaussian, per-axis σ = L)', () => {
    const cov = new Float64Array(n * n);
    const edge = 256;
    for (let j = 0; j < n; j++) for (let i = 0; i < edge; i++) cov[j * n + i] = 1;
    const rho = effectiveDensity(cov, grid, { lengthUm: L, outside: 'mirror' });
    // Sample at pixel centres: x − edge = 0.5 + k pixels; compare with the exact formula there.
    for (const [dx, expected] of [[0, 0.5], [L, 0.158655], [2 * L, 0.0227501]] as const) {
      // Source: domain.md §3.6 Gaussian check values (exact: ½·erfc(x/(√2L)) = 0.5, 0.158655, 0.0227501)
      const x = edge + dx; // pixel boundary; average the two pixels astride it
      const v = (at(rho, x - 0.5, 256) + at(rho, x + 0.5, 256)) / 2;
      expect(Math.abs(v - expected)).toBeLessThan(2e-3);
    }
  });

  it('an open stripe of width a gives erf(a/(2√2 L)) at its centre', () => {
    for (const [a, expected] of [[L, 0.382925], [2 * L, 0.682689]] as const) {
      const cov = new Float64Array(n * n);
      for (let j = 0; j < n; j++) for (let i = 256 - a / 2; i < 256 + a / 2; i++) cov[j * n + i] = 1;
      const rho = effectiveDensity(cov, grid, { lengthUm: L, outside: 'mirror' });
      const v = (at(rho, 255.5, 256) + at(rho, 256.5, 256)) / 2;
      expect(Math.abs(v - expected)).toBeLessThan(2e-3); // Source: domain.md §3.6 stripe values (exact erf)
    }
  });

  it('an open disk of radius a gives 1 − exp(−a²/2L²) at its centre', () => {
    const cov = new Float64Array(n * n);
    // Sub-sampled coverage of a disk of radius L centred on a pixel corner (256, 256).
    for (let j = 200; j < 312; j++) for (let i = 200; i < 312; i++) {
      let s = 0;
      for (let b = 0; b < 8; b++) for (let c = 0; c < 8; c++) if (Math.hypot(i + (c + 0.5) / 8 - 256, j + (b + 0.5) / 8 - 256) <= L) s++;
      cov[j * n + i] = s / 64;
    }
    const rho = effectiveDensity(cov, grid, { lengthUm: L });
    const v = (at(rho, 255.5, 255.5) + at(rho, 256.5, 255.5) + at(rho, 255.5, 256.5) + at(rho, 256.5, 256.5)) / 4;
    expect(Math.abs(v - 0.393469)).toBeLessThan(3e-3); // Source: domain.md §3.6 disk value 1 − exp(−½) = 0.393469
  });

  it('a filled die reads 1 deep inside with either outside policy, and ½ at an edge when outside is empty', () => {
    const cov = new Float64Array(n * n).fill(1);
    const empty = effectiveDensity(cov, grid, { lengthUm: L, outside: 'empty' });
    const mirror = effectiveDensity(cov, grid, { lengthUm: L, outside: 'mirror' });
    expect(at(empty, 256, 256)).toBeCloseTo(1, 6); // normalised kernel (analytical)
    expect(at(mirror, 0.5, 256)).toBeCloseTo(1, 6); // mirror: the outside repeats a full die
    // Source: domain.md §3.6 half-plane ½·erfc(x/(√2L)) with x = −0.5 px (first pixel centre inside the die)
    expect(Math.abs(at(empty, 0.5, 256) - 0.5 * (1 + erf(0.5 / (Math.SQRT2 * L))))).toBeLessThan(2e-3);
  });

  it('coarsens the grid for long kernels and still matches the half-plane value at x = L', () => {
    const big = 1024, pix = 10; // 10.24 mm at 10 µm
    const g: Grid = { x0Um: 0, y0Um: 0, pixelUm: pix, nx: big, ny: big };
    const cov = new Float64Array(big * big);
    for (let j = 0; j < big; j++) for (let i = 0; i < 512; i++) cov[j * big + i] = 1;
    const Lmm = 1000; // 1 mm → 100 px → coarsened by 12
    const rho = effectiveDensity(cov, g, { lengthUm: Lmm, outside: 'mirror' });
    const x = 5120 + Lmm;
    const v = (rho[512 * big + x / pix - 1]! + rho[512 * big + x / pix]!) / 2;
    expect(Math.abs(v - 0.158655)).toBeLessThan(3e-3); // Source: domain.md §3.6 half-plane at x = L
  });

  it('the exponential kernel exp(−r/L)/(2πL²) gives ½ at a half-plane edge and its own tail value', () => {
    const cov = new Float64Array(n * n);
    for (let j = 0; j < n; j++) for (let i = 0; i < 256; i++) cov[j * n + i] = 1;
    const Le = 8;
    const rho = effectiveDensity(cov, grid, { lengthUm: Le, kernel: 'exponential', outside: 'mirror' });
    const v0 = (at(rho, 255.5, 256) + at(rho, 256.5, 256)) / 2;
    expect(Math.abs(v0 - 0.5)).toBeLessThan(3e-3); // symmetry of any radial kernel (analytical)
    // Tail at distance x = L: ∫_x^∞ of the marginal of exp(−r/L)/(2πL²), which is (1/(πL))·K0-type; evaluated
    // here by direct numerical quadrature of the 2-D kernel over the half-plane x' > L (independent of the FFT).
    let tail = 0;
    const h = 0.05;
    for (let xx = Le + h / 2; xx < 12 * Le; xx += h) for (let yy = -12 * Le + h / 2; yy < 12 * Le; yy += h) tail += Math.exp(-Math.hypot(xx, yy) / Le) * h * h;
    tail /= 2 * Math.PI * Le * Le;
    const vL = (at(rho, 256 + Le - 0.5, 256) + at(rho, 256 + Le + 0.5, 256)) / 2;
    expect(Math.abs(vL - tail)).toBeLessThan(3e-3); // numerical quadrature of the stated kernel (this test)
  });
});
