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
import { FEATURE_KINDS, featureTableOf, type Feature, type FeatureTable, type Grid } from '../geometry';
import { createDepthUncertainty, createFeaturePredictor, type FeatureInput, type FeaturePrediction, type ProcessModel } from '../etch';
import { emptyFeatureResultTable, featureResultList, NULL_DEPTH_SIGMA, NULL_MASK_REMAINING, NULL_TIME_TO_TARGET, type FeatureResultTable } from './feature-results';
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

/** `predictFeatureTable` over `Feature` objects, as `FeatureResult` objects (tests, benches, small layouts). */
export function predictFeatures(features: Feature[], effective: Float32Array, grid: Grid, model: ProcessModel, opts: PredictOptions): FeatureResult[] {
  return featureResultList(predictFeatureTable(featureTableOf(features), effective, grid, model, opts));
}

/**
 * Predictions for every row of a feature table (see module doc), as columns. `rows` limits the work to
 * [from, to) (the other rows stay zero), so callers can split a table between threads.
 */
export function predictFeatureTable(features: FeatureTable, effective: Float32Array, grid: Grid, model: ProcessModel, opts: PredictOptions & { rows?: [number, number] }): FeatureResultTable {
  const t = emptyFeatureResultTable(features, calibratedRangeOf(model));
  const rows = new RowPredictor(model, opts.exposedFraction);
  const [from, to] = opts.rows ?? [0, features.count];
  rows.predict(features, t, effective, grid, from, to, opts);
  t.noteLists = rows.lists;
  return t;
}

/**
 * The prediction of rows into a result table, with its caches and its own note lists (`lists`; t.notes holds
 * indices into them, entry 0 the empty list, one list per distinct content in order of first use). One per thread
 * when a table is split (parallel-predict.ts joins the lists).
 */
export class RowPredictor {
  readonly lists: (readonly string[])[] = [Object.freeze([]) as readonly string[]];
  private readonly predictor;
  private readonly uncertainty;
  private readonly sigmaCache = new Map<string, number>();
  private readonly noteCache = new Map<string, string>();
  // Cyclic mode steps every cycle (~10 µs per opening), so repeated openings are predicted once there.
  private readonly cache: Map<string, FeaturePrediction> | null;
  private readonly range: CalibratedRange | null;
  // Distinct note lists by their raw warnings (and whether the mean width was used): index into lists.
  private readonly listOf = new Map<string, number>();
  private readonly byContent = new Map<string, number>();

  constructor(
    model: ProcessModel,
    private readonly exposedFraction: number,
  ) {
    this.predictor = createFeaturePredictor(model);
    this.uncertainty = createDepthUncertainty(model);
    this.cache = model.mode === 'cyclic' ? new Map<string, FeaturePrediction>() : null;
    this.range = calibratedRangeOf(model);
  }

