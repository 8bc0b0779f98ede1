import { describe, expect, it } from 'vitest';
import { adaptiveIntegral, depthAtTime, predictFeature, rateThresholdDepthUm, timeToDepthMin, ardeFactor, createArdeEvaluators } from '@/lib/etch';
import { testModel } from './helpers';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('depth integrator against the closed form (domain.md 3.7)', () => {
  // domain.md 3.7: with K = 1/(1 + a·AR), S = 1 and constant R₀, dh/dt = R₀/(1 + a h/w) gives
  // t(h) = (h + a h²/(2w))/R₀ (analytic; exact).
  for (const [R0, a, w] of [[3, 0.7, 2], [1.2, 0.375, 0.8], [6, 2, 10]] as const) {
    const rate = (h: number) => R0 / (1 + (a * h) / w);
    const tExact = (h: number) => (h + (a * h * h) / (2 * w)) / R0;
    it(`R₀ = ${R0}, a = ${a}, w = ${w}: time to depth matches to 1e-9`, () => {
      for (const h of [0.1, 1, 10, 50, 200]) expect(rel(timeToDepthMin(rate, h, 1e-11), tExact(h))).toBeLessThan(1e-9);
    });
    it(`R₀ = ${R0}, a = ${a}, w = ${w}: depth at time inverts t(h) to 1e-9`, () => {
      for (const T of [0.5, 5, 30, 120]) {
        const h = depthAtTime(rate, T, 1e4, 1e-11).depthUm;
        // Exact inverse: h = (w/a)(√(1 + 2aR₀T/w) − 1).
        expect(rel(h, (w / a) * (Math.sqrt(1 + (2 * a * R0 * T) / w) - 1))).toBeLessThan(1e-9);
      }
    });
  }
  it('constant rate: depth = R·t, capped at the limit with the time to the limit', () => {
    // Trivial exact case.
    expect(depthAtTime(() => 2, 3, 100)).toEqual({ depthUm: 6, reachedLimit: false, timeToLimitMin: 50 });
    expect(depthAtTime(() => 2, 60, 100)).toEqual({ depthUm: 100, reachedLimit: true, timeToLimitMin: 50 });
  });
  it('adaptive Gauss–Kronrod integrates a peaked function to its tolerance', () => {
    // ∫₀¹ 1/(x² + 1e-4) dx = 100·atan(100) (exact).
    expect(rel(adaptiveIntegral((x) => 1 / (x * x + 1e-4), 0, 1, 1e-9), 100 * Math.atan(100))).toBeLessThan(1e-10);
  });
  it('rate-threshold depth is where the rate crosses the threshold', () => {
    const rate = (h: number) => 4 / (1 + h);
    expect(rateThresholdDepthUm(rate, 1, 100)).toBeCloseTo(3, 9);
    expect(rateThresholdDepthUm(rate, 0.01, 100)).toBe(100);
    expect(rateThresholdDepthUm(rate, 5, 100)).toBe(0);
  });
});

