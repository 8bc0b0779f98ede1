/**
 * Predicted depth of one feature under a process model: combines ARDE (rate.ts), loading (loading.ts), the depth
 * integrator (continuous mode) or the cycle stepper (cyclic mode), the stop layer, mask erosion and the calibrated
 * ranges. All depths µm, times min, rates µm/min.
 */
import { runCycles, scallopDepthUm } from './cyclic';
import { depthAtTime, rateThresholdDepthUm, timeToDepthMin } from './depth-integrator';
import { loadingFactor } from './loading';
import type { ProcessModel } from './process-model';
import { createArdeEvaluators, type ArdeEvaluator } from './rate';
import type { FeatureKind } from './transmission';

/** The caution shown with every prediction (domain.md 5). */
export const ETCH_CAUTION =
  'Estimates from simplified transport and loading models: validate against calibration wafers from the fab\u2019s process of record; foundry rules take precedence; drawn widths are not final widths.';

export type FeatureInput = {
  /** Drawn opening width (trench) or diameter (hole), µm. */
  widthUm: number;
  kind: FeatureKind;
  /** Effective (kernel-smoothed) open density around the feature, 0–1. Omitted = 0 (no local loading). */
  effectiveDensity?: number;
  /** Exposed fraction of the whole wafer, 0–1, for global loading. Omitted = 0. */
  exposedFraction?: number;
};

export type StopReason = 'max-aspect-ratio' | 'rate-threshold';

export type FeaturePrediction = {
  kind: FeatureKind;
  widthUm: number;
  /** Depth in the etched material at the recipe time (≤ stop-layer depth), µm. */
  depthUm: number;
  aspectRatio: number;
  /** R(AR)/R(0) at the depth reached (transport only, loading excluded). */
  ardeFactor: number;
  /** Loading factor R/R_open from local and global loading. */
  loadingFactor: number;
  rateAtDepthUmPerMin: number;
  /** Time to reach the target depth, min; may exceed the recipe time; null if the etch stops first. */
  timeToTargetMin: number | null;
  /** depth ≥ target − tolerance at the recipe time. */
  reachesTarget: boolean;
  /** depth − target, µm. */
  marginUm: number;
  reachedStopLayer: boolean;
  timeToStopLayerMin: number | null;
  overEtchTimeMin: number;
  /** Depth etched into the stop layer after reaching it, µm (aspect ratio held at the stop depth). */
  overEtchUm: number;
  /** Mask thickness left at the recipe time, µm (0 if consumed); null without a mask block. */
  maskRemainingUm: number | null;
  /** Etch stopped before the recipe time for a reason other than the stop layer. */
  stopped: boolean;
  stopReason: StopReason | null;
  cyclic: null | { cyclesInRecipe: number; cyclesToTarget: number | null; firstCycleDepthUm: number; lastCycleDepthUm: number; scallopTopUm: number; scallopBottomUm: number };
  warnings: string[];
};

export function checkInput(input: FeatureInput): void {
  if (!(Number.isFinite(input.widthUm) && input.widthUm > 0)) throw new RangeError(`width must be a number > 0 µm, got ${input.widthUm}`);
  if (input.kind !== 'trench' && input.kind !== 'hole') throw new RangeError(`kind must be 'trench' or 'hole', got ${String(input.kind)}`);
  // Two plain checks (no per-call array): this runs once per opening in the pipeline.
  const d = input.effectiveDensity;
  if (d !== undefined && !(d >= 0 && d <= 1)) throw new RangeError(`effective density must be in [0, 1], got ${d}`);
  const e = input.exposedFraction;
  if (e !== undefined && !(e >= 0 && e <= 1)) throw new RangeError(`exposed fraction must be in [0, 1], got ${e}`);
}

const fmt = (v: number) => Number(v.toPrecision(3)).toString();

