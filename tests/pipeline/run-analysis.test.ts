/**
 * runAnalysis on a small layout built in code: a 1 mm die with three 400 µm trenches 2, 5 and 20 µm wide, under an
 * invented test model (tests/pipeline/fixtures.ts). Checks are (a) hand computations from the drawn rectangles,
 * (b) the published qualitative fact that wider openings etch faster and reach the target first (aspect-ratio
 * dependent etching; Kiihamäki & Franssila, JVST A 17, 2280, 1999; domain notes §1), and (c) consistency with the
 * geometry and etch modules called directly.
 */
import { describe, expect, it } from 'vitest';
import { predictFeature } from '@/lib/etch';
import { AnalysisAbortedError, AnalysisInputError } from '@/lib/pipeline/errors';
import { mergePolygonSets } from '@/lib/pipeline/etch-layers';
import { sampleGrid } from '@/lib/pipeline/predict-features';
import { ANALYSIS_STAGES, runAnalysis, type AnalysisStage } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema, type AnalysisSettingsInput } from '@/lib/pipeline/settings';
import { rectSet, testModel, trenchLayout } from './fixtures';

const settingsOf = (extra: Partial<AnalysisSettingsInput> = {}) =>
  analysisSettingsSchema.parse({ etchLayers: [{ layer: 5, datatype: 0 }], ...extra });
// Target 44 ± 2 µm: under this model the 2 µm trench falls short, the 5 and 20 µm ones do not (see first test).
const base = settingsOf({ limits: { targetDepthUm: 44, toleranceUm: 2 } });
const model = testModel();

describe('runAnalysis on three trenches', () => {
  const r = runAnalysis(trenchLayout(), base, model);
  const [narrow, middle, wide] = r.features;

  it('finds three trenches with their exact drawn widths (hand: 2, 5, 20 µm)', () => {
    expect(r.features.map((f) => [f.shape, f.modelKind, f.widthUm])).toEqual([
      ['trench', 'trench', 2],
      ['trench', 'trench', 5],
      ['trench', 'trench', 20],
    ]);
  });

  it('wider trenches etch deeper and reach the target first (ARDE, Kiihamäki & Franssila 1999)', () => {
    expect(narrow!.depthUm).toBeLessThan(middle!.depthUm);
    expect(middle!.depthUm).toBeLessThan(wide!.depthUm);
    expect(wide!.timeToTargetMin!).toBeLessThan(middle!.timeToTargetMin!);
    expect(middle!.timeToTargetMin!).toBeLessThan(narrow!.timeToTargetMin!);
    expect([narrow!.reachesTarget, middle!.reachesTarget, wide!.reachesTarget]).toEqual([false, true, true]);
  });

  it('only the 2 µm trench gets an under-target flag, an error at its centroid', () => {
    const under = r.flags.filter((f) => f.kind === 'under-target-depth');
    expect(under).toHaveLength(1);
    expect(under[0]).toMatchObject({ featureId: narrow!.id, severity: 'error', limit: 42, xUm: 201, yUm: 500 });
    expect(r.summary.flags.counts['under-target-depth'].error).toBe(1);
    expect(r.summary.flags.bySeverity.error).toBe(r.flags.filter((f) => f.severity === 'error').length);
  });

  it('margins use the analysis target (44 µm), not the model default (50 µm)', () => {
    for (const f of r.features) expect(f.marginUm).toBeCloseTo(f.depthUm - 44, 9);
  });

  it('each prediction equals predictFeature called directly with the same inputs', () => {
    const m = { ...model, etch: { ...model.etch, targetDepthUm: 44, toleranceUm: 2 } };
    for (const f of r.features) {
      const direct = predictFeature(m, { widthUm: f.widthUm, kind: 'trench', effectiveDensity: f.effectiveDensity, exposedFraction: r.summary.globalDensity });
      // reference: predictFeature (adaptive quadrature); the pipeline's tabulated predictor agrees to ~1e-8 relative
      expect(Math.abs(f.depthUm - direct.depthUm)).toBeLessThanOrEqual(1e-6 * Math.max(1, direct.depthUm));
    }
  });

  it('global density is the drawn area over the die (hand: 27 µm × 400 µm / 1 mm² = 0.0108)', () => {
    expect(r.summary.globalDensity).toBeCloseTo(0.0108, 12);
    expect(r.summary.layout.dieAreaUm2).toBe(1e6);
  });

  it('100/50 µm windows: max 0.2 where a window holds the 20 µm trench over its full height (hand: 20·100/100²)', () => {
    const w = r.summary.windows[0]!;
    expect([w.windowUm, w.stepUm, w.edge]).toEqual([100, 50, 'clipped']);
    expect(w.max).toBeCloseTo(0.2, 12);
    expect(w.min).toBe(0);
    expect(w.maxAtUm[0]).toBeGreaterThanOrEqual(550);
    expect(w.maxAtUm[0]).toBeLessThanOrEqual(600);
    expect(w.method.origin).toMatch(/lower-left corner of the die extent/);
  });

  it('reports the pixel, model and method it used', () => {
    expect(r.summary.grid).toEqual({ x0Um: 0, y0Um: 0, pixelUm: 2, nx: 500, ny: 500 });
    expect(r.summary.model).toEqual({ name: 'pipeline test model', version: 't1', calibrationDate: null });
    expect(r.summary.method.map((l) => l.label)).toContain('Windows 700/70 µm');
    expect(r.summary.extrapolation[0]).toEqual({ message: 'model has no calibration record: predictions are uncalibrated estimates', count: 3 });
    expect(r.summary.caution).toMatch(/validate against your fab/);
    expect(r.summary.depth!.spreadUm).toBeCloseTo(wide!.depthUm - narrow!.depthUm, 12);
  });

  it('produces every map on the die grid, with per-opening values at the openings and NaN elsewhere', () => {
    expect(r.maps.map((m) => m.kind)).toEqual(['coverage', 'window-density', 'window-density', 'effective-density', 'local-width', 'aspect-ratio', 'predicted-depth', 'risk']);
    const depth = r.maps.find((m) => m.kind === 'predicted-depth')!;
    const risk = r.maps.find((m) => m.kind === 'risk')!;
    const eff = r.maps.find((m) => m.kind === 'effective-density')!;
    const width = r.maps.find((m) => m.kind === 'local-width')!;
    expect(depth.grid).toEqual(r.summary.grid);
    expect(sampleGrid(depth.values, depth.grid, 610, 500)).toBe(Math.fround(wide!.depthUm));
    expect(Number.isNaN(sampleGrid(depth.values, depth.grid, 100, 100))).toBe(true);
    expect(sampleGrid(risk.values, risk.grid, 201, 500)).toBeGreaterThan(1);
    expect(sampleGrid(risk.values, risk.grid, 610, 500)).toBeLessThan(1);
    // the local-width map is documented as ±1 pixel (lib/geometry/local-width.ts); pixel = 2 µm here
    expect(Math.abs(sampleGrid(width.values, width.grid, 610, 500) - 20)).toBeLessThanOrEqual(2);
    expect(Math.round(sampleGrid(eff.values, eff.grid, 610, 500) * 1e4) / 1e4).toBe(wide!.effectiveDensity);
    const wd = r.maps[1]!;
    expect(wd.grid.pixelUm).toBe(50);
    expect(wd.grid.x0Um).toBe(25); // first window centre (50 µm) minus half a step
  });
});

