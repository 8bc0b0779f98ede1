import { describe, expect, it } from 'vitest';
import { createArdeEvaluators, createFeaturePredictor, predictFeature, type FeatureInput, type FeaturePrediction, type ProcessModel, type ProcessModelInput } from '@/lib/etch';
import { testModel } from './helpers';

/** Park–Miller style LCG (fixed seed) so the random inputs are the same on every run. */
function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

/** Invented model variants covering the branches: ion terms, stop layer, mask, loading forms, rate threshold, cyclic. */
const variants: [string, Partial<ProcessModelInput>][] = [
  ['neutral only, no loading', {}],
  ['local + global loading, rate threshold', { loading: { coefficient: 0.6, lengthUm: 500, globalCoefficient: 0.5 }, etch: { timeMin: 12, targetDepthUm: 20, toleranceUm: 1, maxAspectRatio: 40, stopRateFraction: 0.05 } }],
  ['ion centre, stop layer, mask', {
    reactionProbability: 0.6,
    loading: { coefficient: 0.3, lengthUm: 500 },
    ion: { angularSigmaDeg: 4, neutralToIonSupplyRatio: 2 },
    stopLayer: { depthUm: 18, selectivity: 30, thicknessUm: 0.2 },
    mask: { thicknessUm: 1.5, selectivity: 60 },
    etch: { timeMin: 15, targetDepthUm: 16, toleranceUm: 1, maxAspectRatio: 60, stopRateFraction: 0.01 },
  }],
  ['ion bottom-mean, linear loading, calibration', {
    loading: { coefficient: 0.5, lengthUm: 500, globalCoefficient: 0.3, form: 'linear' },
    ion: { angularSigmaDeg: 2, neutralToIonSupplyRatio: 0.5, fluxSite: 'bottom-mean' },
    etch: { timeMin: 20, targetDepthUm: 30, toleranceUm: 2, maxAspectRatio: 25, stopRateFraction: 0.02 },
    calibration: { date: '2026-01-15', widthUm: [1, 50], aspectRatio: [0.1, 10], density: [0, 0.6] },
  }],
  ['cyclic, stop layer', {
    mode: 'cyclic',
    cyclic: { etchStepS: 6, passivationStepS: 2, lateralToVerticalRatio: 1 },
    stopLayer: { depthUm: 40, selectivity: 100 },
    etch: { timeMin: 30, targetDepthUm: 35, toleranceUm: 2, maxAspectRatio: 50, stopRateFraction: 0.01 },
  }],
  ['cyclic with ion terms and loading', {
    mode: 'cyclic',
    cyclic: { etchStepS: 4, passivationStepS: 1.5 },
    reactionProbability: 0.5,
    loading: { coefficient: 0.4, lengthUm: 500, globalCoefficient: 0.2 },
    ion: { angularSigmaDeg: 3, neutralToIonSupplyRatio: 1 },
    mask: { thicknessUm: 2, selectivity: 80 },
    etch: { timeMin: 25, targetDepthUm: 25, toleranceUm: 1.5, maxAspectRatio: 30, stopRateFraction: 0.03 },
  }],
];

const close = (a: number | null, b: number | null) =>
  a === null || b === null ? a === b : Math.abs(a - b) <= Math.max(1e-6, 1e-6 * Math.abs(a));

function randomInputs(seed: number, count: number): FeatureInput[] {
  const r = rng(seed);
  const out: FeatureInput[] = [];
  for (let i = 0; i < count; i++) {
    const input: FeatureInput = { widthUm: 0.5 * Math.pow(1000, r()), kind: r() < 0.5 ? 'trench' : 'hole' };
    if (r() < 0.9) input.effectiveDensity = r();
    if (r() < 0.7) input.exposedFraction = r();
    out.push(input);
  }
  return out;
}

