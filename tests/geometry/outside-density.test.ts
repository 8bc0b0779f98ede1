/**
 * Window and effective density of an invented non-Manhattan die (tests/fixtures/verify/density_die.gds, written by
 * the fixtures' own GDSII writer) against references made outside Trenchant by tests/fixtures/verify/make_density.py:
 * - window densities: gdspy 1.4.2 (Debian python3-gdspy) boolean 'and' of the layer's union with every window,
 *   divided by the window area (full) or its area inside the die (clipped); polarity dark = die minus union;
 * - effective density: scipy 1.10.1 ndimage.gaussian_filter (sigma = L/pixel, truncate 4, mode 'constant' for an
 *   empty outside, 'reflect' for a mirrored die) of an 8×8-point-sampled coverage raster on 0.5 µm pixels; for the
 *   exponential kernel, scipy.signal.fftconvolve with a kernel built there (8×8 sub-samples per pixel, 10 L square).
 * The window cases run through the command line (`density --json`), as a user would.
 */
import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';
import { readLayoutFile } from '@/lib/layout/read';
import { findLayer } from '@/lib/cli/density';
import { coverageRaster64 } from '@/lib/geometry/raster';
import { effectiveDensity } from '@/lib/geometry/convolve';
import { gridForBox } from '@/lib/geometry/grid';

const run = promisify(execFile);
const dir = fileURLToPath(new URL('../fixtures/verify/', import.meta.url));
const root = fileURLToPath(new URL('../../', import.meta.url));
interface WindowCase { windowUm: number; stepUm: number; edge: 'full' | 'clipped'; originUm: [number, number] | null; polarity: 'clear' | 'dark'; nx: number; ny: number; values: (number | null)[][] }
const ref = JSON.parse(readFileSync(`${dir}density_expected.json`, 'utf8')) as {
  file: string; dieUm: number[]; unionAreaUm2: number; windowCases: WindowCase[];
  effective: { pixelUm: number; coverageAreaUm2: number; samples: Record<string, [number, number, number][]> };
};

describe('window density through the CLI against gdspy boolean per window', () => {
  for (const c of ref.windowCases) {
    const label = `W ${c.windowUm} S ${c.stepUm} ${c.edge} origin ${c.originUm ?? 'die corner'} ${c.polarity}`;
    it(label, async () => {
      const args = ['scripts/cli.mjs', 'density', `${dir}${ref.file}`, '--layer', '1/0', '--window-um', String(c.windowUm), '--step-um', String(c.stepUm), '--edge', c.edge, '--polarity', c.polarity, '--json'];
      // A negative origin is passed as a separate argument on purpose (it used to be refused by the option parser).
      if (c.originUm) args.push('--origin-um', c.originUm.join(','));
      const { stdout } = await run(process.execPath, args, { cwd: root, timeout: 60_000 });
      const got = JSON.parse(stdout) as { nx: number; ny: number; values: (number | null)[][] };
      expect([got.nx, got.ny]).toEqual([c.nx, c.ny]);
      c.values.forEach((row, j) => row.forEach((v, i) => {
        const g = got.values[j]?.[i];
        if (v === null) expect(g, `window (${i}, ${j})`).toBeNull();
        // 1e-5: the union is exact in integer dbu (1 nm) while gdspy keeps intersections of slanted edges to 1e-3 nm;
        // the snapped intersection points move the area by < 0.5 nm × edge length (≈ 2e-6 of a window here).
        else expect(Math.abs((g ?? NaN) - v), `window (${i}, ${j}): ${g} vs ${v}`).toBeLessThan(1e-5);
      }));
    }, 60_000);
  }
});

describe('effective density against scipy.ndimage.gaussian_filter of the rasterised die', async () => {
  const layout = await readLayoutFile(`${dir}${ref.file}`);
  const set = findLayer(layout, { layer: 1, datatype: 0 }, ref.file);
  const p = ref.effective.pixelUm;
  const grid = gridForBox([0, 0, 200_000, 130_000], layout.dbuUm, p);
  const coverage = coverageRaster64(set, layout.dbuUm, grid);
  it('the exact coverage raster holds the union area (gdspy boolean "or")', () => {
    let s = 0;
    for (const v of coverage) s += v;
    expect(Math.abs(s * p * p - ref.unionAreaUm2) / ref.unionAreaUm2).toBeLessThan(1e-5); // integer-dbu snapping, see above
  });
  for (const [key, samples] of Object.entries(ref.effective.samples)) {
    const [l, mode] = key.split('/') as [string, string];
    const kernel = mode.startsWith('exponential') ? 'exponential' : 'gaussian';
    const outside = mode.endsWith('mirror') ? 'mirror' : 'empty';
    it(`${kernel} L = ${l} µm, outside ${outside}`, () => {
      const eff = effectiveDensity(coverage, grid, { lengthUm: Number(l), kernel, outside });
      for (const [i, j, want] of samples) {
        // Tolerance 1.5e-3 in density, as /methods states for the block-averaged grid (the 4 L / 10 L truncation,
        // scipy's point-sampled Gaussian vs our pixel-integrated kernel and the reference's 8×8 point-sampled coverage
        // are all below 3e-4 here: the L = 3 and 5 µm cases, run without coarsening, agree within that). Before the
        // fixes in convolve.ts the coarsened cases were off by up to 7.5e-3 (Gaussian, empty outside, die edge),
        // 4.1e-2 (mirror) and 3e-3 (exponential at 4 coarse pixels per L).
        expect(Math.abs((eff[j * grid.nx + i] as number) - want), `pixel (${i}, ${j}) ${key}`).toBeLessThan(1.5e-3);
      }
    });
  }
});
