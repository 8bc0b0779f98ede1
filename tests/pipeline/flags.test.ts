/**
 * Flag rules on hand-made inputs: each kind triggers exactly when its limit is strictly crossed (a value equal to
 * the limit passes). Values are chosen by hand; no model or geometry involved.
 */
import { describe, expect, it } from 'vitest';
import {
  compareFlags,
  DEFAULT_SEVERITY,
  densityGradientFlags,
  FlagCollector,
  featureFlags,
  markedGroups,
  windowDensityFlags,
  type FeatureCheckInput,
  type Flag,
  type WindowSetInput,
} from '@/lib/pipeline/flags';
import type { ResolvedLimits } from '@/lib/pipeline/settings';

const limits: ResolvedLimits = {
  minDensity: 0.2,
  maxDensity: 0.6,
  maxGradient: 0.1,
  maxAspectRatio: 20,
  targetDepthUm: 50,
  toleranceUm: 2,
  stopOverEtchBudgetUm: 0.5,
  minWidthUm: 3,
};

/** A 5 µm trench that meets every limit: depth 49 ≥ 48, AR 50/5 = 10 ≤ 20, over-etch 0.1 ≤ 0.5, width 5 ≥ 3. */
const ok: FeatureCheckInput = {
  featureId: 7,
  shape: 'trench',
  modelKind: 'trench',
  bboxUm: [100, 100, 105, 500],
  centroidUm: [102.5, 300],
  widthUm: 5,
  depthUm: 49,
  overEtchUm: 0.1,
  excursions: [],
};
const kinds = (flags: Flag[]) => flags.map((f) => f.kind).sort();
const ulp = (v: number) => v * (1 + 1e-12);
const under = (v: number) => v * (1 - 1e-12);

