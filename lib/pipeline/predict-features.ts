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
 */
import type { Feature, Grid } from '../geometry';
import { createFeaturePredictor, type FeaturePrediction, type ProcessModel } from '../etch';
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

export interface PredictOptions {
  /** Global open fraction of the die (passed as the model's exposed fraction: assumes the wafer is tiled with this die). */
  exposedFraction: number;
  /** Called every `every` features with (done, total); may throw to abort. */
  onTick?: (done: number, total: number) => void;
  every?: number;
}

export function predictFeatures(features: Feature[], effective: Float32Array, grid: Grid, model: ProcessModel, opts: PredictOptions): FeatureResult[] {
  const predict = createFeaturePredictor(model);
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
      maskRemainingUm: p.maskRemainingUm,
      stopped: p.stopped,
      warnings: measurable ? p.warnings : [...p.warnings, meanWidthNote],
      excursions: excursionsOf(range, widthUm, p.aspectRatio, rho),
    };
  }
  opts.onTick?.(features.length, features.length);
  return out;
}