describe('runAnalysis kinds', () => {
  it('a square opening is predicted as a hole and etches less deep than a trench of the same width (Kiihamäki & Franssila 1999); an open field is a wide trench', () => {
    const layout = trenchLayout([
      [100, 100, 105, 105], // 5 µm square hole
      [300, 100, 305, 600], // 5 µm trench
      [600, 600, 900, 900], // 300 µm open field
    ]);
    const r = runAnalysis(layout, base, model);
    const byShape = Object.fromEntries(r.features.map((f) => [f.shape, f]));
    expect(byShape['square-hole']?.modelKind).toBe('hole');
    expect(byShape['trench']?.modelKind).toBe('trench');
    expect(byShape['open-field']).toMatchObject({ modelKind: 'trench', widthUm: 300 });
    expect(byShape['square-hole']!.widthUm).toBe(5);
    expect(byShape['square-hole']!.depthUm).toBeLessThan(byShape['trench']!.depthUm);
  });
});

describe('runAnalysis flags from settings', () => {
  it('max window density 0.15: one grouped flag over the 14 windows holding the 20 µm trench in full height (hand)', () => {
    const r = runAnalysis(trenchLayout(), settingsOf({ densityWindows: [{ windowUm: 100, stepUm: 50 }], limits: { targetDepthUm: 44, toleranceUm: 2, maxDensity: 0.15 } }), model);
    const dens = r.flags.filter((f) => f.kind === 'window-density-above-max');
    expect(dens).toHaveLength(1);
    expect(dens[0]!.bboxUm).toEqual([550, 300, 700, 700]);
    expect(dens[0]!.measured).toBeCloseTo(20, 12); // percent
    expect(dens[0]!.message).toMatch(/^14 neighbouring windows/);
  });

  it('a 10 µm width rule flags the 2 and 5 µm trenches', () => {
    const r = runAnalysis(trenchLayout(), settingsOf({ limits: { targetDepthUm: 44, toleranceUm: 2, minWidthUm: 10 } }), model);
    expect(r.flags.filter((f) => f.kind === 'width-below-minimum').map((f) => f.measured).sort((a, b) => a - b)).toEqual([2, 5]);
  });

  it('a calibrated range of 4–30 µm flags the 2 µm trench as extrapolated', () => {
    const m = testModel({ calibration: { date: '2026-11-30', widthUm: [4, 30], aspectRatio: [0, 30], density: [0, 1] } });
    const r = runAnalysis(trenchLayout(), base, m);
    const ext = r.flags.filter((f) => f.kind === 'outside-calibrated-range');
    expect(ext.map((f) => [f.featureId, f.severity, f.limit])).toEqual([[1, 'warning', 4]]);
    expect(r.summary.model.calibrationDate).toBe('2026-11-30');
  });

  it('dark polarity: everything in the die but the trenches is open (hand: 1 − 0.0108)', () => {
    const r = runAnalysis(trenchLayout(), settingsOf({ polarity: 'dark', densityWindows: [{ windowUm: 500, stepUm: 250 }] }), model);
    expect(r.summary.globalDensity).toBeCloseTo(1 - 0.0108, 9);
  });
});