/** Calibration-range and model-completeness warnings for one prediction. */
function rangeWarnings(model: ProcessModel, input: FeatureInput, aspectRatio: number, out: string[]): string[] {
  const c = model.calibration;
  if (!c) {
    out.push('model has no calibration record: predictions are uncalibrated estimates');
    return out;
  }
  const outside = (v: number, [lo, hi]: readonly [number, number]) => v < lo * (1 - 1e-9) || v > hi * (1 + 1e-9);
  if (outside(input.widthUm, c.widthUm)) out.push(`width ${fmt(input.widthUm)} µm is outside the calibrated range ${c.widthUm[0]}–${c.widthUm[1]} µm (extrapolation)`);
  if (outside(aspectRatio, c.aspectRatio)) out.push(`aspect ratio ${fmt(aspectRatio)} is outside the calibrated range ${c.aspectRatio[0]}–${c.aspectRatio[1]} (extrapolation)`);
  if (outside(input.effectiveDensity ?? 0, c.density)) out.push(`density ${fmt(input.effectiveDensity ?? 0)} is outside the calibrated range ${c.density[0]}–${c.density[1]} (extrapolation)`);
  if (c.kinds && !c.kinds.includes(input.kind)) out.push(`the model was calibrated on ${c.kinds.join(', ')} only, not ${input.kind}s`);
  return out;
}

type Kinetics = {
  arde: ArdeEvaluator;
  lf: number;
  loadedOpenRate: number;
  rate: (depthUm: number) => number;
  threshold: number;
  arDepth: number;
  rateDepth: number;
  stopDepth: number;
  limit: number;
  limitIsStopLayer: boolean;
};

/** Options shared by the prediction functions. */
export type PredictOptions = {
  /** Relative tolerance of the depth integrator (default 1e-9). */
  relTol?: number;
  /** Precomputed ARDE evaluators from createArdeEvaluators(model, model.etch.maxAspectRatio); pass them when
   *  predicting many features with one model (needed for speed with ion.fluxSite 'bottom-mean'). */
  arde?: Record<FeatureKind, ArdeEvaluator>;
};

function kinetics(model: ProcessModel, input: FeatureInput, opts: PredictOptions): Kinetics {
  const w = input.widthUm;
  const arde = (opts.arde ?? createArdeEvaluators(model, model.etch.maxAspectRatio))[input.kind];
  const lf = loadingFactor(model.loading, input.effectiveDensity ?? 0, input.exposedFraction ?? 0);
  const loadedOpenRate = model.openRateUmPerMin * lf;
  const rate = (h: number) => loadedOpenRate * arde(h / w);
  const threshold = model.etch.stopRateFraction * model.openRateUmPerMin;
  const arDepth = model.etch.maxAspectRatio * w;
  const rateDepth = rateThresholdDepthUm(rate, threshold, arDepth);
  const stopDepth = model.stopLayer?.depthUm ?? Infinity;
  return {
    arde,
    lf,
    loadedOpenRate,
    rate,
    threshold,
    arDepth,
    rateDepth,
    stopDepth,
    limit: Math.min(rateDepth, arDepth, stopDepth),
    limitIsStopLayer: stopDepth <= Math.min(rateDepth, arDepth),
  };
}

/**
 * Depth only, µm, at `timeMin` (default the model's etch time): the lean path used by calibration and by callers
 * that need many evaluations. Same physics as predictFeature; `relTol` is the integrator's relative tolerance.
 */
export function predictDepthUm(model: ProcessModel, input: FeatureInput, timeMin = model.etch.timeMin, opts: PredictOptions = {}): number {
  checkInput(input);
  const relTol = opts.relTol ?? 1e-9;
  const k = kinetics(model, input, opts);
  if (model.mode === 'cyclic' && model.cyclic) {
    const cycleMin = (model.cyclic.etchStepS + model.cyclic.passivationStepS) / 60;
    return runCycles((h) => k.rate(h) * cycleMin, model.cyclic, {
      timeMin,
      targetDepthUm: 0,
      limitDepthUm: k.limit,
      minPerCycleUm: k.threshold * cycleMin,
    }).depthUm;
  }
  return depthAtTime(k.rate, timeMin, k.limit, relTol, { limitTime: false }).depthUm;
}

/**
 * Predict one feature's depth at the model's etch time.
 * @example predictFeature(model, { widthUm: 5, kind: 'trench', effectiveDensity: 0.3 }).depthUm
 */