  /** Rows [from, to) of `f` into the same rows of `t`. */
  predict(f: FeatureTable, t: FeatureResultTable, effective: Float32Array, grid: Grid, from: number, to: number, opts: Pick<PredictOptions, 'onTick' | 'every'> = {}): void {
    const { predictor: predict, uncertainty, sigmaCache, noteCache, cache, range, lists, listOf, byContent } = this;
    const meanWidthNote = 'no measurable smallest width: the mean width 2·area/perimeter was used';
    // The sampled width lattice can step over a short narrow stub (widths.ts, known limit): say so on each opening
    // measured that way, since its narrowest width can then read too large and its aspect ratio too small.
    const sampledWidthNote = 'width sampled on a lattice: a narrow part one or two lattice steps wide may be missed, so the width can read too large';
    const every = opts.every ?? 2048;
    const total = to - from;
    const input: FeatureInput = { widthUm: 0, kind: 'trench', effectiveDensity: 0, exposedFraction: this.exposedFraction };
    for (let n = from; n < to; n++) {
      if (opts.onTick && (n - from) % every === 0) opts.onTick(n - from, total);
      const shape = FEATURE_KINDS[f.kind[n] as number] as Feature['kind'];
      const modelKind = modelKindOf(shape);
      const minWidthUm = f.minWidthUm[n] as number, perimeterUm = f.perimeterUm[n] as number;
      // A sliver can come out of width extraction with no measurable width; fall back to its mean width
      // 2·area/perimeter so one odd shape cannot stop the whole analysis.
      const measurable = minWidthUm > 0;
      const widthUm = measurable ? minWidthUm : perimeterUm > 0 ? (2 * (f.areaUm2[n] as number)) / perimeterUm : 0;
      if (!(widthUm > 0)) throw new RangeError(`opening #${f.id[n]} at (${f.centroidXUm[n]}, ${f.centroidYUm[n]}) µm has no measurable width`);
      const rho = Math.round(sampleGrid(effective, grid, f.centroidXUm[n] as number, f.centroidYUm[n] as number) * 1e4) / 1e4;
      input.widthUm = widthUm;
      input.kind = modelKind;
      input.effectiveDensity = rho;
      let p: FeaturePrediction | undefined;
      if (cache) {
        const key = `${modelKind}|${widthUm}|${rho}`;
        p = cache.get(key);
        if (!p) cache.set(key, (p = predict({ ...input })));
      } else {
        p = predict(input);
      }
      let nulls = 0;
      if (uncertainty) {
        // Repeated openings (same kind, width, density) are common: evaluate their σ once.
        const key = `${modelKind}|${widthUm}|${rho}`;
        let sigma = sigmaCache.get(key);
        if (sigma === undefined) {
          sigma = uncertainty.sigmaUm({ ...input });
          if (sigmaCache.size < 200_000) sigmaCache.set(key, sigma);
        }
        t.depthSigmaUm[n] = sigma;
      } else {
        t.depthSigmaUm[n] = Number.NaN;
        nulls |= NULL_DEPTH_SIGMA;
      }
      t.modelKind[n] = modelKind === 'hole' ? 1 : 0;
      t.widthUm[n] = widthUm;
      t.effectiveDensity[n] = rho;
      t.depthUm[n] = p.depthUm;
      t.aspectRatio[n] = p.aspectRatio;
      t.marginUm[n] = p.marginUm;
      t.overEtchUm[n] = p.overEtchUm;
      if (p.timeToTargetMin === null) {
        nulls |= NULL_TIME_TO_TARGET;
        t.timeToTargetMin[n] = Number.NaN;
      } else t.timeToTargetMin[n] = p.timeToTargetMin;
      if (p.maskRemainingUm === null) {
        nulls |= NULL_MASK_REMAINING;
        t.maskRemainingUm[n] = Number.NaN;
      } else t.maskRemainingUm[n] = p.maskRemainingUm;
      t.nulls[n] = nulls;
      t.reachesTarget[n] = p.reachesTarget ? 1 : 0;
      t.stopped[n] = p.stopped ? 1 : 0;
      const sampled = measurable && f.widthExact[n] === 0;
      if (measurable && !sampled && p.warnings.length === 0) t.notes[n] = 0;
      else {
        const key = (measurable ? (sampled ? '\u0002' : '') : '\u0001') + p.warnings.join('\u0000');
        let li = listOf.get(key);
        if (li === undefined) {
          const own = notesOf(p.warnings, noteCache);
          const notes = !measurable ? [...own, meanWidthNote] : sampled ? [...own, sampledWidthNote] : own;
          // Raw warnings differ in their numbers; the notes do not: one list per distinct content.
          const content = notes.join('\u0000');
          li = notes.length === 0 ? 0 : byContent.get(content);
          if (li === undefined) byContent.set(content, (li = lists.push(Object.freeze(notes)) - 1));
          listOf.set(key, li);
        }
        t.notes[n] = li;
      }
      if (range) t.excursions[n] = excursionBits(range, widthUm, p.aspectRatio, rho);
    }
    opts.onTick?.(total, total);
  }
}

/** EXCURSION_BITS of excursionsOf(range, …) without building the list. */
function excursionBits(range: CalibratedRange, widthUm: number, aspectRatio: number, density: number): number {
  const out = (v: number, r: [number, number] | undefined) => r !== undefined && (v < r[0] || v > r[1]);
  return (out(widthUm, range.widthUm) ? 1 : 0) | (out(aspectRatio, range.aspectRatio) ? 2 : 0) | (out(density, range.density) ? 4 : 0);
}
