import { describe, expect, it } from 'vitest';
import { densityLimits, densityLimitsToCsv, predictFeature } from '@/lib/etch';
import { densityTable, isWidthTableError } from '@/lib/models/width-table';
import { testModel } from './helpers';

describe('densityLimits', () => {
  it('no-lag limit: the band is the closed form of R_open·T/(1 + κρ) = target ∓ tolerance', () => {
    // S → 0 removes ARDE (Coburn & Winters limit, domain.md 3.3 [citation from memory]); reciprocal loading
    // R = R_open/(1 + κρ) (domain.md 3.6). Depth at T: 2 µm/min · 10 min/(1 + 0.5ρ) = 20/(1 + 0.5ρ) µm.
    // Target 15 ± 1: depth ≥ 14 ⇔ ρ ≤ (20/14 − 1)/0.5 = 6/7; depth ≤ 16 ⇔ ρ ≥ (20/16 − 1)/0.5 = 1/2 (hand-derived).
    const m = testModel({ reactionProbability: 1e-9, loading: { coefficient: 0.5, lengthUm: 800 } });
    const t = densityLimits(m, { kind: 'hole', widthsUm: [2, 20] });
    for (const r of t.rows) {
      expect(r.maxDensity).toBeCloseTo(6 / 7, 6);
      expect(r.minDensity).toBeCloseTo(0.5, 6);
      t.densities.forEach((rho, i) => expect(r.depthsUm[i]).toBeCloseTo(20 / (1 + 0.5 * rho), 5));
    }
  });

  it('with ARDE: narrower openings get a lower upper limit, and the limit lands on target − tolerance', () => {
    const m = testModel({ reactionProbability: 0.25, loading: { coefficient: 0.4, lengthUm: 800 }, etch: { timeMin: 10, targetDepthUm: 15, toleranceUm: 1, maxAspectRatio: 50, stopRateFraction: 0 } });
    const t = densityLimits(m, { kind: 'trench', widthsUm: [20, 3, 6] });
    expect(t.rows.map((r) => r.widthUm)).toEqual([3, 6, 20]);
    const limits = t.rows.map((r) => r.maxDensity);
    expect(limits.every((v) => v !== null && v > 0 && v < 1)).toBe(true);
    expect((limits[0] as number) < (limits[1] as number) && (limits[1] as number) < (limits[2] as number)).toBe(true);
    for (const r of t.rows) {
      const at = (rho: number) => predictFeature(m, { widthUm: r.widthUm, kind: 'trench', effectiveDensity: rho }).depthUm;
      expect(at(r.maxDensity as number)).toBeCloseTo(14, 6);
      expect(at(Math.min(1, (r.maxDensity as number) + 0.01))).toBeLessThan(14);
      // Depth falls with density at every width (loading only slows the rate).
      for (let i = 1; i < r.depthsUm.length; i++) expect(r.depthsUm[i]).toBeLessThan(r.depthsUm[i - 1] as number);
    }
  });

  it('null where no density works; a stop layer has no lower limit', () => {
    const slow = testModel({ openRateUmPerMin: 0.5, loading: { coefficient: 0.5, lengthUm: 800 } });
    expect(densityLimits(slow, { kind: 'hole', widthsUm: [5] }).rows[0]?.maxDensity).toBeNull();
    // 20/(1 + 0.1ρ) ≥ 18.18 > 16 at every ρ ≤ 1: always too deep on a timed etch.
    const fast = testModel({ reactionProbability: 1e-9, loading: { coefficient: 0.1, lengthUm: 800 } });
    const row = densityLimits(fast, { kind: 'hole', widthsUm: [5] }).rows[0];
    expect(row?.minDensity).toBeNull();
    expect(row?.maxDensity).toBe(1);
    const stopped = testModel({ reactionProbability: 1e-9, loading: { coefficient: 0.1, lengthUm: 800 }, stopLayer: { depthUm: 15, selectivity: 100 } });
    expect(densityLimits(stopped, { kind: 'hole', widthsUm: [5] }).rows[0]?.minDensity).toBe(0);
  });

  it('says when global loading is left out, and takes it in when an exposed fraction is given', () => {
    // R = R_open/(1 + κρ + Φ·A) (domain.md 3.6): with Φ = 0.25, A = 0.4 and no lag, 20/(1.1 + 0.5ρ) ≥ 14 ⇔
    // ρ ≤ (20/14 − 1.1)/0.5 = 46/70 (hand-derived).
    const m = testModel({ reactionProbability: 1e-9, loading: { coefficient: 0.5, globalCoefficient: 0.25, lengthUm: 800 } });
    expect(densityLimits(m, { kind: 'hole', widthsUm: [5] }).caution).toMatch(/Global \(wafer-level\) loading is left out/);
    const t = densityLimits(m, { kind: 'hole', widthsUm: [5], exposedFraction: 0.4 });
    expect(t.caution).not.toMatch(/left out/);
    expect(t.rows[0]?.maxDensity).toBeCloseTo(46 / 70, 6);
  });

  it('CSV: commented header with the caution, one row per width, empty cell for no limit', () => {
    const slow = testModel({ openRateUmPerMin: 0.5, loading: { coefficient: 0.5, lengthUm: 800 } });
    const lines = densityLimitsToCsv(densityLimits(slow, { kind: 'hole', widthsUm: [5, 50] })).trim().split('\n');
    expect(lines.some((l) => /^# .*process of record/.test(l))).toBe(true);
    const body = lines.filter((l) => !l.startsWith('#'));
    expect(body[0]).toBe('width_um,min_density,max_density,depth_um_at_0,depth_um_at_0.1,depth_um_at_0.2,depth_um_at_0.3,depth_um_at_0.4,depth_um_at_0.5,depth_um_at_0.6,depth_um_at_0.7,depth_um_at_0.8,depth_um_at_0.9,depth_um_at_1');
    expect(body).toHaveLength(3);
    expect(body[1]?.split(',')[2]).toBe('');
  });

  it('densityTable applies the requested target and refuses a tolerance not below it', () => {
    const m = testModel({ reactionProbability: 1e-9, loading: { coefficient: 0.5, lengthUm: 800 } });
    const t = densityTable(m, { kind: 'hole', targetDepthUm: 18, toleranceUm: 1, widthsUm: [5] });
    if (isWidthTableError(t)) throw new Error(t.message);
    // 20/(1 + 0.5ρ) ≥ 17 ⇔ ρ ≤ (20/17 − 1)/0.5 = 6/17 (hand-derived, as above).
    expect(t.rows[0]?.maxDensity).toBeCloseTo(6 / 17, 6);
    expect(isWidthTableError(densityTable(m, { kind: 'hole', targetDepthUm: 2, toleranceUm: 3 }))).toBe(true);
  });
});
