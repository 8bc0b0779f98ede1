/**
 * Computations handed to the helper thread (offload.ts) give exactly what the same function gives here — the
 * function computed on this thread is the reference — and a helper that fails or answers with something malformed
 * falls back to computing here.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { effectiveDensity, type Grid } from '@/lib/geometry';
import { startAnalysisHelper } from '@/lib/pipeline/analysis-helper';
import { effectiveOffloaded, paintOffloaded } from '@/lib/pipeline/offload';
import { paintFeatureColumns, type PaintColumns } from '@/lib/pipeline/result-maps';
import type { TaskThread } from '@/lib/threads/sync-helper';
import { mulberry32 } from '@/lib/random';

const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 2, nx: 150, ny: 120 };
const rnd = mulberry32(21);
const coverage = Float32Array.from({ length: grid.nx * grid.ny }, () => (rnd() < 0.3 ? rnd() : 0));
const n = 2_000;
const col = (f: () => number) => Float64Array.from({ length: n }, f);
const x0 = col(() => rnd() * 290), y0 = col(() => rnd() * 230);
const columns: PaintColumns = {
  count: n,
  x0Um: x0,
  y0Um: y0,
  x1Um: x0.map((v) => v + 1 + rnd() * 20),
  y1Um: y0.map((v) => v + 1 + rnd() * 20),
  areaUm2: col(() => rnd() * 100),
  aspectRatio: col(() => rnd() * 30),
  depthUm: col(() => rnd() * 60),
  depthSigmaUm: col(() => (rnd() < 0.1 ? Number.NaN : rnd())),
};
const risks = col(() => rnd() * 2);
const plain = (m: object) => Object.fromEntries(Object.entries(m).map(([k, v]) => [k, v && ArrayBuffer.isView(v) ? Array.from(v as Float32Array) : v]));

let helper: TaskThread | null = null;
beforeAll(() => {
  helper = startAnalysisHelper();
});
afterAll(() => helper?.close());

const broken = (reply: unknown): TaskThread => ({ post: () => 1, wait: () => reply, close() {} });

describe('offloaded computations', () => {
  it('effective density: same map from the helper, from a failed helper and from none', () => {
    const opts = { lengthUm: 40, kernel: 'gaussian' as const };
    const want = Array.from(effectiveDensity(coverage, grid, opts));
    for (const h of [helper, null, broken(null), broken(new Float32Array(3)), broken('nonsense')]) expect(Array.from(effectiveOffloaded(h, coverage, grid, opts)())).toEqual(want);
  });

  it('result maps: same maps from the helper, from a failed helper and from none (with and without σ)', () => {
    for (const c of [columns, { ...columns, depthSigmaUm: null }]) {
      const want = plain(paintFeatureColumns(c, risks, coverage, grid));
      for (const h of [helper, null, broken(null), broken({ aspectRatio: new Float32Array(1) })]) expect(plain(paintOffloaded(h, c, risks, coverage, grid)())).toEqual(want);
    }
  });
});
