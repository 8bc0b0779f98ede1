/**
 * Per-feature etch prediction: each extracted opening is sent to the process model as a trench or a hole, with the
 * effective (kernel-smoothed) density sampled at its centroid and the die's global density as exposed fraction.
 *
 * Kind mapping (documented in lib/methods): 'round-hole' and 'square-hole' → hole (width = diameter or side);
 * 'trench' → trench; 'open-field' → trench of its smallest width (a wide trench); 'irregular' → trench of its
 * smallest width (the narrowest part lags most, so this is the cautious choice).
 * Effective density is rounded to 1e-4 (far below any model's accuracy) and that rounded value is the one passed to
 * the model. Continuous mode has no per-input cache: the tabulated predictor (~2 µs) is cheaper than building a
 * string key and a million-entry map (measured in bench/prediction.bench.ts); cyclic mode keeps one.
 * Predictions come from createFeaturePredictor (tables built once per model; agrees with predictFeature to ~1e-8
 * relative, tests/etch/fast-predict.test.ts). Empty warning/excursion lists are one shared frozen array each.
 *
 * Notes: the model's per-opening warnings are reduced to number-free notes (noteOf), so the summary lists each kind
 * of note once with its count instead of once per distinct depth; the numbers are in the opening's own fields.
 * Calibrated-range warnings are left to `excursions`, which carry the values.
 *
 * Uncertainty: with a calibrated model that records its parameter covariance, each opening gets depthSigmaUm, the
 * standard deviation of its predicted depth (lib/etch/uncertainty.ts); null otherwise.
 */
import type { Feature, Grid } from '../geometry';
import { createDepthUncertainty, createFeaturePredictor, type FeaturePrediction, type ProcessModel } from '../etch';
import type { RangeExcursion } from './flags';

export type ModelKind = 'trench' | 'hole';

export function modelKindOf(shape: Feature['kind']): ModelKind {
  return shape === 'round-hole' || shape === 'square-hole' ? 'hole' : 'trench';
}

/** Value of a pixel map at a point (the pixel containing it; points outside the grid take the nearest edge pixel). */
export function sampleGrid(values: ArrayLike<number>, grid: Grid, xUm: number, yUm: number): number {
  const i = Math.min(grid.nx - 1, Math.max(0, Math.floor((xUm - grid.x0Um) / grid.pixelUm)));
  const j = Math.min(grid.ny - 1, Math.max(0, Math.floor((yUm - grid.y0Um) / grid.pixelUm)));
  return values[j * grid.nx + i] as number;
}

export interface FeatureResult {
  id: number;
  shape: Feature['kind'];
  modelKind: ModelKind;
  centroidUm: [number, number];
  bboxUm: [number, number, number, number];
  areaUm2: number;
  /** Width the model used (trench width, hole diameter/side), µm. */
  widthUm: number;
  lengthUm: number;
  effectiveDensity: number;
  depthUm: number;
  /** Predicted depth / width. */
  aspectRatio: number;
  /** Depth − target, µm (negative = short of target). */
  marginUm: number;
  overEtchUm: number;
  timeToTargetMin: number | null;
  reachesTarget: boolean;
  /** Standard deviation of depthUm from the calibration's parameter covariance, µm; null for a model without one. */
  depthSigmaUm: number | null;
  maskRemainingUm: number | null;
  stopped: boolean;
  warnings: string[];
  excursions: RangeExcursion[];
}

/** Calibrated range of a model, when it records one. Absent fields mean "not recorded" (no check). */
export interface CalibratedRange {
  widthUm?: [number, number];
  aspectRatio?: [number, number];
  density?: [number, number];
}

/** The calibrated range recorded in `model.calibration` (written by calibration fitting), or null without one. */
export function calibratedRangeOf(model: ProcessModel): CalibratedRange | null {
  const cal = model.calibration;
  if (!cal) return null;
  return { widthUm: cal.widthUm, aspectRatio: cal.aspectRatio, density: cal.density };
}

const NO_EXCURSIONS: RangeExcursion[] = Object.freeze([]) as unknown as RangeExcursion[];

/** Calibrated-range excursions of one opening; the shared frozen empty array when there are none (never mutate). */
export function excursionsOf(range: CalibratedRange | null, widthUm: number, aspectRatio: number, density: number): RangeExcursion[] {
  if (!range) return NO_EXCURSIONS;
  const out: RangeExcursion[] = [];
  const check = (q: RangeExcursion['quantity'], v: number, r: [number, number] | undefined, unit: RangeExcursion['unit']) => {
    if (r && (v < r[0] || v > r[1])) out.push({ quantity: q, value: v, min: r[0], max: r[1], unit });
  };
  check('width', widthUm, range.widthUm, 'µm');
  check('aspect-ratio', aspectRatio, range.aspectRatio, 'ratio');
  check('density', density, range.density, 'fraction');
  return out.length === 0 ? NO_EXCURSIONS : out;
}

