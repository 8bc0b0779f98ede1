/**
 * The per-opening stages of an analysis (prediction → risk and painted maps → flags → summary tallies) over
 * openings given a chunk at a time in id order, for a tiled analysis whose openings are spilled to disk
 * (tiled/spill.ts): each chunk is predicted, painted, offered to the flag collector, tallied and handed to the
 * caller (the feature-file writer), then dropped. Memory depends on the chunk size, the grid and the flag cap, not
 * on the number of openings. Every step is the in-memory stage's arithmetic in the same row order — predictions
 * depend on their row alone; note lists are renumbered by first use over all rows, as one pass numbers them;
 * painting and tallies run in row order — so the results are the same (tests/pipeline/tiled-spill.test.ts).
 */
import type { FeatureTable, Grid } from '../geometry';
import type { ProcessModel } from '../etch';
import type { FeatureResultTable } from './feature-results';
import type { FlagCollector } from './flag-collector';
import { predictFeatureTable } from './predict-features';
import { featureRisk, StreamPainter, type FeatureMaps } from './result-maps';
import type { ResolvedLimits } from './settings';
import type { SeverityMap, Flag } from './flags';
import { RowTally } from './summary';
import { StreamedTableFlags } from './table-flags';

/** Openings in id order (ids 1..count set), a chunk at a time; each chunk may be dropped once `each` returns. */
export interface StreamedFeatures {
  count: number;
  forEachChunk(each: (t: FeatureTable) => void): void;
  /** Each chunk's results, in row order (for a writer). */
  onResults?(t: FeatureResultTable): void;
}

export interface StreamedInput {
  effective: Float32Array;
  coverage: Float32Array;
  grid: Grid;
  model: ProcessModel;
  exposedFraction: number;
  limits: ResolvedLimits;
  severities: SeverityMap | undefined;
  maxListedFlags: number;
  /** Rows done so far of the total (progress and cancel checks; may throw). */
  onTick(done: number, total: number): void;
}

export interface StreamedOutput {
  painted: FeatureMaps;
  tally: RowTally;
  /** Resolver for collector.list(). */
  resolve: (ref: number, id: string) => Flag;
}

export function runStreamedStages(src: StreamedFeatures, x: StreamedInput, collector: FlagCollector): StreamedOutput {
  const painter = new StreamPainter(x.coverage, x.grid);
  const flags = new StreamedTableFlags(collector, x.limits, x.severities, x.maxListedFlags);
  const tally = new RowTally();
  // Note lists over all rows, numbered by first use (each chunk's own lists are renumbered into these).
  const lists: (readonly string[])[] = [];
  const byContent = new Map<string, number>();
  let base = 0;
  src.forEachChunk((chunk) => {
    const t = predictFeatureTable(chunk, x.effective, x.grid, x.model, { exposedFraction: x.exposedFraction });
    if (lists.length === 0) {
      lists.push(t.noteLists[0] as readonly string[]);
      byContent.set('', 0);
    }
    const remap = new Int32Array(t.noteLists.length).fill(-1);
    remap[0] = 0;
    for (let k = 0; k < t.count; k++) {
      const li = t.notes[k] as number;
      let to = remap[li] as number;
      if (to < 0) {
        const list = t.noteLists[li] as readonly string[];
        const content = list.join('\u0000');
        let at = byContent.get(content);
        if (at === undefined) byContent.set(content, (at = lists.push(list) - 1));
        remap[li] = to = at;
      }
      t.notes[k] = to;
    }
    t.noteLists = lists;
    const risks = new Float64Array(t.count);
    const riskInput = { depthUm: 0, overEtchUm: 0, widthUm: 0 };
    for (let k = 0; k < t.count; k++) {
      riskInput.depthUm = t.depthUm[k] as number;
      riskInput.overEtchUm = t.overEtchUm[k] as number;
      riskInput.widthUm = t.widthUm[k] as number;
      risks[k] = featureRisk(riskInput, x.limits);
    }
    painter.add(t, risks);
    flags.offer(t, base);
    tally.add(t);
    src.onResults?.(t);
    base += t.count;
    x.onTick(base, src.count);
  });
  if (base !== src.count) throw new Error(`streamed openings: ${base} rows given, ${src.count} announced`);
  return { painted: painter.finish(), tally, resolve: flags.resolver() };
}