export function predictFeature(model: ProcessModel, input: FeatureInput, opts: PredictOptions = {}): FeaturePrediction {
  checkInput(input);
  const relTol = opts.relTol ?? 1e-9;
  const w = input.widthUm;
  const T = model.etch.timeMin;
  const target = model.etch.targetDepthUm;
  const { arde, lf, loadedOpenRate, rate, threshold, arDepth, rateDepth, stopDepth, limit, limitIsStopLayer } = kinetics(model, input, opts);

  let depthUm: number;
  let timeToTargetMin: number | null;
  let reachedLimit: boolean;
  let timeToLimitMin: number | null;
  let cyclic: FeaturePrediction['cyclic'] = null;
  if (model.mode === 'cyclic' && model.cyclic) {
    const steps = model.cyclic;
    const cycleMin = (steps.etchStepS + steps.passivationStepS) / 60;
    const run = runCycles((h) => rate(h) * cycleMin, steps, {
      timeMin: T,
      targetDepthUm: target,
      limitDepthUm: limit,
      minPerCycleUm: threshold * cycleMin,
    });
    depthUm = run.depthUm;
    timeToTargetMin = run.timeToTargetMin;
    // `limit` already includes the rate-threshold depth, so a rate stop is a stop at the limit (only at depth 0
    // when the loaded open rate itself is below the threshold).
    reachedLimit = run.reachedLimit || run.rateStopped;
    timeToLimitMin = run.rateStopped ? 0 : run.timeToLimitMin;
    cyclic = {
      cyclesInRecipe: run.cyclesInRecipe,
      cyclesToTarget: run.cyclesToTarget,
      firstCycleDepthUm: run.firstCycleDepthUm,
      lastCycleDepthUm: run.lastCycleDepthUm,
      scallopTopUm: scallopDepthUm(run.firstCycleDepthUm, steps.lateralToVerticalRatio),
      scallopBottomUm: scallopDepthUm(run.lastCycleDepthUm, steps.lateralToVerticalRatio),
    };
  } else {
    const run = depthAtTime(rate, T, limit, relTol);
    depthUm = run.depthUm;
    reachedLimit = run.reachedLimit;
    timeToLimitMin = Number.isFinite(run.timeToLimitMin) ? run.timeToLimitMin : null;
    timeToTargetMin = target <= limit ? timeToDepthMin(rate, target, relTol) : null;
    if (timeToTargetMin !== null && !Number.isFinite(timeToTargetMin)) timeToTargetMin = null;
  }

  return assemblePrediction(model, input, { arde, lf, loadedOpenRate, arDepth, rateDepth, stopDepth, limitIsStopLayer }, { depthUm, timeToTargetMin, reachedLimit, timeToLimitMin, cyclic });
}

/** Per-feature constants of the rate law R(h) = loadedOpenRate · arde(h/w) (see kinetics()). */
export type KineticConstants = {
  arde: ArdeEvaluator;
  lf: number;
  loadedOpenRate: number;
  arDepth: number;
  rateDepth: number;
  stopDepth: number;
  limitIsStopLayer: boolean;
};

/** The time-dependent outcome of one feature's etch, from the integrator, the cycle stepper or the fast tables. */
export type KineticOutcome = {
  depthUm: number;
  timeToTargetMin: number | null;
  /** The depth limit (stop layer, max AR, rate threshold) was reached at or before the recipe time. */
  reachedLimit: boolean;
  timeToLimitMin: number | null;
  cyclic: FeaturePrediction['cyclic'];
};

/** Shared frozen empty warnings list (returned when a prediction has none; never mutate a prediction's warnings). */
export const NO_WARNINGS: string[] = Object.freeze([]) as unknown as string[];

/**
 * Everything in a FeaturePrediction that follows from the kinetic outcome: stop-layer arrival and over-etch, mask
 * erosion, stop reason, margins and warnings. Shared by predictFeature and createFeaturePredictor so both give the
 * same semantics. `sharedEmpty` returns NO_WARNINGS instead of a fresh [] when there are no warnings.
 */
