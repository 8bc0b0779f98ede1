/**
 * What-if recomputation for the viewer: the stored per-opening widths and effective densities run through the
 * pipeline's own predictor (createFeaturePredictor) under slider-changed model parameters, then through the
 * pipeline's own risk, map painting and flag rules. Nothing here is new physics; it is the pipeline's prediction
 * and flag steps over columns instead of geometry. Window-density flags do not depend on the etch model and are
 * kept from the stored analysis by the caller.
 */
import { createFeaturePredictor, type FeaturePredictor } from '@/lib/etch/fast-predict';
import type { ProcessModel } from '@/lib/etch/process-model';
import { featureFlags, type Flag, type SeverityMap } from '@/lib/pipeline/flags';
import { calibratedRangeOf, excursionsOf, type FeatureResult } from '@/lib/pipeline/predict-features';
import { featureRisk, paintFeatureMaps } from '@/lib/pipeline/result-maps';
import type { ResolvedLimits } from '@/lib/pipeline/settings';
import type { WireFeatures } from './feature-wire';

export interface WhatIfParams {
  timeMin: number;
  openRateUmPerMin: number;
  reactionProbability: number;
  loadingCoefficient: number;
}

export interface WhatIfContext {
  model: ProcessModel;
  limits: ResolvedLimits;
  severities: SeverityMap;
  exposedFraction: number;
  features: WireFeatures;
}

export interface WhatIfResult {
  depthUm: Float64Array;
  marginUm: Float64Array;
  risk: Float64Array;
  flags: Flag[];
  /** Openings that would be flagged but were left out because `maxFlags` was reached. */
  flagsLeftOut: number;
  /** Openings predicted under target, at the what-if parameters. */
  underTarget: number;
  ms: { predictor: number; features: number; flags: number };
}

export const paramsOf = (m: ProcessModel): WhatIfParams => ({
  timeMin: m.etch.timeMin,
  openRateUmPerMin: m.openRateUmPerMin,
  reactionProbability: m.reactionProbability,
  loadingCoefficient: m.loading.coefficient,
});

/** The model with the what-if parameters and the analysis's resolved target (as run-analysis predicts). */
export function whatIfModel(ctx: Pick<WhatIfContext, 'model' | 'limits'>, p: WhatIfParams): ProcessModel {
  const m = ctx.model;
  return {
    ...m,
    openRateUmPerMin: p.openRateUmPerMin,
    reactionProbability: p.reactionProbability,
    loading: { ...m.loading, coefficient: p.loadingCoefficient },
    etch: { ...m.etch, timeMin: p.timeMin, targetDepthUm: ctx.limits.targetDepthUm, toleranceUm: ctx.limits.toleranceUm },
  };
}

/** Keeps the predictor while only the etch time moves (its tables depend on the other parameters). */
export class PredictorCache {
  private key = '';
  private predictor: FeaturePredictor | null = null;
  get(model: ProcessModel): { predictor: FeaturePredictor; built: boolean } {
    const key = JSON.stringify({ ...model, etch: { ...model.etch, timeMin: 0 } });
    if (this.predictor && key === this.key) return { predictor: this.predictor, built: false };
    this.key = key;
    this.predictor = createFeaturePredictor(model);
    return { predictor: this.predictor, built: true };
  }
}

const MODEL_KIND = ['trench', 'hole'] as const;

/** Distinct (kind, width, density) inputs and which one each opening uses: repeated openings are predicted once. */
export interface UniqueInputs {
  of: Uint32Array;
  kind: Uint8Array;
  widthUm: Float64Array;
  density: Float64Array;
}
const uniqueCache = new WeakMap<WireFeatures, UniqueInputs>();

export function uniqueInputs(f: WireFeatures): UniqueInputs {
  const hit = uniqueCache.get(f);
  if (hit) return hit;
  const index = new Map<string, number>();
  const of = new Uint32Array(f.count);
  const kind: number[] = [];
  const widthUm: number[] = [];
  const density: number[] = [];
  for (let k = 0; k < f.count; k++) {
    const key = `${f.modelKind[k]}|${f.widthUm[k]}|${f.effectiveDensity[k]}`;
    let u = index.get(key);
    if (u === undefined) {
      u = kind.length;
      index.set(key, u);
      kind.push(f.modelKind[k] as number);
      widthUm.push(f.widthUm[k] as number);
      density.push(f.effectiveDensity[k] as number);
    }
    of[k] = u;
  }
  const out = { of, kind: Uint8Array.from(kind), widthUm: Float64Array.from(widthUm), density: Float64Array.from(density) };
  uniqueCache.set(f, out);
  return out;
}

/** Predictions for the distinct inputs q0 ≤ q < q1 (see uniqueInputs) at one set of parameters. */
export interface UniquePrediction {
  q0: number;
  depth: Float64Array;
  margin: Float64Array;
  over: Float64Array;
  ar: Float64Array;
  risk: Float64Array;
  reach: Uint8Array;
}

export function predictUnique(ctx: WhatIfContext, p: WhatIfParams, cache: PredictorCache, q0: number, q1: number): UniquePrediction {
  const { predictor } = cache.get(whatIfModel(ctx, p));
  const u = uniqueInputs(ctx.features);
  const len = Math.max(0, q1 - q0);
  const out: UniquePrediction = { q0, depth: new Float64Array(len), margin: new Float64Array(len), over: new Float64Array(len), ar: new Float64Array(len), risk: new Float64Array(len), reach: new Uint8Array(len) };
  for (let j = 0; j < len; j++) {
    const q = q0 + j;
    const widthUm = u.widthUm[q] as number;
    const r = predictor({ widthUm, kind: MODEL_KIND[u.kind[q] as number] ?? 'trench', effectiveDensity: u.density[q] as number, exposedFraction: ctx.exposedFraction });
    out.depth[j] = r.depthUm;
    out.margin[j] = r.marginUm;
    out.over[j] = r.overEtchUm;
    out.ar[j] = r.aspectRatio;
    out.reach[j] = r.reachesTarget ? 1 : 0;
    out.risk[j] = featureRisk({ depthUm: r.depthUm, overEtchUm: r.overEtchUm, widthUm }, ctx.limits);
  }
  return out;
}

