import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { coverageRaster64, gridForBox, windowCount, windowDensity, type Grid } from '@/lib/geometry';
import { makeSet, rect, rot90, translate, type Ring } from './make-set';

const DBU = 0.001; // 1 nm

interface RefCase { windowUm: number; stepUm: number; nx: number; ny: number; values: number[][] }
const ref = JSON.parse(readFileSync(new URL('../fixtures/geometry/density-ref.json', import.meta.url), 'utf8')) as {
  bboxDbu: [number, number, number, number]; polygons: number[][]; unionAreaUm2: number; windows: RefCase[];
};

describe('windowDensity(coverage, grid, opts) against gdspy', () => {
  const set = makeSet(ref.polygons);
  const grid = gridForBox(ref.bboxDbu, DBU, 5); // 5 µm divides both W/S pairs (20/10, 15/5)
  const cov = coverageRaster64(set, DBU, grid);
  it('total open area equals the gdspy union area', () => {
    let s = 0;
    for (const v of cov) s += v;
    // Source: gdspy 1.4.2 boolean 'or' area (tests/fixtures/geometry/generate.py)
    expect(Math.abs(s * 25 - ref.unionAreaUm2) / ref.unionAreaUm2).toBeLessThan(1e-9);
  });
  for (const c of ref.windows) {
    it(`${c.windowUm}/${c.stepUm} µm windows match gdspy boolean 'and' per window to 1e-9`, () => {
      const wd = windowDensity(cov, grid, { windowUm: c.windowUm, stepUm: c.stepUm, regionUm: ref.bboxDbu.map((v) => v * DBU) as [number, number, number, number] });
      expect([wd.nx, wd.ny]).toEqual([c.nx, c.ny]); // Source: n = floor((extent − W)/S) + 1 in generate.py
      let worst = 0;
      for (let j = 0; j < c.ny; j++) for (let i = 0; i < c.nx; i++) worst = Math.max(worst, Math.abs((wd.values[j * wd.nx + i] as number) - (c.values[j]?.[i] as number)));
      // Source: gdspy 1.4.2 exact polygon clipping of the union with each window (generate.py)
      expect(worst).toBeLessThan(1e-9);
    });
  }
});

/** Square die 100 µm with its own grid. */
function die(rings: Ring[], pixelUm = 1, box: [number, number, number, number] = [0, 0, 100_000, 100_000]) {
  const set = makeSet(rings);
  const grid: Grid = gridForBox(box, DBU, pixelUm);
  return { cov: coverageRaster64(set, DBU, grid), grid };
}