export function assemblePrediction(model: ProcessModel, input: FeatureInput, k: KineticConstants, o: KineticOutcome, sharedEmpty = false): FeaturePrediction {
  const { arde, lf, loadedOpenRate, arDepth, rateDepth, stopDepth, limitIsStopLayer } = k;
  const { depthUm, timeToTargetMin, reachedLimit, timeToLimitMin, cyclic } = o;
  const w = input.widthUm;
  const T = model.etch.timeMin;
  const target = model.etch.targetDepthUm;
  const warnings: string[] = [];
  const reachedStopLayer = limitIsStopLayer && reachedLimit;
  const stopped = reachedLimit && !limitIsStopLayer;
  const stopReason: StopReason | null = stopped ? (arDepth <= rateDepth ? 'max-aspect-ratio' : 'rate-threshold') : null;
  const aspectRatio = depthUm / w;
  let overEtchTimeMin = 0;
  let overEtchUm = 0;
  let timeToStopLayerMin: number | null = null;
  if (model.stopLayer && limitIsStopLayer) {
    timeToStopLayerMin = timeToLimitMin;
    if (reachedStopLayer && timeToLimitMin !== null) {
      overEtchTimeMin = Math.max(0, T - timeToLimitMin);
      overEtchUm = (overEtchTimeMin * loadedOpenRate * arde(stopDepth / w)) / model.stopLayer.selectivity;
      if (model.stopLayer.thicknessUm !== undefined && overEtchUm > model.stopLayer.thicknessUm) {
        warnings.push(`over-etch ${fmt(overEtchUm)} µm exceeds the stop layer thickness ${model.stopLayer.thicknessUm} µm: breaks through`);
      }
    }
  }
  let maskRemainingUm: number | null = null;
  if (model.mask) {
    // The mask sits on the field, so it erodes at the field's loaded rate divided by the selectivity.
    const erodedUm = (loadedOpenRate * T) / model.mask.selectivity;
    maskRemainingUm = Math.max(0, model.mask.thicknessUm - erodedUm);
    if (erodedUm >= model.mask.thicknessUm) {
      warnings.push(`mask consumed after ${fmt((model.mask.thicknessUm * model.mask.selectivity) / loadedOpenRate)} min (before the recipe time ${T} min)`);
    }
  }
  if (stopped) {
    warnings.push(
      stopReason === 'max-aspect-ratio'
        ? `etch stops at the model's maximum aspect ratio ${model.etch.maxAspectRatio} (depth ${fmt(depthUm)} µm)`
        : `etch stops where the rate falls below ${model.etch.stopRateFraction} of the open rate (depth ${fmt(depthUm)} µm)`,
    );
  }
  if (input.effectiveDensity === undefined && model.loading.coefficient > 0) {
    warnings.push('no effective density given: local loading not applied');
  }
  if (!model.stopLayer && depthUm > target + model.etch.toleranceUm) {
    warnings.push(`depth exceeds target + tolerance by ${fmt(depthUm - target - model.etch.toleranceUm)} µm (timed etch, no stop layer)`);
  }
  if (aspectRatio > 100) warnings.push(`aspect ratio ${fmt(aspectRatio)} is beyond 100, where the transmission values were validated`);
  rangeWarnings(model, input, aspectRatio, warnings);
  const ardeAtDepth = arde(aspectRatio);
  return {
    kind: input.kind,
    widthUm: w,
    depthUm,
    aspectRatio,
    ardeFactor: ardeAtDepth,
    loadingFactor: lf,
    rateAtDepthUmPerMin: loadedOpenRate * ardeAtDepth,
    timeToTargetMin,
    reachesTarget: depthUm >= target - model.etch.toleranceUm,
    marginUm: depthUm - target,
    reachedStopLayer,
    timeToStopLayerMin,
    overEtchTimeMin,
    overEtchUm,
    maskRemainingUm,
    stopped,
    stopReason,
    cyclic,
    warnings: sharedEmpty && warnings.length === 0 ? NO_WARNINGS : warnings,
  };
}