/** Where a second thread should start on the distinct inputs (half of them), or null when too few to split. */
export function splitPoint(f: WireFeatures, minDistinct = 256): number | null {
  const m = uniqueInputs(f).kind.length;
  return m >= minDistinct ? Math.floor(m / 2) : null;
}

/**
 * Depth, margin, risk and opening flags at the what-if parameters. `tail`, when given, holds the predictions of
 * the distinct inputs from tail.q0 on, made by another thread; this thread predicts the rest (or takes `headDone`,
 * the same for the inputs before tail.q0, when it was predicted while waiting for the tail).
 */
export function runWhatIf(ctx: WhatIfContext, p: WhatIfParams, cache = new PredictorCache(), maxFlags = 5000, tail?: UniquePrediction, headDone?: UniquePrediction): WhatIfResult {
  const t0 = performance.now();
  const model = whatIfModel(ctx, p);
  cache.get(model);
  const t1 = performance.now();
  const f = ctx.features;
  const n = f.count;
  const depthUm = new Float64Array(n);
  const marginUm = new Float64Array(n);
  const risk = new Float64Array(n);
  const range = calibratedRangeOf(model);
  const flags: Flag[] = [];
  let underTarget = 0;
  let flagsLeftOut = 0;
  let flagMs = 0;
  const u = uniqueInputs(f);
  const m = u.kind.length;
  const split = tail && tail.q0 <= m && tail.q0 + tail.depth.length === m ? tail.q0 : m;
  const head = headDone && headDone.q0 === 0 && headDone.depth.length === split ? headDone : predictUnique(ctx, p, cache, 0, split);
  const join = <K extends 'depth' | 'margin' | 'over' | 'ar' | 'risk'>(key: K): Float64Array => {
    if (split === m) return head[key];
    const a = new Float64Array(m);
    a.set(head[key], 0);
    a.set(tail![key], split);
    return a;
  };
  const uDepth = join('depth');
  const uMargin = join('margin');
  const uOver = join('over');
  const uAr = join('ar');
  const uRisk = join('risk');
  const uReach = split === m ? head.reach : new Uint8Array(m);
  if (split !== m) {
    uReach.set(head.reach, 0);
    uReach.set(tail!.reach, split);
  }
  for (let k = 0; k < n; k++) {
    const q = u.of[k] as number;
    depthUm[k] = uDepth[q] as number;
    marginUm[k] = uMargin[q] as number;
    risk[k] = uRisk[q] as number;
    if (!uReach[q]) underTarget++;
    // Every feature rule is one of the risk terms crossing 1 (or a calibration excursion), so the rest pass.
    if ((risk[k]! >= 1 || range) && flags.length >= maxFlags) {
      if (risk[k]! >= 1) flagsLeftOut++;
    } else if (risk[k]! >= 1 || range) {
      const s = performance.now();
      const kind = MODEL_KIND[f.modelKind[k] as number] ?? 'trench';
      const widthUm = f.widthUm[k] as number;
      const found = featureFlags(
        {
          featureId: f.featureId[k] as number,
          shape: kind,
          modelKind: kind,
          bboxUm: [f.x0Um[k] as number, f.y0Um[k] as number, f.x1Um[k] as number, f.y1Um[k] as number],
          centroidUm: [f.xUm[k] as number, f.yUm[k] as number],
          widthUm,
          depthUm: depthUm[k] as number,
          overEtchUm: uOver[q] as number,
          excursions: excursionsOf(range, widthUm, uAr[q] as number, f.effectiveDensity[k] as number),
        },
        ctx.limits,
        ctx.severities,
      );
      for (const fl of found) flags.push(fl);
      flagMs += performance.now() - s;
    }
  }
  const t2 = performance.now();
  return { depthUm, marginUm, risk, flags, flagsLeftOut, underTarget, ms: { predictor: t1 - t0, features: t2 - t1 - flagMs, flags: flagMs } };
}

/**
 * Which opening owns each pixel of the analysis grid, by the pipeline's own painter (largest opening first,
 * covered pixels only): painting "depth = index" yields the owner map. −1 where no opening paints.
 */
export function ownerMap(f: WireFeatures, coverage: Float32Array, grid: { x0Um: number; y0Um: number; pixelUm: number; nx: number; ny: number }): Int32Array {
  const results = new Array<FeatureResult>(f.count);
  for (let k = 0; k < f.count; k++) {
    results[k] = { areaUm2: f.areaUm2[k], bboxUm: [f.x0Um[k], f.y0Um[k], f.x1Um[k], f.y1Um[k]], depthUm: k, aspectRatio: 0 } as unknown as FeatureResult;
  }
  const painted = paintFeatureMaps(results, new Float64Array(f.count), coverage, grid).predictedDepth;
  const out = new Int32Array(painted.length);
  for (let p = 0; p < painted.length; p++) out[p] = Number.isNaN(painted[p]) ? -1 : (painted[p] as number);
  return out;
}

/** A per-opening value spread onto the grid through the owner map (NaN where no opening). */
export function spread(owner: Int32Array, values: Float64Array, out = new Float32Array(owner.length)): Float32Array {
  for (let p = 0; p < owner.length; p++) {
    const k = owner[p] as number;
    out[p] = k < 0 ? Number.NaN : (values[k] as number);
  }
  return out;
}
