/**
 * Window densities never leave [0, 1] through round-off: summed-area-table differences on a large grid leave
 * ~1e-13 errors, which printed as "-0.0 %" and crossed a 100 % limit. A density is a fraction of an area
 * (definition; common practice, no source needed), so 0 ≤ value ≤ 1 exactly.
 */
import { describe, expect, it } from 'vitest';
import { windowDensity } from '@/lib/geometry';

describe('windowDensity bounds', () => {
  it('a fully open block reads exactly 1 and an empty block exactly 0 beside fractional coverage', () => {
    const nx = 2200, ny = 2200;
    const cov = new Float64Array(nx * ny);
    // Fractional coverage in the lower-left quarter (accumulates round-off in the table), a fully open band on
    // the right (x ≥ 9000 µm), nothing elsewhere.
    for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) cov[j * nx + i] = i < 1100 && j < 1100 ? ((i * 7 + j * 13) % 10) / 10 + 0.03 : i >= 1800 ? 1 : 0;
    const wd = windowDensity(cov, { x0Um: 0, y0Um: 0, pixelUm: 5, nx, ny }, { windowUm: 100, stepUm: 50 });
    let outside = 0;
    for (const v of wd.values) if (v < 0 || v > 1) outside++;
    expect(outside).toBe(0);
    expect(wd.max).toBe(1);
    expect(wd.min).toBe(0);
    // A window fully inside the open band (x from 9000 µm) reads 1 exactly.
    const i = 9000 / 50, j = 1500 / 50;
    expect(wd.values[j * wd.nx + i]).toBe(1);
  });
});
