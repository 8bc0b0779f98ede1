/**
 * Per-opening predictions as columns (row k = feature row k of `features`), so a million openings cost a few
 * dozen typed arrays instead of a million objects the garbage collector keeps copying. `featureResultAt` gives one
 * row as a `FeatureResult` object (tests, CLI JSON, small layouts); `featureResultList` all of them.
 *
 * Nullable numbers are stored as NaN with a bit in `nulls` (so a real NaN stays a number); notes are an index into
 * `noteLists` (distinct note lists, entry 0 the empty one; shared, never mutate them); calibrated-range excursions
 * are a bit per quantity, their values rebuilt from the row's width, aspect ratio and density and the `range`
 * (excursionsOf is a pure function of those).
 */
import { concatFeatureTables, emptyFeatureTable, FEATURE_KINDS, type FeatureKind, type FeatureTable } from '../geometry';
import { excursionsOf, type CalibratedRange, type FeatureResult, type ModelKind } from './predict-features';

export const RESULT_F64_COLUMNS = ['widthUm', 'effectiveDensity', 'depthUm', 'aspectRatio', 'marginUm', 'overEtchUm', 'timeToTargetMin', 'depthSigmaUm', 'maskRemainingUm'] as const;
export type ResultF64Column = (typeof RESULT_F64_COLUMNS)[number];

/** Bits of the `nulls` column. */
export const NULL_TIME_TO_TARGET = 1;
export const NULL_DEPTH_SIGMA = 2;
export const NULL_MASK_REMAINING = 4;
/** Bits of the `excursions` column, in the order excursionsOf lists them. */
export const EXCURSION_BITS: readonly [RangeQuantity, number][] = [
  ['width', 1],
  ['aspect-ratio', 2],
  ['density', 4],
];
type RangeQuantity = 'width' | 'aspect-ratio' | 'density';

export const MODEL_KINDS: readonly ModelKind[] = ['trench', 'hole'];

export interface FeatureResultTable extends Record<ResultF64Column, Float64Array> {
  count: number;
  /** Geometry of the same rows (id, kind, centroid, bbox, area, length, ...). */
  features: FeatureTable;
  /** Index into MODEL_KINDS (0 trench, 1 hole). */
  modelKind: Uint8Array;
  reachesTarget: Uint8Array;
  stopped: Uint8Array;
  /** NULL_* bits: which nullable numbers are null in this row. */
  nulls: Uint8Array;
  /** Index into noteLists. */
  notes: Uint32Array;
  noteLists: readonly (readonly string[])[];
  /** EXCURSION_BITS of the quantities outside the calibrated range. */
  excursions: Uint8Array;
  /** Calibrated range the excursions were checked against (null: the model records none). */
  range: CalibratedRange | null;
}

/** Zeroed columns for the rows of `features`; `alloc` supplies their memory (shared when threads fill the rows). */
export function emptyFeatureResultTable(features: FeatureTable, range: CalibratedRange | null, alloc: (bytes: number) => ArrayBufferLike = (b) => new ArrayBuffer(b)): FeatureResultTable {
  const n = features.count;
  const t = {
    count: n,
    features,
    modelKind: new Uint8Array(alloc(n)),
    reachesTarget: new Uint8Array(alloc(n)),
    stopped: new Uint8Array(alloc(n)),
    nulls: new Uint8Array(alloc(n)),
    notes: new Uint32Array(alloc(4 * n)),
    noteLists: [Object.freeze([]) as readonly string[]],
    excursions: new Uint8Array(alloc(n)),
    range,
  } as unknown as FeatureResultTable;
  for (const c of RESULT_F64_COLUMNS) t[c] = new Float64Array(alloc(8 * n));
  return t;
}

const nullable = (t: FeatureResultTable, k: number, bit: number, col: Float64Array): number | null => ((t.nulls[k] as number) & bit ? null : (col[k] as number));

