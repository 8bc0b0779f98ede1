import { describe, expect, it } from 'vitest';
import { createDepthUncertainty, DEPTH_BAND_K } from '@/lib/etch';
import { featureFlags, type FeatureCheckInput } from '@/lib/pipeline/flags';
import { notesOf } from '@/lib/pipeline/predict-features';
import { runAnalysis } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema, type ResolvedLimits } from '@/lib/pipeline/settings';
import { testModel, trenchLayout } from '../pipeline/fixtures';

const limits: ResolvedLimits = { minDensity: null, maxDensity: null, maxGradient: null, maxAspectRatio: 40, targetDepthUm: 50, toleranceUm: 2, stopOverEtchBudgetUm: null, minWidthUm: null };
const base: FeatureCheckInput = { featureId: 3, shape: 'trench', modelKind: 'trench', bboxUm: [0, 0, 5, 100], centroidUm: [2.5, 50], widthUm: 5, depthUm: 47, overEtchUm: 0, excursions: [] };

describe('uncertain flags — the limit inside the prediction band', () => {
  it('47 µm ± 1.96·1 µm reaches the 48 µm limit: flagged and marked uncertain, with the ± in the message', () => {
    const [f] = featureFlags({ ...base, depthSigmaUm: 1 }, limits);
    expect(f?.kind).toBe('under-target-depth');
    expect(f?.uncertain).toBe(true);
    expect(f?.message).toMatch(/47 µm \(± 1\.96 µm, 95 % band from the calibration\)/);
    expect(f?.message).toMatch(/Uncertain:/);
  });
  it('47 µm ± 1.96·0.5 µm stays below 48 µm: a firm flag', () => {
    const [f] = featureFlags({ ...base, depthSigmaUm: 0.5 }, limits);
    expect(f?.uncertain).toBeUndefined();
    expect(f?.message).not.toMatch(/Uncertain/);
  });
  it('no calibration: no band, no mark', () => {
    const [f] = featureFlags(base, limits);
    expect(f?.uncertain).toBeUndefined();
    expect(f?.message).not.toMatch(/±/);
  });
});

describe('per-opening notes without per-opening numbers (issue 14: one note, not one per depth)', () => {
  it('reduces depth-specific notes to one note each and drops calibrated-range notes', () => {
    const cache = new Map<string, string>();
    const a = notesOf(["etch stops at the model's maximum aspect ratio 40 (depth 80 µm)", 'width 0.5 µm is outside the calibrated range 1–20 µm (extrapolation)'], cache);
    const b = notesOf(["etch stops at the model's maximum aspect ratio 40 (depth 120 µm)", 'depth exceeds target + tolerance by 3.2 µm (timed etch, no stop layer)'], cache);
    expect(a).toEqual(["etch stops at the model's maximum aspect ratio 40 before the end of the etch"]);
    expect(b).toEqual(["etch stops at the model's maximum aspect ratio 40 before the end of the etch", 'predicted depth exceeds target + tolerance (timed etch, no stop layer)']);
    expect(a[0]).toBe(b[0]); // one shared string
  });
});

describe('runAnalysis with a calibrated model', () => {
  const covariance = { parameters: ['openRateUmPerMin', 'reactionProbability'] as const, matrix: [[0.01, -0.0002], [-0.0002, 0.0001]] };
  const model = testModel({ calibration: { date: '2026-12-02', widthUm: [1, 30], aspectRatio: [0, 40], density: [0, 1], covariance: { ...covariance, parameters: [...covariance.parameters] } } });
  const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }], limits: { targetDepthUm: 44, toleranceUm: 2 } });
  it('gives every opening its σ (= the direct propagation at its width and density) and a depth-uncertainty map', () => {
    const r = runAnalysis(trenchLayout(), settings, model);
    const u = createDepthUncertainty({ ...model, etch: { ...model.etch, targetDepthUm: 44, toleranceUm: 2 } });
    expect(r.features.length).toBe(3);
    for (const f of r.features) {
      expect(f.depthSigmaUm).toBeGreaterThan(0);
      const direct = u?.sigmaUm({ widthUm: f.widthUm, kind: 'trench', effectiveDensity: f.effectiveDensity, exposedFraction: r.summary.globalDensity }) ?? NaN;
      expect(f.depthSigmaUm).toBeCloseTo(direct, 9);
    }
    const map = r.maps.find((m) => m.kind === 'depth-uncertainty');
    expect(map?.unit).toBe('um');
    const painted = [...(map?.values ?? [])].filter((v) => !Number.isNaN(v));
    expect(painted.length).toBeGreaterThan(0);
    expect(Math.max(...painted)).toBeCloseTo(Math.max(...r.features.map((f) => f.depthSigmaUm ?? 0)), 5);
    expect(DEPTH_BAND_K).toBe(1.96);
  });
  it('an uncalibrated model gives no σ and no uncertainty map', () => {
    const r = runAnalysis(trenchLayout(), settings, testModel());
    expect(r.features.every((f) => f.depthSigmaUm === null)).toBe(true);
    expect(r.maps.some((m) => m.kind === 'depth-uncertainty')).toBe(false);
  });
});

describe('summary notes (issue 14: "the same depth note repeated")', () => {
  it('three openings stopping at the maximum aspect ratio at three depths give one note with count 3', () => {
    // Trenches 2, 5 and 20 µm wide, max AR 3: all stop (at 6, 15 and 60 µm) before the 60 min recipe ends.
    const m = testModel({ etch: { timeMin: 60, targetDepthUm: 50, toleranceUm: 2, maxAspectRatio: 3 } });
    const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }] });
    const r = runAnalysis(trenchLayout(), settings, m);
    const depths = r.features.map((f) => f.depthUm).sort((a, b) => a - b);
    expect(depths[0]).toBeLessThan(depths[2]!);
    const stops = r.summary.extrapolation.filter((e) => e.message.startsWith('etch stops'));
    expect(stops).toEqual([{ message: "etch stops at the model's maximum aspect ratio 3 before the end of the etch", count: 3 }]);
  });
});
