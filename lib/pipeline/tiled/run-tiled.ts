/**
 * Tiled analysis: the same result as runAnalysis on the whole layout, computed from a TileSource one region at a
 * time so the polygons never have to be in memory together.
 *
 * Heavy, per-polygon work runs per tile (tile-work.ts: read, exact union, the core's coverage differences, the
 * openings the tile owns), on worker threads when a serialisable source spec is given. The light global stages run
 * once on the stitched coverage raster and opening list, through runAnalysis with them precomputed: windows,
 * effective density (FFT over the whole grid), local width, prediction, maps, flags, summary. So the kernel needs
 * no tile margin, and the result does not depend on the tiling: coverage differences are summed in the untiled
 * order, and every opening is measured once, whole, from the untiled union's pieces (plan.ts, tile-work.ts).
 *
 * Progress: the tile phase reports 'coverage' (core jobs) and 'features' (re-reads of wide openings) over the first
 * TILE_SHARE of the run, runAnalysis the rest. Cancel (signal / isCancelled) is checked whenever a job ends;
 * worker threads are then terminated.
 */
import { randomBytes } from 'node:crypto';
import { rmSync } from 'node:fs';
import { availableParallelism, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { FeatureFileWriter } from '../../jobs/feature-file-writer';
import { OpeningSpill } from './spill';
import type { ProcessModel } from '../../etch';
import { coverageFromDifferences } from '../../geometry/raster';
import type { GdsiiIndex } from '../../layout/gdsii-index';
import type { GdsiiTileSource } from '../../layout/gdsii-tile-source';
import type { TileSource } from '../../layout/tile-source';
import { AnalysisAbortedError } from '../errors';
import { runAnalysis, type AnalysisHooks, type AnalysisResult } from '../run-analysis';
import type { StreamedFeatures } from '../streamed-stages';
import type { AnalysisSettings } from '../settings';
import { headerLayout, planTiles, type PlanOptions, type TilePlan } from './plan';
import type { TileSourceSpec } from './sources';
import { stitchFeatures, type FeaturePart } from './stitch-features';
import { inlineExecutor, threadExecutor, type TileExecutor } from './tile-pool';
import { PENDING_SIZE, type TileJob, type TileJobResult } from './tile-work';
import { permuteFeatureTable } from '../../geometry/feature-table';

const TILE_SHARE = 0.6;

/** The source's GDSII index when it was built in shared memory for the spec's file: the threads then use it as it is. */
function sharedIndexOf(source: TileSource, spec: TileSourceSpec): GdsiiIndex | undefined {
  const index = (source as Partial<GdsiiTileSource>).index;
  return index?.shared && spec.kind === 'file' && resolve(index.path) === resolve(spec.path) ? index : undefined;
}
/** Rows per chunk of a spilled run's per-opening stages. */
const SPILL_CHUNK = 65_536;

export interface TiledOptions extends PlanOptions {
  /** Worker threads for the tile jobs (needs `spec`); 0 = on the calling thread. Default: 2 when a spec is given. */
  threads?: number;
  /** How each worker opens the source for itself. */
  spec?: TileSourceSpec;
  /** Redis URL for tile jobs on the queue (default TRENCHANT_REDIS_URL; null = never). Needs a non-memory spec. */
  queueUrl?: string | null;
  /**
   * Openings to a spill file once there are `minOpenings` of them (default TRENCHANT_SPILL_OPENINGS or
   * DEFAULT_SPILL_OPENINGS), in `dir` (default TRENCHANT_SPILL_DIR or the system's temporary folder); null = keep
   * them in memory whatever their number. A spilled run streams the per-opening stages (streamed-stages.ts): its
   * featureTable and features are empty, and its rows are in the feature file `result.featureFile` (written at
   * `featureFile`, default a temporary file the caller must move or delete). Same results either way.
   */
  spill?: { dir?: string; minOpenings?: number; featureFile?: string; chunkRows?: number } | null;
}

/** Openings above which a tiled run spills (≈ 400 B each in memory: ≈ 0.4 GB). */
export const DEFAULT_SPILL_OPENINGS = 1_000_000;

export interface TiledStats {
  plan: TilePlan;
  threads: number;
  /** Where the tile jobs ran. */
  via: TileExecutor['via'];
  tiles: number;
  /** Re-read jobs for openings wider than the margin, and the largest margin any needed (dbu). */
  growJobs: number;
  largestMarginDbu: number;
  /** Wall time of the tile phase and summed per-job stage times (across workers), ms. */
  tilePhaseMs: number;
  jobMs: { read: number; union: number; raster: number; features: number };
  /** Sampled peak of each worker's heap + external buffers, bytes (inline: the calling thread). */
  peakBytesPerWorker: number[];
  /** GDSII index passes the worker threads ran (0 when they used the source's shared index, inline or on the queue). */
  threadIndexPasses: number;
  /** Polygons read over all jobs / polygons in the etch layers: the cost of margins and re-reads. */
  readAmplification: number;
}

export type TiledAnalysisResult = AnalysisResult & {
  tiled: TiledStats;
  /** Set when the openings were spilled: the feature file holding every row (the caller owns it). */
  featureFile?: { path: string; count: number; bytes: number };
  /** Spilled runs: cursors open at once in the merge (≈ jobs per tile row). */
  spillCursors?: number;
};

function spillSettings(opt: TiledOptions['spill']): { dir: string; minOpenings: number; chunkRows: number; featureFile?: string } | null {
  if (opt === null) return null;
  const env = Number(process.env.TRENCHANT_SPILL_OPENINGS);
  const envMin = process.env.TRENCHANT_SPILL_OPENINGS?.trim() && Number.isInteger(env) && env >= 0 ? env : DEFAULT_SPILL_OPENINGS;
  return { dir: opt?.dir ?? process.env.TRENCHANT_SPILL_DIR ?? tmpdir(), minOpenings: opt?.minOpenings ?? envMin, chunkRows: Math.max(1, opt?.chunkRows ?? SPILL_CHUNK), ...(opt?.featureFile ? { featureFile: opt.featureFile } : {}) };
}

export async function runTiledAnalysis(source: TileSource, settings: AnalysisSettings, model: ProcessModel, opts: AnalysisHooks & TiledOptions = {}): Promise<TiledAnalysisResult> {
  const { onProgress, signal, isCancelled } = opts;
  const plan = planTiles(source.header, settings, opts);
  const cancelled = () => signal?.aborted === true || isCancelled?.() === true;
  if (cancelled()) throw new AnalysisAbortedError('coverage');
  const wantThreads = opts.spec ? Math.max(0, Math.min(opts.threads ?? 2, availableParallelism())) : 0;
  // TRENCHANT_REDIS_URL and a spec other processes can open: tiles become queue jobs (tile-queue.ts).
  const redisUrl = opts.queueUrl === undefined ? process.env.TRENCHANT_REDIS_URL : opts.queueUrl ?? undefined;
  const executor: TileExecutor =
    redisUrl && opts.spec && opts.spec.kind !== 'memory'
      ? await (await import('./tile-queue')).queueExecutor(redisUrl, opts.spec, plan, Math.max(1, opts.threads ?? 2))
      : ((wantThreads > 0 && opts.spec ? threadExecutor(opts.spec, plan, wantThreads, sharedIndexOf(source, opts.spec)) : null) ?? inlineExecutor(source, plan));
  const t0 = performance.now();
  const { nx, ny } = plan.grid;
  const acc = new Float64Array(nx * ny);
  const parts: FeaturePart[] = [];
  const measured = new Set<string>();
  const jobMs = { read: 0, union: 0, raster: 0, features: 0 };
  let growJobs = 0, largestMargin = plan.marginDbu, polygonsRead = 0;
  const coreJobs = plan.ntx * plan.nty;
  let coreDone = 0;
  const spillAt = spillSettings(opts.spill);
  let spill: OpeningSpill | null = null;
  let held = 0;
  const keep = (part: FeaturePart) => {
    if (spill) return spill.add(part);
    parts.push(part);
    held += part.features.count;
    if (spillAt && held >= spillAt.minOpenings && held > 0) {
      spill = new OpeningSpill(spillAt.dir);
      for (const p of parts) spill.add(p);
      parts.length = 0;
    }
  };
  onProgress?.('coverage', 0);
  try {
    const queue: TileJob[] = [];
    for (let t = 0; t < coreJobs; t++) queue.push({ kind: 'core', tile: t, marginDbu: plan.marginDbu });
    const running = new Set<Promise<void>>();
    let firstError: unknown = null;
    const take = (r: TileJobResult) => {
      if (r.win && r.acc) {
        const { i0, j0, nx: wn, ny: wm } = r.win;
        for (let j = 0; j < wm; j++) acc.set(r.acc.subarray(j * wn, (j + 1) * wn), (j0 + j) * nx + i0);
        coreDone++;
      }
      // Two partial views reported by one tile can be the same opening: keep it once (its key names it). Only
      // re-reads can repeat one: a core job measures each complete opening it owns once, and a pending partial view
      // never joins an opening that was complete in the same read.
      if (r.kind === 'core') keep({ features: r.features, keys: r.keys });
      else {
        const fresh: number[] = [];
        for (let i = 0; i < r.features.count; i++) {
          const name = `${r.keys[2 * i]}:${r.keys[2 * i + 1]}`;
          if (!measured.has(name)) {
            measured.add(name);
            fresh.push(i);
          }
        }
        keep({ features: permuteFeatureTable(r.features, Uint32Array.from(fresh)), keys: fresh.flatMap((i) => [r.keys[2 * i] as number, r.keys[2 * i + 1] as number]) });
      }
      for (const k of ['read', 'union', 'raster', 'features'] as const) jobMs[k] += r.stats.ms[k];
      polygonsRead += r.stats.polygons;
      // One re-read per pending opening, around its partial view with twice the margin.
      for (let k = 0; k + PENDING_SIZE <= r.pending.length; k += PENDING_SIZE) {
        growJobs++;
        const marginDbu = 2 * r.marginDbu;
        largestMargin = Math.max(largestMargin, marginDbu);
        const q = r.pending;
        queue.push({ kind: 'grow', tile: r.tile, marginDbu, seeds: [q[k] as number, q[k + 1] as number], boxDbu: [q[k + 2] as number, q[k + 3] as number, q[k + 4] as number, q[k + 5] as number] });
      }
      onProgress?.(coreDone < coreJobs ? 'coverage' : 'features', TILE_SHARE * (coreDone / (coreJobs + 1)));
    };
    const slots = Math.max(1, executor.threads);
    while (queue.length > 0 || running.size > 0) {
      while (queue.length > 0 && running.size < slots && !firstError) {
        const job = queue.shift() as TileJob;
        const p: Promise<void> = executor
          .run(job)
          .then(take, (e: unknown) => {
            firstError ??= e;
          })
          .finally(() => running.delete(p));
        running.add(p);
      }
      if (running.size === 0) break;
      await Promise.race(running);
      if (firstError) throw firstError;
      if (cancelled()) throw new AnalysisAbortedError(coreDone < coreJobs ? 'coverage' : 'features');
    }
  } catch (err) {
    (spill as OpeningSpill | null)?.close();
    throw err;
  } finally {
    await executor.close();
  }
  const tilePhaseMs = performance.now() - t0;
  const coverage = Float32Array.from(coverageFromDifferences(acc, plan.grid, nx));
  const hooks: AnalysisHooks = {
    onProgress: (stage, f) => onProgress?.(stage, TILE_SHARE + (1 - TILE_SHARE) * f),
    ...(signal ? { signal } : {}),
    ...(isCancelled ? { isCancelled } : {}),
  };
  let result: AnalysisResult;
  let featureFile: TiledAnalysisResult['featureFile'];
  let spillCursors = 0;
  const spilled = spill as OpeningSpill | null;
  if (spilled) {
    const path = spillAt?.featureFile ?? join(spillAt?.dir ?? tmpdir(), `trenchant-features-${process.pid}-${randomBytes(6).toString('hex')}.trfeat`);
    const writer = new FeatureFileWriter(path, spilled.count);
    try {
      const streamed: StreamedFeatures = { count: spilled.count, forEachChunk: (each) => spilled.forEachChunk(spillAt?.chunkRows ?? SPILL_CHUNK, each), onResults: (t) => writer.write(t) };
      result = runAnalysis(headerLayout(source.header), settings, model, hooks, { coverage, features: streamed, polygonCount: plan.polygonCount });
      featureFile = { path, count: spilled.count, bytes: writer.finish() };
      spillCursors = spilled.peakCursors;
    } catch (err) {
      writer.close();
      rmSync(path, { force: true });
      throw err;
    } finally {
      spilled.close();
    }
  } else {
    // Empties `parts`: the per-tile tables go before the global stages (≈ 110 bytes per opening).
    const features = stitchFeatures(parts);
    result = runAnalysis(headerLayout(source.header), settings, model, hooks, { coverage, features, polygonCount: plan.polygonCount });
  }
  const round = (v: number) => Math.round(v * 10) / 10;
  const timings = result.summary.timingsMs;
  // The tile phase did the coverage and features stages' work; runAnalysis only took the stitched results.
  result.summary.timingsMs = { ...timings, tiles: round(tilePhaseMs), coverage: round(tilePhaseMs + (timings.coverage ?? 0)) };
  // Added in place: spreading `result` would read its lazy `features` getter and build one object per opening.
  const tiled: TiledStats = {
    plan,
    threads: executor.threads,
    via: executor.via,
    tiles: coreJobs,
    growJobs,
    largestMarginDbu: largestMargin,
    tilePhaseMs: round(tilePhaseMs),
    jobMs: { read: round(jobMs.read), union: round(jobMs.union), raster: round(jobMs.raster), features: round(jobMs.features) },
    peakBytesPerWorker: executor.peakBytes(),
    threadIndexPasses: (executor.indexPasses?.() ?? []).reduce((a, b) => a + b, 0),
    readAmplification: plan.polygonCount > 0 ? Math.round((polygonsRead / plan.polygonCount) * 1000) / 1000 : 1,
  };
  return Object.assign(result, { tiled }, featureFile ? { featureFile, spillCursors } : {});
}