describe('predictFeature — continuous mode', () => {
  it('S → 0 gives no lag: depth = open rate × time for any width', () => {
    // Coburn & Winters limit S → 0 (domain.md 3.3 [citation from memory]).
    const m = testModel({ reactionProbability: 1e-9 });
    for (const w of [0.5, 2, 20]) expect(predictFeature(m, { widthUm: w, kind: 'hole' }).depthUm).toBeCloseTo(20, 5);
  });
  it('neutral-limited minimal model: rate at depth = open rate × Γ_bottom/Γ_top × loading', () => {
    // Definition of the minimal model (issue text); loading 1/(1 + κρ) (domain.md 3.6).
    const m = testModel({ loading: { coefficient: 0.5, lengthUm: 800 } });
    const p = predictFeature(m, { widthUm: 3, kind: 'trench', effectiveDensity: 0.4 });
    expect(p.loadingFactor).toBeCloseTo(1 / 1.2, 12);
    expect(p.rateAtDepthUmPerMin).toBeCloseTo(2 * (1 / 1.2) * ardeFactor(m, 'trench', p.aspectRatio), 12);
    expect(p.ardeFactor).toBeGreaterThan(0);
    expect(p.ardeFactor).toBeLessThan(1);
  });
  it('narrow features lag wide ones; holes lag trenches of the same width', () => {
    // RIE lag (domain.md 1); Kiihamäki & Franssila JVST A 17, 2280 (1999) [P, qualitative].
    const m = testModel();
    const d = (w: number, kind: 'trench' | 'hole') => predictFeature(m, { widthUm: w, kind }).depthUm;
    expect(d(1, 'trench')).toBeLessThan(d(4, 'trench'));
    expect(d(4, 'trench')).toBeLessThan(d(40, 'trench'));
    expect(d(2, 'hole')).toBeLessThan(d(2, 'trench'));
  });
  it('time to target is consistent with depth at time', () => {
    const m = testModel();
    const p = predictFeature(m, { widthUm: 5, kind: 'trench' });
    expect(p.timeToTargetMin).not.toBeNull();
    const m2 = testModel({ etch: { ...m.etch, timeMin: p.timeToTargetMin ?? NaN } });
    expect(predictFeature(m2, { widthUm: 5, kind: 'trench' }).depthUm).toBeCloseTo(15, 6);
  });
  it('stops at the maximum aspect ratio; time to target is null when the target lies beyond it', () => {
    const m = testModel({ etch: { timeMin: 100, targetDepthUm: 15, toleranceUm: 1, maxAspectRatio: 5 } });
    const p = predictFeature(m, { widthUm: 1, kind: 'hole' });
    expect(p.depthUm).toBeCloseTo(5, 9);
    expect(p.stopped).toBe(true);
    expect(p.stopReason).toBe('max-aspect-ratio');
    expect(p.timeToTargetMin).toBeNull();
    expect(p.reachesTarget).toBe(false);
  });
  it('stops where the rate falls below the threshold fraction', () => {
    const m = testModel({ reactionProbability: 1, etch: { timeMin: 1000, targetDepthUm: 15, toleranceUm: 1, maxAspectRatio: 500, stopRateFraction: 0.1 } });
    const p = predictFeature(m, { widthUm: 1, kind: 'hole' });
    expect(p.stopReason).toBe('rate-threshold');
    expect(p.rateAtDepthUmPerMin / 2).toBeCloseTo(0.1, 6);
  });
  it('stop layer: wide features over-etch (t_over × R/selectivity) while narrow ones lag', () => {
    // Exact for constant rate (S → 0): reaches 10 µm at 5 min, then 5 min × 2 µm/min / 50 = 0.2 µm.
    const m = testModel({
      reactionProbability: 1e-9,
      etch: { timeMin: 10, targetDepthUm: 10, toleranceUm: 0.5, maxAspectRatio: 50 },
      stopLayer: { depthUm: 10, selectivity: 50, thicknessUm: 0.1 },
    });
    const p = predictFeature(m, { widthUm: 20, kind: 'trench' });
    expect(p.depthUm).toBeCloseTo(10, 9);
    expect(p.reachedStopLayer).toBe(true);
    // S = 1e-9 leaves a ~1e-10 relative lag, hence 7 digits.
    expect(p.timeToStopLayerMin).toBeCloseTo(5, 7);
    expect(p.overEtchTimeMin).toBeCloseTo(5, 7);
    expect(p.overEtchUm).toBeCloseTo(0.2, 7);
    expect(p.warnings.join(' ')).toMatch(/breaks through/);
    const lagging = predictFeature(testModel({ ...m, reactionProbability: 0.5 }), { widthUm: 0.5, kind: 'hole' });
    expect(lagging.reachedStopLayer).toBe(false);
    expect(lagging.overEtchUm).toBe(0);
  });
  it('mask erosion: remaining = thickness − loaded open rate × time / selectivity', () => {
    const m = testModel({ mask: { thicknessUm: 1, selectivity: 40 }, loading: { coefficient: 1, lengthUm: 500 } });
    const p = predictFeature(m, { widthUm: 5, kind: 'trench', effectiveDensity: 0.25 });
    expect(p.maskRemainingUm).toBeCloseTo(1 - (2 * 0.8 * 10) / 40, 12);
    const thin = predictFeature(testModel({ ...m, mask: { thicknessUm: 0.1, selectivity: 40 } }), { widthUm: 5, kind: 'trench', effectiveDensity: 0.25 });
    expect(thin.maskRemainingUm).toBe(0);
    expect(thin.warnings.join(' ')).toMatch(/mask consumed/);
  });
  it('warns outside the calibrated ranges and without calibration', () => {
    const cal = { date: '2026-11-30', widthUm: [1, 10] as [number, number], aspectRatio: [0.5, 8] as [number, number], density: [0.1, 0.5] as [number, number], kinds: ['trench' as const] };
    const m = testModel({ calibration: cal });
    const inside = predictFeature(m, { widthUm: 5, kind: 'trench', effectiveDensity: 0.2 });
    expect(inside.warnings.filter((w) => /calibrat/.test(w))).toEqual([]);
    const outside = predictFeature(m, { widthUm: 0.5, kind: 'hole', effectiveDensity: 0.9 });
    const text = outside.warnings.join(' | ');
    expect(text).toMatch(/width 0.5 µm is outside the calibrated range/);
    expect(text).toMatch(/aspect ratio .* outside/);
    expect(text).toMatch(/density 0.9 is outside/);
    expect(text).toMatch(/not holes/);
    expect(predictFeature(testModel(), { widthUm: 5, kind: 'trench' }).warnings.join(' ')).toMatch(/no calibration record/);
  });
  it('rejects a bad width, kind or density with a clear error', () => {
    const m = testModel();
    expect(() => predictFeature(m, { widthUm: 0, kind: 'trench' })).toThrow(/width must be a number > 0/);
    expect(() => predictFeature(m, { widthUm: 1, kind: 'slot' as 'trench' })).toThrow(/kind/);
    expect(() => predictFeature(m, { widthUm: 1, kind: 'trench', effectiveDensity: 1.5 })).toThrow(/density/);
  });
  it('ion-enhanced model lags more than the neutral-only one when ions are shadowed', () => {
    // Direct ion flux falls with AR (domain.md 3.5), so adding an ion-limited term can only lower the rate at depth.
    const neutral = testModel({ reactionProbability: 0.05 });
    const ion = testModel({ reactionProbability: 0.05, ion: { angularSigmaDeg: 4, neutralToIonSupplyRatio: 1 } });
    const a = predictFeature(neutral, { widthUm: 1, kind: 'trench' });
    const b = predictFeature(ion, { widthUm: 1, kind: 'trench' });
    expect(b.depthUm).toBeLessThan(a.depthUm);
    expect(ardeFactor(ion, 'trench', 0)).toBeCloseTo(1, 9);
  });
  it("tabulated bottom-mean ion evaluators match direct quadrature within 1e-3", () => {
    // Internal check of the tabulation (the quadrature itself is checked against handbook view factors in flux.test.ts).
    const m = testModel({ reactionProbability: 0.1, ion: { angularSigmaDeg: 3, neutralToIonSupplyRatio: 0.5, fluxSite: 'bottom-mean' } });
    const ev = createArdeEvaluators(m, 50);
    for (const kind of ['trench', 'hole'] as const) {
      for (const ar of [0.002, 0.05, 0.7, 3, 11, 27, 49]) expect(rel(ev[kind](ar), ardeFactor(m, kind, ar))).toBeLessThan(1e-3);
    }
  });
});