describe('windowDensity analytical cases', () => {
  it('a filled die gives 1 everywhere and an empty die 0', () => {
    const full = die([rect(0, 0, 100_000, 100_000)]);
    const wd = windowDensity(full.cov, full.grid, { windowUm: 20, stepUm: 10 });
    expect(wd.nx).toBe(9); // floor((100 − 20)/10) + 1 (rule-manual window count, domain.md §2)
    expect([wd.min, wd.max, wd.globalDensity]).toEqual([1, 1, 1]); // analytical: full coverage
    const empty = die([rect(200_000, 200_000, 201_000, 201_000)]);
    const we = windowDensity(empty.cov, empty.grid, { windowUm: 20, stepUm: 10 });
    expect([we.min, we.max, we.globalDensity]).toEqual([0, 0, 0]); // analytical: nothing drawn in the die
  });

  it('line/space arrays give their duty cycle in windows that hold whole periods', () => {
    // 3 µm lines at 8 µm pitch: duty cycle 3/8 (analytical)
    const lines: Ring[] = [];
    for (let x = 0; x < 100_000; x += 8000) lines.push(rect(x, 0, x + 3000, 100_000));
    const { cov, grid } = die(lines, 1, [0, 0, 96_000, 100_000]);
    const wd = windowDensity(cov, grid, { windowUm: 48, stepUm: 8 });
    expect(Math.abs(wd.min - 3 / 8)).toBeLessThan(1e-12); // analytical duty cycle
    expect(Math.abs(wd.max - 3 / 8)).toBeLessThan(1e-12);
    expect(wd.maxGradient.value).toBeLessThan(1e-12);
  });

  it('windows straddling a shape count only the part inside', () => {
    // 10×10 µm square at (15..25, 15..25); windows of 20 step 10 from (0,0)
    const { cov, grid } = die([rect(15_000, 15_000, 25_000, 25_000)], 1, [0, 0, 50_000, 50_000]);
    const wd = windowDensity(cov, grid, { windowUm: 20, stepUm: 10 });
    const v = (i: number, j: number) => wd.values[j * wd.nx + i];
    expect(v(0, 0)).toBeCloseTo(25 / 400, 12); // analytical: 5×5 µm of the square in [0,20]²
    expect(v(1, 1)).toBeCloseTo(100 / 400, 12); // whole square in [10,30]²
    expect(v(1, 0)).toBeCloseTo(50 / 400, 12); // [10,30]×[0,20]: 10×5
    expect(v(3, 3)).toBe(0);
    expect(wd.maxAt).toMatchObject({ i: 1, j: 1, xUm: 10, yUm: 10 });
    expect(wd.maxGradient.value).toBeCloseTo(0.25 - 0.125, 12); // largest neighbour difference (analytical)
  });

  it('rotating the layout by 0/90/180/270° leaves min, max, mean and global density unchanged', () => {
    const base: Ring[] = [rect(3_000, 7_000, 41_000, 9_000), rect(10_000, 10_000, 30_000, 60_000), rect(25_000, 50_000, 70_000, 55_000), [60_000, 60_000, 90_000, 62_000, 75_000, 90_000]];
    const stats: number[][] = [];
    for (let q = 0; q < 4; q++) {
      // Rotate about the die centre so the die maps onto itself.
      const rings = base.map((r) => translate(rot90(translate(r, -50_000, -50_000), q), 50_000, 50_000));
      const { cov, grid } = die(rings, 1);
      const wd = windowDensity(cov, grid, { windowUm: 20, stepUm: 10 });
      stats.push([wd.min, wd.max, wd.mean, wd.globalDensity]);
    }
    // Symmetry: the window lattice 0..80 step 10 maps onto itself under these rotations (analytical)
    for (const s of stats.slice(1)) for (let k = 0; k < 4; k++) expect(Math.abs((s[k] as number) - (stats[0]?.[k] as number))).toBeLessThan(1e-12);
  });

  it('translating layout and origin together leaves every window value unchanged', () => {
    const rings: Ring[] = [rect(3_000, 7_000, 41_000, 9_000), [60_000, 60_000, 90_000, 62_000, 75_000, 90_000]];
    const a = die(rings, 1);
    const b = die(rings.map((r) => translate(r, 123_000, -77_000)), 1, [123_000, -77_000, 223_000, 23_000]);
    const wa = windowDensity(a.cov, a.grid, { windowUm: 30, stepUm: 15 });
    const wb = windowDensity(b.cov, b.grid, { windowUm: 30, stepUm: 15 });
    expect(wb.originUm).toEqual([123, -77]);
    for (let q = 0; q < wa.values.length; q++) expect(Math.abs((wa.values[q] as number) - (wb.values[q] as number))).toBeLessThan(1e-12); // translation invariance
  });

  it('clipped edge windows divide by the window area inside the die', () => {
    const { cov, grid } = die([rect(0, 0, 100_000, 100_000)], 1, [0, 0, 100_000, 100_000]);
    const wd = windowDensity(cov, grid, { windowUm: 30, stepUm: 20, edge: 'clipped' });
    expect(wd.nx).toBe(5); // starts 0,20,40,60,80: the last reaches the edge (clipped policy)
    expect(wd.min).toBeCloseTo(1, 12); // a filled die stays 1 when the denominator is clipped too
    const fullOnly = windowDensity(cov, grid, { windowUm: 30, stepUm: 20 });
    expect(fullOnly.nx).toBe(4); // floor((100 − 30)/20) + 1
    expect(fullOnly.method.edgePolicy).toMatch(/only full windows/);
  });

  it('another origin shifts the windows', () => {
    const { cov, grid } = die([rect(0, 0, 10_000, 100_000)], 1);
    const wd = windowDensity(cov, grid, { windowUm: 20, stepUm: 10, originUm: [5, 0] });
    expect(wd.nx).toBe(8); // floor((95 − 20)/10) + 1
    expect(wd.values[0]).toBeCloseTo(5 / 20, 12); // [5,25] holds 5 µm of the 10 µm stripe (analytical)
  });

  it('windowCount(extent, W, S) follows n = floor((extent − W)/S) + 1', () => {
    expect(windowCount(10_000, 700, 70, 'full')).toBe(Math.floor((10_000 - 700) / 70) + 1); // SKY130-style 700/70 (domain.md §2)
    expect(windowCount(600, 700, 70, 'full')).toBe(0);
  });
});
