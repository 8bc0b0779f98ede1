import { describe, expect, it } from 'vitest';
import { createDepthUncertainty, predictFeature, type ProcessModel } from '@/lib/etch';
import { gaussian, mulberry32 } from '@/lib/random';
import { testModel } from '../etch/helpers';

function withCovariance(model: ProcessModel, parameters: ('openRateUmPerMin' | 'reactionProbability' | 'loadingCoefficient')[], matrix: number[][]): ProcessModel {
  return { ...model, calibration: { date: '2026-12-02', widthUm: [1, 20], aspectRatio: [0, 50], density: [0, 1], covariance: { parameters, matrix } } };
}

describe('depth uncertainty — first-order propagation of the fit covariance (delta method)', () => {
  it('no covariance, no uncertainty evaluator', () => {
    expect(createDepthUncertainty(testModel())).toBeNull();
  });
  it('open rate only, no transport limit: depth = R·t, so σ_depth = t·σ_R exactly', () => {
    // With S → 0 the bottom flux ratio is 1 and depth is linear in R (closed form, domain.md §3.3 limit S → 0).
    const m = withCovariance(testModel({ reactionProbability: 1e-9, etch: { timeMin: 10, targetDepthUm: 500, toleranceUm: 1, maxAspectRatio: 400, stopRateFraction: 0 } }), ['openRateUmPerMin'], [[0.05 ** 2]]);
    const u = createDepthUncertainty(m);
    expect(u).not.toBeNull();
    expect(u?.sigmaUm({ widthUm: 5, kind: 'trench', effectiveDensity: 0 })).toBeCloseTo(10 * 0.05, 6);
  });
  it('agrees with Monte Carlo sampling of the parameters within 5 % (two correlated parameters)', () => {
    const base = testModel({ openRateUmPerMin: 3, reactionProbability: 0.2, loading: { coefficient: 0.3, lengthUm: 1000 } });
    const sR = 0.03, sS = 0.006, rho = -0.6;
    const m = withCovariance(base, ['openRateUmPerMin', 'reactionProbability'], [[sR * sR, rho * sR * sS], [rho * sR * sS, sS * sS]]);
    const input = { widthUm: 2, kind: 'trench' as const, effectiveDensity: 0.3 };
    const sigma = createDepthUncertainty(m)?.sigmaUm(input) ?? NaN;
    const g = gaussian(mulberry32(11));
    const depths: number[] = [];
    for (let k = 0; k < 2000; k++) {
      const z1 = g(), z2 = g();
      const r = 3 + sR * z1;
      const s = 0.2 + sS * (rho * z1 + Math.sqrt(1 - rho * rho) * z2);
      depths.push(predictFeature({ ...base, openRateUmPerMin: r, reactionProbability: s }, input, { relTol: 1e-8 }).depthUm);
    }
    const mean = depths.reduce((a, b) => a + b, 0) / depths.length;
    const sd = Math.sqrt(depths.reduce((a, b) => a + (b - mean) ** 2, 0) / (depths.length - 1));
    expect(sigma).toBeGreaterThan(0);
    expect(Math.abs(sigma / sd - 1)).toBeLessThan(0.05);
  });
  it('a depth held at the stop layer has no uncertainty', () => {
    const base = testModel({ stopLayer: { depthUm: 15, selectivity: 100 } });
    const m = withCovariance(base, ['openRateUmPerMin'], [[0.01]]);
    expect(createDepthUncertainty(m)?.sigmaUm({ widthUm: 50, kind: 'trench', effectiveDensity: 0 })).toBe(0);
  });
});
