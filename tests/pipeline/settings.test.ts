import { describe, expect, it } from 'vitest';
import {
  analysisSettingsSchema,
  choosePixelUm,
  DEFAULT_DENSITY_WINDOWS,
  lengthGcdUm,
  niceCeil,
  parseAnalysisSettings,
  resolveKernel,
  resolveLimits,
} from '@/lib/pipeline/settings';
import { testModel } from './fixtures';

const minimal = { etchLayers: [{ layer: 5, datatype: 0 }] };

describe('parseAnalysisSettings', () => {
  it('parseAnalysisSettings(minimal) fills every default', () => {
    const r = parseAnalysisSettings(minimal);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.settings.polarity).toBe('clear');
    expect(r.settings.densityWindows).toEqual(DEFAULT_DENSITY_WINDOWS);
    expect(r.settings.windowEdge).toBe('clipped');
    expect(r.settings.pixel).toEqual({ sizeUm: 'auto', maxPixels: 4_000_000 });
    expect(r.settings.kernel).toEqual({ kind: null, lengthUm: null, outside: 'empty' });
    expect(r.settings.limits.minDensity).toBeNull();
    expect(r.settings.limits.targetDepthUm).toBeNull();
    expect(r.settings.severities).toEqual({});
  });

  it('parseAnalysisSettings(stored JSON) reproduces the same settings (store-able as JSON)', () => {
    const first = parseAnalysisSettings({ ...minimal, densityWindows: [{ windowUm: 50, stepUm: 25 }], limits: { maxDensity: 0.3 } });
    if (!first.ok) throw new Error('unexpected');
    const again = parseAnalysisSettings(JSON.parse(JSON.stringify(first.settings)));
    expect(again).toEqual(first);
  });

  it('parseAnalysisSettings reports every bad field with its dotted path', () => {
    const r = parseAnalysisSettings({
      etchLayers: [],
      densityWindows: [{ windowUm: 100, stepUm: 150 }, { windowUm: -5, stepUm: 1 }],
      pixel: { sizeUm: 0 },
      limits: { minDensity: 0.6, maxDensity: 0.4, maxGradient: 2 },
      severities: { 'under-target-depth': 'fatal' },
    });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    const paths = r.issues.map((i) => i.path);
    expect(paths).toContain('etchLayers');
    expect(paths).toContain('densityWindows.0.stepUm');
    expect(paths).toContain('densityWindows.1.windowUm');
    expect(paths).toContain('pixel.sizeUm');
    expect(paths).toContain('limits.maxGradient');
    expect(paths).toContain('severities.under-target-depth');
    expect(r.issues.find((i) => i.path === 'densityWindows.0.stepUm')?.message).toMatch(/must not exceed windowUm/);
  });

  it('parseAnalysisSettings refuses minDensity > maxDensity once the fields themselves are valid', () => {
    const r = parseAnalysisSettings({ ...minimal, limits: { minDensity: 0.6, maxDensity: 0.4 } });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues).toEqual([{ path: 'limits.minDensity', message: 'minDensity must not exceed maxDensity' }]);
  });

  it('parseAnalysisSettings refuses unknown top-level fields (typos do not silently vanish)', () => {
    const r = parseAnalysisSettings({ ...minimal, windowsUm: [100] });
    expect(r.ok).toBe(false);
  });

  it('analysisSettingsSchema rejects a layer number outside GDSII range', () => {
    expect(analysisSettingsSchema.safeParse({ etchLayers: [{ layer: 70000, datatype: 0 }] }).success).toBe(false);
  });
});

describe('resolveLimits / resolveKernel', () => {
  it('resolveLimits takes target, tolerance and max AR from the model unless set', () => {
    const model = testModel();
    const s = analysisSettingsSchema.parse({ ...minimal, limits: { toleranceUm: 5 } });
    expect(resolveLimits(s, model)).toEqual({
      minDensity: null, maxDensity: null, maxGradient: null,
      maxAspectRatio: 40, targetDepthUm: 50, toleranceUm: 5,
      stopOverEtchBudgetUm: null, minWidthUm: null,
    });
  });

  it('resolveKernel uses the model kernel shape and length when the settings leave them null', () => {
    const model = testModel({ loading: { coefficient: 0.3, lengthUm: 800, kernel: 'exponential' } });
    const s = analysisSettingsSchema.parse(minimal);
    expect(resolveKernel(s, model)).toEqual({ kind: 'exponential', lengthUm: 800, outside: 'empty', fromModel: true });
    const s2 = analysisSettingsSchema.parse({ ...minimal, kernel: { lengthUm: 100 } });
    expect(resolveKernel(s2, model)).toMatchObject({ kind: 'exponential', lengthUm: 100, fromModel: false });
  });
});

describe('pixel size', () => {
  it('niceCeil(x) rounds up to the 1-2-2.5-5 series', () => {
    expect([0.7, 1, 1.01, 2.2, 3, 7, 12].map(niceCeil)).toEqual([1, 1, 2, 2.5, 5, 10, 20]);
  });

  it('lengthGcdUm([100, 50, 700, 70]) is 10', () => {
    expect(lengthGcdUm([100, 50, 700, 70])).toBe(10);
    expect(lengthGcdUm([0.5, 0.75])).toBe(0.25);
  });

  it('choosePixelUm aligns the pixel with every window and step when the budget allows', () => {
    const windows = [{ windowUm: 100, stepUm: 50 }, { windowUm: 700, stepUm: 70 }];
    // target = max(√(2e6/4e6), 100/50) = 2 µm, a divisor of gcd 10 µm
    expect(choosePixelUm(2_000, 1_000, windows, 4_000_000)).toBe(2);
    // 20 mm die: budget needs ≥ 10 µm; 10 divides every window and step
    const p = choosePixelUm(20_000, 20_000, windows, 4_000_000);
    expect(p).toBe(10);
    for (const w of windows) {
      expect(Number.isInteger(w.windowUm / p)).toBe(true);
      expect(Number.isInteger(w.stepUm / p)).toBe(true);
    }
  });

  it('choosePixelUm keeps nx·ny within the budget when alignment is impossible', () => {
    const p = choosePixelUm(30_000, 30_000, [{ windowUm: 100, stepUm: 50 }], 1_000_000);
    expect(Math.ceil(30_000 / p) ** 2).toBeLessThanOrEqual(1_000_000);
    expect(p).toBe(50); // √(9e8/1e6) = 30 µm target ≤ gcd 50 → 50/1
  });
});
