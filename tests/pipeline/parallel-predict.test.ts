/**
 * Predictions split between the calling thread and the helper thread (parallel-predict.ts) must equal the one-pass
 * `predictFeatureTable` column for column, note lists included (same lists in the same order): the reference is
 * the existing one-thread path. Rows are seeded openings of every kind, widths from 0.2 to 80 µm (the sample
 * models then give stop, over-etch and extrapolation notes), some sampled widths and some without a measurable
 * width (mean-width note).
 */
import { describe, expect, it } from 'vitest';
import { FeatureTableBuilder, type FeatureTable, type Grid } from '@/lib/geometry';
import { predictInThreads } from '@/lib/pipeline/parallel-predict';
import { predictFeatureTable } from '@/lib/pipeline/predict-features';
import type { FeatureResultTable } from '@/lib/pipeline/feature-results';
import { mulberry32 } from '@/lib/random';
import { failingHelper, useAnalysisHelper } from '../support/helper-thread';
import { sampleModel } from '../support/sample-model';

const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 10, nx: 100, ny: 80 };

const model = sampleModel;

function seededTable(seed: number, n: number, badRow = -1): FeatureTable {
  const rnd = mulberry32(seed);
  const b = new FeatureTableBuilder(n);
  for (let k = 0; k < n; k++) {
    const w = 0.2 * Math.exp(rnd() * Math.log(400));
    const noWidth = k === badRow || rnd() < 0.01;
    const x = rnd() * 1000, y = rnd() * 800;
    b.push(
      {
        kind: Math.floor(rnd() * 5),
        centroidXUm: x,
        centroidYUm: y,
        x0Um: x - w,
        y0Um: y - w,
        x1Um: x + w,
        y1Um: y + w,
        areaUm2: k === badRow ? 0 : w * w * 3,
        perimeterUm: k === badRow ? 0 : 8 * w,
        minWidthUm: noWidth ? 0 : w,
        maxWidthUm: w * 2,
        lengthUm: w * 3,
        widthStepUm: 0.05,
        widthExact: rnd() > 0.1,
        pieces: 1,
      },
      k + 1,
    );
  }
  return b.finish();
}

function effectiveMap(seed: number): Float32Array {
  const rnd = mulberry32(seed);
  return Float32Array.from({ length: grid.nx * grid.ny }, () => rnd());
}

/** Everything a reader sees, as plain values. */
function plain(t: FeatureResultTable): Record<string, unknown> {
  return Object.fromEntries(Object.entries(t).map(([k, v]) => [k, ArrayBuffer.isView(v) ? Array.from(v as unknown as ArrayLike<number>) : k === 'features' ? (v as FeatureTable).count : v]));
}

const helperThread = useAnalysisHelper();

describe('predictInThreads', () => {
  for (const name of ['deep-trench-continuous.json', 'cyclic-via.json', 'minimal-neutral-limited.json']) {
    it(`equals predictFeatureTable with ${name} (several chunk sizes)`, () => {
      const f = seededTable(3, 6_000);
      const eff = effectiveMap(4);
      const m = model(name);
      const opts = { exposedFraction: 0.23 };
      const want = predictFeatureTable(f, eff, grid, m, opts);
      expect(want.noteLists.length).toBeGreaterThan(1); // the seeded rows do produce notes
      for (const chunk of [64, 1000, 6_000]) {
        const info: { helperRows?: number } = {};
        const got = predictInThreads(f, eff, grid, m, opts, helperThread(), { minRows: 0, chunk, info });
        expect(plain(got), `chunk ${chunk}`).toEqual(plain(want));
        expect(got.features).toBe(f);
      }
    });
  }

  it('the helper really predicts rows', () => {
    const f = seededTable(8, 40_000);
    const eff = effectiveMap(9);
    const m = model('deep-trench-continuous.json');
    const want = plain(predictFeatureTable(f, eff, grid, m, { exposedFraction: 0.3 }));
    let rows = 0;
    for (let k = 0; k < 20 && rows === 0; k++) {
      const info: { helperRows?: number } = {};
      expect(plain(predictInThreads(f, eff, grid, m, { exposedFraction: 0.3 }, helperThread(), { minRows: 0, chunk: 256, info }))).toEqual(want);
      rows = info.helperRows ?? 0;
    }
    expect(rows).toBeGreaterThan(0);
  });

  it('a helper that takes rows and fails: the table is predicted again here, same result', () => {
    const f = seededTable(5, 3_000);
    const eff = effectiveMap(6);
    const m = model('deep-trench-continuous.json');
    const failing = failingHelper(2);
    expect(plain(predictInThreads(f, eff, grid, m, { exposedFraction: 0.2 }, failing, { minRows: 0, chunk: 100 }))).toEqual(plain(predictFeatureTable(f, eff, grid, m, { exposedFraction: 0.2 })));
  });

  it('an opening without a measurable width gives the one-pass error', () => {
    const f = seededTable(12, 3_000, 2_500);
    const eff = effectiveMap(1);
    const m = model('deep-trench-continuous.json');
    const one = () => predictFeatureTable(f, eff, grid, m, { exposedFraction: 0.2 });
    expect(one).toThrow(/opening #2501 .* has no measurable width/);
    expect(() => predictInThreads(f, eff, grid, m, { exposedFraction: 0.2 }, helperThread(), { minRows: 0, chunk: 128 })).toThrow(/opening #2501 .* has no measurable width/);
  });
});