function compare(model: ProcessModel, inputs: FeatureInput[]): { mismatches: string[]; ties: number; outcomes: Set<string> } {
  const fast = createFeaturePredictor(model);
  const mismatches: string[] = [];
  let ties = 0;
  const outcomes = new Set<string>();
  const arde = createArdeEvaluators(model, model.etch.maxAspectRatio);
  for (const input of inputs) {
    const ref: FeaturePrediction = predictFeature(model, input, { arde });
    const got = fast(input);
    const where = JSON.stringify(input);
    outcomes.add(`${ref.reachesTarget}/${ref.stopReason ?? (ref.reachedStopLayer ? 'stop-layer' : 'running')}`);
    // Flags may differ only at exact ties: the reference depth within 1e-6 of the target/limit boundary.
    const nearTie =
      Math.abs(ref.depthUm - (model.etch.targetDepthUm - model.etch.toleranceUm)) <= 1e-6 * Math.max(1, ref.depthUm) ||
      (ref.timeToStopLayerMin !== null && Math.abs(ref.timeToStopLayerMin - model.etch.timeMin) <= 1e-6 * model.etch.timeMin);
    const flagsEqual =
      ref.reachesTarget === got.reachesTarget && ref.stopped === got.stopped && ref.stopReason === got.stopReason && ref.reachedStopLayer === got.reachedStopLayer;
    if (!flagsEqual) {
      if (nearTie) ties++;
      else mismatches.push(`${where}: flags differ`);
      continue;
    }
    for (const key of ['depthUm', 'timeToTargetMin', 'overEtchUm', 'overEtchTimeMin', 'timeToStopLayerMin', 'marginUm', 'aspectRatio', 'ardeFactor', 'rateAtDepthUmPerMin', 'maskRemainingUm', 'loadingFactor'] as const) {
      if (!close(ref[key], got[key])) mismatches.push(`${where}: ${key} ${ref[key]} vs ${got[key]}`);
    }
    if (ref.cyclic || got.cyclic) {
      if (ref.cyclic?.cyclesInRecipe !== got.cyclic?.cyclesInRecipe) mismatches.push(`${where}: cyclesInRecipe differ`);
      if (!close(ref.cyclic?.lastCycleDepthUm ?? null, got.cyclic?.lastCycleDepthUm ?? null)) mismatches.push(`${where}: lastCycleDepthUm differ`);
    }
    if (ref.warnings.length !== got.warnings.length) mismatches.push(`${where}: warnings ${ref.warnings.join('; ')} vs ${got.warnings.join('; ')}`);
  }
  return { mismatches, ties, outcomes };
}

describe('createFeaturePredictor against predictFeature', () => {
  variants.forEach(([name, over], n) => {
    it(`${name}: 800 random openings (widths 0.5–500 µm, densities 0–1) agree to 1e-6`, () => {
      const model = testModel(over);
      const inputs = randomInputs(1000 + n, 800);
      const { mismatches, ties, outcomes } = compare(model, inputs);
      // The random inputs reach several outcomes (short of target, on target, stopped, at the stop layer).
      expect(outcomes.size).toBeGreaterThanOrEqual(2);
      // reference: predictFeature (adaptive quadrature); tolerance relative 1e-6 or absolute 1e-6 µm / min
      expect(mismatches.slice(0, 5)).toEqual([]);
      expect(ties).toBeLessThanOrEqual(2);
    }, 60_000);
  });

  it('reports the measured table error, below 1e-8 for these models', () => {
    const cont = createFeaturePredictor(testModel(variants[2]![1]));
    cont({ widthUm: 2, kind: 'trench' });
    cont({ widthUm: 2, kind: 'hole' });
    // reference: predictFeature (adaptive quadrature) — the build compares the table with quadrature at midpoints
    expect(cont.maxRelTauError()).toBeGreaterThan(0);
    expect(cont.maxRelTauError()).toBeLessThan(1e-8);
    const cyc = createFeaturePredictor(testModel(variants[5]![1]));
    cyc({ widthUm: 2, kind: 'trench' });
    expect(cyc.maxRelArdeError()).toBeLessThan(1e-7);
  });

  it('rejects bad input with the same one-line errors as predictFeature', () => {
    const fast = createFeaturePredictor(testModel());
    expect(() => fast({ widthUm: 0, kind: 'trench' })).toThrow(/width must be a number > 0/);
    expect(() => fast({ widthUm: 1, kind: 'trench', effectiveDensity: 1.5 })).toThrow(/effective density must be in \[0, 1\]/);
  });
});