/** Row k as a `FeatureResult` object (fresh arrays each call; `warnings` is shared with other rows). */
export function featureResultAt(t: FeatureResultTable, k: number): FeatureResult {
  const f = t.features;
  const widthUm = t.widthUm[k] as number, aspectRatio = t.aspectRatio[k] as number, rho = t.effectiveDensity[k] as number;
  return {
    id: f.id[k] as number,
    shape: FEATURE_KINDS[f.kind[k] as number] as FeatureKind,
    modelKind: MODEL_KINDS[t.modelKind[k] as number] as ModelKind,
    centroidUm: [f.centroidXUm[k] as number, f.centroidYUm[k] as number],
    bboxUm: [f.x0Um[k] as number, f.y0Um[k] as number, f.x1Um[k] as number, f.y1Um[k] as number],
    areaUm2: f.areaUm2[k] as number,
    widthUm,
    lengthUm: f.lengthUm[k] as number,
    effectiveDensity: rho,
    depthUm: t.depthUm[k] as number,
    aspectRatio,
    marginUm: t.marginUm[k] as number,
    overEtchUm: t.overEtchUm[k] as number,
    timeToTargetMin: nullable(t, k, NULL_TIME_TO_TARGET, t.timeToTargetMin),
    reachesTarget: t.reachesTarget[k] === 1,
    depthSigmaUm: nullable(t, k, NULL_DEPTH_SIGMA, t.depthSigmaUm),
    maskRemainingUm: nullable(t, k, NULL_MASK_REMAINING, t.maskRemainingUm),
    stopped: t.stopped[k] === 1,
    warnings: t.noteLists[t.notes[k] as number] as string[],
    excursions: t.excursions[k] === 0 ? excursionsOf(null, 0, 0, 0) : excursionsOf(t.range, widthUm, aspectRatio, rho),
  };
}

/** Every row as a `FeatureResult` (one object per opening: for tests, JSON output and small layouts). */
export function featureResultList(t: FeatureResultTable): FeatureResult[] {
  const out = new Array<FeatureResult>(t.count);
  for (let k = 0; k < t.count; k++) out[k] = featureResultAt(t, k);
  return out;
}

/** "<quantity> outside the calibrated range" per excursion bit (the summary's and the feature file's wording). */
export function excursionKeys(bits: number): string[] {
  const out: string[] = [];
  for (const [q, bit] of EXCURSION_BITS) if (bits & bit) out.push(`${q} outside the calibrated range`);
  return out;
}

/**
 * The rows of several tables one after the other (tiles or shards of one analysis, predicted with one model: the
 * first part's range is kept). Note lists are merged by content. Ids are kept; renumbering is the caller's.
 * `features`: the geometry of the joined rows when the caller already has it (parts cut from one table), else the
 * parts' feature tables are joined too.
 */
export function concatFeatureResultTables(parts: readonly FeatureResultTable[], features = concatFeatureTables(parts.map((p) => p.features))): FeatureResultTable {
  if (features.count !== parts.reduce((s, p) => s + p.count, 0)) throw new Error('result table parts and feature rows differ in number');
  const out = emptyFeatureResultTable(features, parts[0]?.range ?? null);
  const lists: (readonly string[])[] = [out.noteLists[0] as readonly string[]];
  const byKey = new Map<string, number>([['', 0]]);
  let at = 0;
  for (const p of parts) {
    const n = p.count;
    const remap = p.noteLists.map((l) => {
      const key = l.join('\u0000');
      let i = byKey.get(key);
      if (i === undefined) {
        byKey.set(key, (i = lists.length));
        lists.push(l);
      }
      return i;
    });
    for (const c of RESULT_F64_COLUMNS) out[c].set(p[c].subarray(0, n), at);
    out.modelKind.set(p.modelKind.subarray(0, n), at);
    out.reachesTarget.set(p.reachesTarget.subarray(0, n), at);
    out.stopped.set(p.stopped.subarray(0, n), at);
    out.nulls.set(p.nulls.subarray(0, n), at);
    out.excursions.set(p.excursions.subarray(0, n), at);
    for (let k = 0; k < n; k++) out.notes[at + k] = remap[p.notes[k] as number] as number;
    at += n;
  }
  out.noteLists = lists;
  return out;
}

/** An empty result table (no openings). */
export function noFeatureResults(range: CalibratedRange | null = null): FeatureResultTable {
  return emptyFeatureResultTable(emptyFeatureTable(0), range);
}