describe('runAnalysis with a pixel that does not divide the die', () => {
  it('the grid overhangs the die by part of a pixel, yet densities still divide by the die (hand: 0.0108 and 1 − 0.0108)', () => {
    const clear = runAnalysis(trenchLayout(), settingsOf({ pixel: { sizeUm: 3 }, densityWindows: [{ windowUm: 300, stepUm: 300 }] }), model);
    expect(clear.summary.grid.nx).toBe(334); // 1000 / 3 → 333.3
    expect(clear.summary.globalDensity).toBeCloseTo(0.0108, 7); // float32 coverage
    const dark = runAnalysis(trenchLayout(), settingsOf({ polarity: 'dark', pixel: { sizeUm: 3 }, densityWindows: [{ windowUm: 300, stepUm: 300 }] }), model);
    expect(dark.summary.globalDensity).toBeCloseTo(1 - 0.0108, 6);
    // a clipped window over the right edge [900, 1000] × [0, 300] holds nothing drawn: fully open in dark tone
    const w = dark.summary.windows[0]!;
    expect(w.max).toBeCloseTo(1, 6);
    expect(w.min).toBeGreaterThan(0.9);
  });
});

describe('runAnalysis progress and abort', () => {
  it('reports every stage once in the fixed order, fractions non-decreasing from 0 to 1', () => {
    const seen: [AnalysisStage, number][] = [];
    runAnalysis(trenchLayout(), base, model, { onProgress: (s, f) => seen.push([s, f]) });
    const order = seen.map(([s]) => s).filter((s, k, all) => all[k - 1] !== s);
    expect(order).toEqual([...ANALYSIS_STAGES.map((s) => s.stage), 'done']);
    for (let k = 1; k < seen.length; k++) expect(seen[k]![1]).toBeGreaterThanOrEqual(seen[k - 1]![1]);
    expect(seen[0]![1]).toBe(0);
    expect(seen.at(-1)).toEqual(['done', 1]);
  });

  it('an already-aborted signal stops before any work', () => {
    const c = new AbortController();
    c.abort();
    const stages: string[] = [];
    expect(() => runAnalysis(trenchLayout(), base, model, { signal: c.signal, onProgress: (s) => stages.push(s) })).toThrow(AnalysisAbortedError);
    expect(stages).toEqual([]);
  });

  it('aborting during a stage stops at the next check point with an AbortError', () => {
    const c = new AbortController();
    const stages: string[] = [];
    let caught: unknown;
    try {
      runAnalysis(trenchLayout(), base, model, {
        signal: c.signal,
        onProgress: (s) => {
          stages.push(s);
          if (s === 'features') c.abort();
        },
      });
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(AnalysisAbortedError);
    expect((caught as Error).name).toBe('AbortError');
    expect((caught as AnalysisAbortedError).stage).toBe('local-width');
    expect(stages).not.toContain('prediction');
  });
});

describe('runAnalysis bad input', () => {
  it('an unknown layer names it and lists the layers present', () => {
    const s = analysisSettingsSchema.parse({ etchLayers: [{ layer: 9, datatype: 1 }] });
    expect(() => runAnalysis(trenchLayout(), s, model)).toThrow(new AnalysisInputError('unknown-layer', 'layer 9/1 is not in the layout; layers present: 0/0, 5/0'));
  });

  it('a pixel size over the budget is refused with the size that would fit', () => {
    const s = settingsOf({ pixel: { sizeUm: 0.5, maxPixels: 10_000 } });
    expect(() => runAnalysis(trenchLayout(), s, model)).toThrow(/2000×2000 = 4000000 pixels .* use ≥ 10 µm/);
  });

  it('an empty layout is refused', () => {
    const layout = { ...trenchLayout(), layers: [rectSet(5, 0, [])], bboxDbu: null };
    expect(() => runAnalysis(layout, base, model)).toThrow(/the layout has no shapes/);
  });
});

describe('mergePolygonSets', () => {
  it('concatenates rings with shifted offsets', () => {
    const m = mergePolygonSets([rectSet(5, 0, [[0, 0, 1, 1]]), rectSet(6, 0, [[2, 2, 3, 3], [4, 4, 5, 5]])]);
    expect(m.count).toBe(3);
    expect(Array.from(m.offsets)).toEqual([0, 4, 8, 12]);
    expect(m.coords[8]).toBe(2000);
  });
});
