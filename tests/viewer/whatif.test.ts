// Consistency of the what-if path with the pipeline's reference predictor (predictFeature) — the same physics
// through columns; plus the direction checks any etch model must satisfy (common practice, no source): a longer
// etch never gives a shallower opening, and a wider opening at equal density etches at least as deep (RIE lag).
import { describe, expect, it } from 'vitest';
import { predictFeature } from '@/lib/etch/predict';
import { decodeFeatures, encodeFeatures } from '@/lib/viewer/feature-wire';
import { ownerMap, paramsOf, predictUnique, PredictorCache, runWhatIf, splitPoint, spread, uniqueInputs, whatIfModel } from '@/lib/viewer/whatif';
import { testModel } from '../etch/helpers';

const model = testModel({ loading: { coefficient: 0.5, lengthUm: 500 } });
const limits = { minDensity: null, maxDensity: null, maxGradient: null, maxAspectRatio: 50, targetDepthUm: 15, toleranceUm: 1, stopOverEtchBudgetUm: null, minWidthUm: null };

function features(n: number) {
  const cols = {
    count: n,
    featureId: Array.from({ length: n }, (_, i) => i),
    modelKind: Array.from({ length: n }, (_, i) => i % 2),
    reachesTarget: new Array(n).fill(0),
    xUm: Array.from({ length: n }, (_, i) => i * 10 + 1),
    yUm: new Array(n).fill(1),
    x0Um: Array.from({ length: n }, (_, i) => i * 10),
    y0Um: new Array(n).fill(0),
    x1Um: Array.from({ length: n }, (_, i) => i * 10 + 2),
    y1Um: new Array(n).fill(2),
    areaUm2: new Array(n).fill(4),
    widthUm: Array.from({ length: n }, (_, i) => 0.3 + (i % 37) * 0.2),
    effectiveDensity: Array.from({ length: n }, (_, i) => ((i * 7) % 90) / 100),
    depthUm: new Array(n).fill(0),
    aspectRatio: new Array(n).fill(0),
    marginUm: new Array(n).fill(0),
    overEtchUm: new Array(n).fill(0),
  };
  return decodeFeatures(encodeFeatures(cols));
}

describe('what-if recomputation', () => {
  const f = features(200);
  const ctx = { model, limits, severities: {}, exposedFraction: 0.2, features: f };

  it('at the stored parameters equals the reference predictor for every opening', () => {
    const r = runWhatIf(ctx, paramsOf(model));
    const m = whatIfModel(ctx, paramsOf(model));
    for (let k = 0; k < f.count; k += 13) {
      const ref = predictFeature(m, { widthUm: f.widthUm[k]!, kind: f.modelKind[k] ? 'hole' : 'trench', effectiveDensity: f.effectiveDensity[k]!, exposedFraction: 0.2 });
      expect(r.depthUm[k]).toBeCloseTo(ref.depthUm, 6);
      expect(r.marginUm[k]).toBeCloseTo(ref.marginUm, 6);
    }
  });

  it('longer etch → no opening shallower; under-target flags follow the depths', () => {
    const cache = new PredictorCache();
    const a = runWhatIf(ctx, paramsOf(model), cache);
    const b = runWhatIf(ctx, { ...paramsOf(model), timeMin: model.etch.timeMin * 2 }, cache);
    for (let k = 0; k < f.count; k++) expect(b.depthUm[k]!).toBeGreaterThanOrEqual(a.depthUm[k]! - 1e-9);
    const under = (r: typeof a) => r.flags.filter((x) => x.kind === 'under-target-depth').length;
    expect(under(a)).toBe(Array.from(a.depthUm).filter((d) => d < 15 - 1).length);
    expect(under(b)).toBeLessThanOrEqual(under(a));
  });

  it('split over two threads (tail of the distinct inputs predicted elsewhere) gives the same result', () => {
    const p = { ...paramsOf(model), timeMin: paramsOf(model).timeMin * 1.3 };
    const one = runWhatIf(ctx, p, new PredictorCache());
    const m = uniqueInputs(f).kind.length;
    const q0 = splitPoint(f, 10) ?? 0;
    expect(q0).toBe(Math.floor(m / 2));
    const two = runWhatIf(ctx, p, new PredictorCache(), 5000, predictUnique(ctx, p, new PredictorCache(), q0, m));
    expect([...two.depthUm]).toEqual([...one.depthUm]);
    expect([...two.risk]).toEqual([...one.risk]);
    expect(two.flags.map((x) => x.id)).toEqual(one.flags.map((x) => x.id));
    // A tail that does not end at the last distinct input is ignored (predicted here instead).
    const bad = runWhatIf(ctx, p, new PredictorCache(), 5000, predictUnique(ctx, p, new PredictorCache(), q0, m - 1));
    expect([...bad.depthUm]).toEqual([...one.depthUm]);
  });
  it('counts the flagged openings left out when the flag cap is reached', () => {
    const p = { ...paramsOf(model), timeMin: paramsOf(model).timeMin * 0.5 };
    const full = runWhatIf(ctx, p, new PredictorCache());
    const atRisk = [...full.risk].filter((r) => r >= 1).length;
    expect(atRisk).toBeGreaterThan(2);
    expect(full.flagsLeftOut).toBe(0);
    const capped = runWhatIf(ctx, p, new PredictorCache(), 1);
    expect(capped.flagsLeftOut).toBeGreaterThan(0);
    expect(capped.flagsLeftOut).toBeLessThan(atRisk);
  });
  it('spreads per-opening values onto the grid through the pipeline painter', () => {
    const grid = { x0Um: 0, y0Um: 0, pixelUm: 1, nx: 40, ny: 3 };
    const coverage = new Float32Array(120).fill(1);
    const owner = ownerMap(f, coverage, grid);
    expect(owner[0]).toBe(0); // pixel (0,0) belongs to opening 0 (bbox 0..2)
    expect(owner[10]).toBe(1);
    expect(owner[5]).toBe(-1);
    const s = spread(owner, Float64Array.from({ length: f.count }, (_, k) => k * 2));
    expect(s[11]).toBe(2);
    expect(Number.isNaN(s[5])).toBe(true);
  });
});