const NOTE_FORMS: [RegExp, string][] = [
  [/^etch stops at the model's maximum aspect ratio ([\d.e+-]+).*$/, "etch stops at the model's maximum aspect ratio $1 before the end of the etch"],
  [/^etch stops where the rate falls below ([\d.e+-]+) of the open rate.*$/, 'etch stops where the rate falls below $1 of the open rate'],
  [/^depth exceeds target \+ tolerance by .*$/, 'predicted depth exceeds target + tolerance (timed etch, no stop layer)'],
  [/^over-etch .* exceeds the stop layer thickness .*$/, 'over-etch exceeds the stop-layer thickness: breaks through'],
  [/^mask consumed after .*$/, 'mask consumed before the end of the etch'],
  [/^aspect ratio .* is beyond 100, .*$/, 'aspect ratio beyond 100, where the transmission values were validated'],
];
const RANGE_NOTE = / is outside the calibrated range /;

/**
 * The per-opening notes of a prediction without per-opening numbers (one shared string per distinct note, so a
 * million openings share a handful of strings); calibrated-range notes are dropped (excursions carry them).
 */
export function notesOf(warnings: readonly string[], cache: Map<string, string>): string[] {
  if (warnings.length === 0) return warnings as string[];
  const out: string[] = [];
  for (const w of warnings) {
    if (RANGE_NOTE.test(w)) continue;
    let note = cache.get(w);
    if (note === undefined) {
      note = w;
      for (const [re, form] of NOTE_FORMS) if (re.test(w)) note = w.replace(re, form);
      cache.set(w, note);
    }
    if (!out.includes(note)) out.push(note);
  }
  return out.length === 0 ? NO_NOTES : out;
}
const NO_NOTES: string[] = Object.freeze([]) as unknown as string[];

export interface PredictOptions {
  /** Global open fraction of the die (passed as the model's exposed fraction: assumes the wafer is tiled with this die). */
  exposedFraction: number;
  /** Called every `every` features with (done, total); may throw to abort. */
  onTick?: (done: number, total: number) => void;
  every?: number;
}

export function predictFeatures(features: Feature[], effective: Float32Array, grid: Grid, model: ProcessModel, opts: PredictOptions): FeatureResult[] {
  const predict = createFeaturePredictor(model);
  const uncertainty = createDepthUncertainty(model);
  const sigmaCache = new Map<string, number>();
  const noteCache = new Map<string, string>();
  // Cyclic mode steps every cycle (~10 µs per opening), so repeated openings are predicted once there.
  const cache = model.mode === 'cyclic' ? new Map<string, FeaturePrediction>() : null;
  const meanWidthNote = 'no measurable smallest width: the mean width 2·area/perimeter was used';
  const range = calibratedRangeOf(model);
  const every = opts.every ?? 2048;
  const out: FeatureResult[] = new Array(features.length);
  for (let n = 0; n < features.length; n++) {
    if (opts.onTick && n % every === 0) opts.onTick(n, features.length);
    const f = features[n] as Feature;
    const modelKind = modelKindOf(f.kind);
    // A sliver can come out of width extraction with no measurable width; fall back to its mean width
    // 2·area/perimeter so one odd shape cannot stop the whole analysis.
    const measurable = f.minWidthUm > 0;
    const widthUm = measurable ? f.minWidthUm : f.perimeterUm > 0 ? (2 * f.areaUm2) / f.perimeterUm : 0;
    if (!(widthUm > 0)) throw new RangeError(`opening #${f.id} at (${f.centroidUm[0]}, ${f.centroidUm[1]}) µm has no measurable width`);
    const rho = Math.round(sampleGrid(effective, grid, f.centroidUm[0], f.centroidUm[1]) * 1e4) / 1e4;
    let p: FeaturePrediction | undefined;
    if (cache) {
      const key = `${modelKind}|${widthUm}|${rho}`;
      p = cache.get(key);
      if (!p) cache.set(key, (p = predict({ widthUm, kind: modelKind, effectiveDensity: rho, exposedFraction: opts.exposedFraction })));
    } else {
      p = predict({ widthUm, kind: modelKind, effectiveDensity: rho, exposedFraction: opts.exposedFraction });
    }
    let depthSigmaUm: number | null = null;
    if (uncertainty) {
      // Repeated openings (same kind, width, density) are common: evaluate their σ once.
      const key = `${modelKind}|${widthUm}|${rho}`;
      depthSigmaUm = sigmaCache.get(key) ?? null;
      if (depthSigmaUm === null) {
        depthSigmaUm = uncertainty.sigmaUm({ widthUm, kind: modelKind, effectiveDensity: rho, exposedFraction: opts.exposedFraction });
        if (sigmaCache.size < 200_000) sigmaCache.set(key, depthSigmaUm);
      }
    }
    out[n] = {
      id: f.id,
      shape: f.kind,
      modelKind,
      centroidUm: f.centroidUm,
      bboxUm: f.bboxUm,
      areaUm2: f.areaUm2,
      widthUm,
      lengthUm: f.lengthUm,
      effectiveDensity: rho,
      depthUm: p.depthUm,
      aspectRatio: p.aspectRatio,
      marginUm: p.marginUm,
      overEtchUm: p.overEtchUm,
      timeToTargetMin: p.timeToTargetMin,
      reachesTarget: p.reachesTarget,
      depthSigmaUm,
      maskRemainingUm: p.maskRemainingUm,
      stopped: p.stopped,
      warnings: measurable ? notesOf(p.warnings, noteCache) : [...notesOf(p.warnings, noteCache), meanWidthNote],
      excursions: excursionsOf(range, widthUm, p.aspectRatio, rho),
    };
  }
  opts.onTick?.(features.length, features.length);
  return out;
}
