/**
 * The per-opening flag rules over a result table: every row is offered to the collector with its ranking facts
 * only (offerDeferred, no message), and the flags that end up listed are built afterwards from their rows. A
 * million failing openings cost counts and a few rank records, not a million messages.
 */
import { FEATURE_KINDS } from '../geometry';
import { MODEL_KINDS, NULL_DEPTH_SIGMA, type FeatureResultTable } from './feature-results';
import type { FlagCollector } from './flag-collector';
import { featureFlagsInto, type FeatureCheckInput, type Flag, type FlagSink, type SeverityMap } from './flags';
import { excursionsOf } from './predict-features';
import type { ResolvedLimits } from './settings';

/** Fills `input` (one object reused for every row) with row k of the table. */
function fillInput(input: FeatureCheckInput, t: FeatureResultTable, k: number, noExcursions: FeatureCheckInput['excursions']): void {
  const f = t.features;
  input.featureId = f.id[k] as number;
  input.shape = FEATURE_KINDS[f.kind[k] as number] as string;
  input.modelKind = MODEL_KINDS[t.modelKind[k] as number] as 'trench' | 'hole';
  input.bboxUm[0] = f.x0Um[k] as number;
  input.bboxUm[1] = f.y0Um[k] as number;
  input.bboxUm[2] = f.x1Um[k] as number;
  input.bboxUm[3] = f.y1Um[k] as number;
  input.centroidUm[0] = f.centroidXUm[k] as number;
  input.centroidUm[1] = f.centroidYUm[k] as number;
  input.widthUm = t.widthUm[k] as number;
  input.depthUm = t.depthUm[k] as number;
  input.overEtchUm = t.overEtchUm[k] as number;
  input.excursions = t.excursions[k] === 0 ? noExcursions : excursionsOf(t.range, input.widthUm, t.aspectRatio[k] as number, t.effectiveDensity[k] as number);
  input.depthSigmaUm = (t.nulls[k] as number) & NULL_DEPTH_SIGMA ? null : (t.depthSigmaUm[k] as number);
}

/**
 * Offers every row's flags to `collector` (deferred) and returns the resolver its list() needs. `onRow(k)` is
 * called every 4096 rows (progress and cancel checks).
 */
export function offerTableFlags(collector: FlagCollector, t: FeatureResultTable, limits: ResolvedLimits, severities: SeverityMap | undefined, onRow?: (k: number) => void): (ref: number, id: string) => Flag {
  const input: FeatureCheckInput = { featureId: 0, shape: '', modelKind: 'trench', bboxUm: [0, 0, 0, 0], centroidUm: [0, 0], widthUm: 0, depthUm: 0, overEtchUm: 0, excursions: [], depthSigmaUm: null };
  const noExcursions = excursionsOf(null, 0, 0, 0);
  let row = 0;
  const sink: FlagSink = { offer: (id, kind, severity, measured, limit) => collector.offerDeferred(id, kind, severity, measured, limit, row) };
  for (let k = 0; k < t.count; k++) {
    if (onRow && k % 4096 === 0) onRow(k);
    row = k;
    fillInput(input, t, k, noExcursions);
    featureFlagsInto(sink, input, limits, severities);
  }
  return (ref, id) => {
    fillInput(input, t, ref, noExcursions);
    let found: Flag | undefined;
    featureFlagsInto({ offer: (fid, _k, _s, _m, _l, build) => void (fid === id && (found = build())) }, input, limits, severities);
    if (!found) throw new Error(`flag ${id} not raised again by row ${ref}`);
    return found;
  };
}

/**
 * The flags of a streamed analysis, whose result rows are offered a chunk at a time and then dropped: rows are
 * offered like offerTableFlags does (ref = the row's index over the whole analysis), and each row that has a flag
 * kept for now is copied (its check input, a few numbers) so the listed flags can be built at the end. Copies of
 * rows no longer kept are dropped now and then, so memory stays near the collector's cap.
 */
export class StreamedTableFlags {
  private readonly rows = new Map<number, FeatureCheckInput>();
  private readonly input: FeatureCheckInput = { featureId: 0, shape: '', modelKind: 'trench', bboxUm: [0, 0, 0, 0], centroidUm: [0, 0], widthUm: 0, depthUm: 0, overEtchUm: 0, excursions: [], depthSigmaUm: null };
  private readonly noExcursions = excursionsOf(null, 0, 0, 0);
  constructor(
    private readonly collector: FlagCollector,
    private readonly limits: ResolvedLimits,
    private readonly severities: SeverityMap | undefined,
    private readonly cap: number,
  ) {}

  /** Offers rows [0, t.count) of a chunk whose first row is row `base` of the analysis. */
  offer(t: FeatureResultTable, base: number, onRow?: (k: number) => void): void {
    const input = this.input;
    let ref = 0, kept = false;
    const sink: FlagSink = { offer: (id, kind, severity, measured, limit) => void (this.collector.offerDeferred(id, kind, severity, measured, limit, ref) && (kept = true)) };
    for (let k = 0; k < t.count; k++) {
      if (onRow && k % 4096 === 0) onRow(k);
      ref = base + k;
      kept = false;
      fillInput(input, t, k, this.noExcursions);
      featureFlagsInto(sink, input, this.limits, this.severities);
      if (kept) this.rows.set(ref, { ...input, bboxUm: [...input.bboxUm] as FeatureCheckInput['bboxUm'], centroidUm: [...input.centroidUm] as FeatureCheckInput['centroidUm'] });
    }
    if (this.rows.size > 4 * this.cap + 4096) this.prune();
  }

  private prune(): void {
    const keep = this.collector.keptRefs();
    for (const ref of this.rows.keys()) if (!keep.has(ref)) this.rows.delete(ref);
  }

  /** The resolver for collector.list(). */
  resolver(): (ref: number, id: string) => Flag {
    return (ref, id) => {
      const input = this.rows.get(ref);
      if (!input) throw new Error(`flag ${id}: row ${ref} was not kept`);
      let found: Flag | undefined;
      featureFlagsInto({ offer: (fid, _k, _s, _m, _l, build) => void (fid === id && (found = build())) }, input, this.limits, this.severities);
      if (!found) throw new Error(`flag ${id} not raised again by row ${ref}`);
      return found;
    };
  }
}