describe('featureFlags', () => {
  it('featureFlags(ok) raises nothing', () => {
    expect(featureFlags(ok, limits)).toEqual([]);
  });

  it('under-target-depth triggers below target − tolerance, not at it', () => {
    expect(featureFlags({ ...ok, depthUm: 48 }, limits)).toEqual([]);
    const flags = featureFlags({ ...ok, depthUm: under(48) }, limits);
    expect(kinds(flags)).toEqual(['under-target-depth']);
    const f = flags[0] as Flag;
    expect(f).toMatchObject({ severity: 'error', limit: 48, unit: 'µm', featureId: 7, xUm: 102.5, yUm: 300, bboxUm: [100, 100, 105, 500], id: 'under-target-depth:f7' });
    expect(f.message).toMatch(/Opening #7 \(trench, 5 µm wide\).*short of the 50 µm target/);
  });

  it('over-etch-budget triggers above the stop budget and is off without a budget', () => {
    expect(featureFlags({ ...ok, overEtchUm: 0.5 }, limits)).toEqual([]);
    expect(kinds(featureFlags({ ...ok, overEtchUm: ulp(0.5) }, limits))).toEqual(['over-etch-budget']);
    expect(featureFlags({ ...ok, overEtchUm: 10 }, { ...limits, stopOverEtchBudgetUm: null })).toEqual([]);
  });

  it('aspect-ratio-above-limit uses target / width: 2.5 µm passes at AR 20, narrower fails', () => {
    // width ≥ minWidth avoided: use a limits copy without the width rule
    const l = { ...limits, minWidthUm: null };
    expect(featureFlags({ ...ok, widthUm: 2.5 }, l)).toEqual([]);
    const flags = featureFlags({ ...ok, widthUm: under(2.5) }, l);
    expect(kinds(flags)).toEqual(['aspect-ratio-above-limit']);
    expect((flags[0] as Flag).measured).toBeCloseTo(20, 9);
    expect((flags[0] as Flag).unit).toBe('ratio');
  });

  it('width-below-minimum triggers below the rule and is off without a rule', () => {
    const l = { ...limits, maxAspectRatio: 1000 };
    expect(featureFlags({ ...ok, widthUm: 3 }, l)).toEqual([]);
    expect(kinds(featureFlags({ ...ok, widthUm: under(3) }, l))).toEqual(['width-below-minimum']);
    expect(featureFlags({ ...ok, widthUm: 1 }, { ...l, minWidthUm: null })).toEqual([]);
  });

  it('outside-calibrated-range: one warning per quantity outside its range, none on the bounds', () => {
    const inside = featureFlags({ ...ok, excursions: [{ quantity: 'width', value: 10, min: 10, max: 20, unit: 'µm' }] }, limits);
    expect(inside).toEqual([]);
    const flags = featureFlags(
      {
        ...ok,
        excursions: [
          { quantity: 'width', value: under(10), min: 10, max: 20, unit: 'µm' },
          { quantity: 'density', value: 0.9, min: 0, max: 0.5, unit: 'fraction' },
        ],
      },
      limits,
    );
    expect(flags.map((f) => [f.kind, f.severity, f.limit])).toEqual([
      ['outside-calibrated-range', 'warning', 10],
      ['outside-calibrated-range', 'warning', 50],
    ]);
    expect(new Set(flags.map((f) => f.id)).size).toBe(2);
    // Densities are reported in percent, in the numbers and in the words (issue 14: % everywhere).
    expect(flags[1]).toMatchObject({ measured: 90, unit: '%' });
    expect((flags[1] as Flag).message).toMatch(/effective density of 90 % is above the range the model was calibrated on \(0 % to 50 %\)/);
  });

  it('severity overrides apply per kind', () => {
    const flags = featureFlags({ ...ok, depthUm: 10 }, limits, { 'under-target-depth': 'info' });
    expect(flags[0]?.severity).toBe('info');
  });
});

/** 3 × 2 windows of 100 µm stepped by 100 µm over a 300 × 200 µm die. */
function windowSet(values: number[]): WindowSetInput {
  return { windowUm: 100, stepUm: 100, originUm: [0, 0], nx: 3, ny: 2, values, dieBboxUm: [0, 0, 300, 200] };
}

describe('windowDensityFlags', () => {
  it('values equal to the limits raise nothing', () => {
    expect(windowDensityFlags(windowSet([0.2, 0.6, 0.3, 0.3, 0.3, 0.3]), limits)).toEqual([]);
  });

  it('below-min and above-max trigger just past the limits, with the window box and centre', () => {
    const flags = windowDensityFlags(windowSet([under(0.2), 0.3, 0.3, 0.3, 0.3, ulp(0.6)]), limits);
    expect(flags.map((f) => [f.kind, f.severity, f.bboxUm, f.xUm, f.yUm, f.unit])).toEqual([
      ['window-density-below-min', 'error', [0, 0, 100, 100], 50, 50, '%'],
      ['window-density-above-max', 'error', [200, 100, 300, 200], 250, 150, '%'],
    ]);
    expect(flags[1]?.limit).toBeCloseTo(60, 12);
    expect(flags[1]?.message).toMatch(/above the 60 % maximum \(worst 60 %\)/);
    expect(flags[0]?.window).toEqual({ windowUm: 100, stepUm: 100 });
  });

  it('neighbouring offending windows form one flag at the worst window; NaN windows are skipped', () => {
    const flags = windowDensityFlags(windowSet([0.1, 0.05, 0.3, NaN, 0.15, 0.3]), limits);
    expect(flags).toHaveLength(1);
    expect(flags[0]).toMatchObject({ measured: 5, bboxUm: [0, 0, 200, 200], xUm: 150, yUm: 50 });
    expect(flags[0]?.message).toMatch(/^3 neighbouring windows/);
  });

  it('no limits, no flags', () => {
    expect(windowDensityFlags(windowSet([0, 0, 0, 1, 1, 1]), { minDensity: null, maxDensity: null })).toEqual([]);
  });

  it('windows past the die edge are clipped to the die in the bbox', () => {
    const w = { ...windowSet([0.9, 0.3, 0.3, 0.3, 0.3, 0.3]), stepUm: 50, dieBboxUm: [0, 0, 80, 80] as [number, number, number, number] };
    expect(windowDensityFlags(w, limits)[0]?.bboxUm).toEqual([0, 0, 80, 80]);
  });
});

describe('densityGradientFlags', () => {
  it('a step equal to the limit passes; just above it flags once, between the worst pair', () => {
    expect(densityGradientFlags(windowSet([0.3, 0.4, 0.4, 0.3, 0.4, 0.4]), 0.1 + 1e-12)).toEqual([]);
    const flags = densityGradientFlags(windowSet([0.3, 0.3, 0.3, 0.3, 0.3, 0.55]), 0.1);
    expect(flags).toHaveLength(1);
    const f = flags[0] as Flag;
    expect(f.kind).toBe('density-gradient-above-limit');
    expect(f.severity).toBe(DEFAULT_SEVERITY['density-gradient-above-limit']);
    expect(f.measured).toBeCloseTo(25, 12); // percent
    // worst pairs: (1,1)–(2,1) and (2,0)–(2,1), both 0.25; the group covers the three windows
    expect(f.bboxUm).toEqual([100, 0, 300, 200]);
  });

  it('off when no limit is set', () => {
    expect(densityGradientFlags(windowSet([0, 1, 0, 1, 0, 1]), null)).toEqual([]);
  });
});

describe('markedGroups', () => {
  it('markedGroups groups 4-neighbours and not diagonals', () => {
    // 3×3: marked (0,0), (1,1), (2,1), (2,2)
    const m = new Uint8Array([1, 0, 0, 0, 1, 1, 0, 0, 1]);
    const groups = markedGroups(m, 3, 3).map((g) => g.sort((a, b) => a - b));
    expect(groups).toEqual([[0], [4, 5, 8]]);
  });
});

describe('FlagCollector', () => {
  it('counts every flag but keeps only the worst `cap`, errors first', () => {
    const c = new FlagCollector(3);
    const mk = (id: number, severity: Flag['severity'], measured: number): Flag => ({
      id: `x${id}`, kind: 'under-target-depth', severity, bboxUm: [0, 0, 1, 1], xUm: 0, yUm: 0, measured, limit: 10, unit: 'µm', message: '',
    });
    for (let k = 0; k < 20; k++) c.add([mk(k, k % 2 ? 'warning' : 'error', k / 2)]);
    expect(c.total).toBe(20);
    expect(c.counts['under-target-depth']).toEqual({ error: 10, warning: 10, info: 0 });
    const list = c.list();
    expect(list.map((f) => f.id)).toEqual(['x0', 'x2', 'x4']); // errors with the largest |measured − 10|/10 first
    expect([...list].sort(compareFlags)).toEqual(list);
  });

  it('builds a flag only while it can still make the list', () => {
    const c = new FlagCollector(2);
    let built = 0;
    const mk = (id: string, measured: number): Flag => {
      built++;
      return { id, kind: 'under-target-depth', severity: 'error', bboxUm: [0, 0, 1, 1], xUm: 0, yUm: 0, measured, limit: 10, unit: 'µm', message: '' };
    };
    // four flags, worst first: the list fills at 4 (2·cap), trims to 2; later milder flags are never built
    for (const [k, m] of [[0, 0], [1, 1], [2, 2], [3, 3], [4, 9], [5, 9.5]] as const) c.offer(`f${k}`, 'under-target-depth', 'error', m, 10, () => mk(`f${k}`, m));
    expect(built).toBe(4);
    expect(c.total).toBe(6);
    expect(c.list().map((f) => f.id)).toEqual(['f0', 'f1']);
  });
});
