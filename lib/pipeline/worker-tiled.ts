/**
 * The analysis worker's path for layouts too large to read whole (lib/layout/whole-read-limit.ts): the GDSII file
 * is indexed on disk (gdsii-tile-source.ts) and analysed tile by tile (tiled/run-tiled.ts), giving the same maps,
 * openings, flags and summary as a whole read, plus a record of the tiling in the summary. Tiles are sized from the
 * analysis memory budget (tiled/tile-budget.ts). They run on this thread by default, or on
 * TRENCHANT_TILE_THREADS worker threads that read this analysis's own index (built in shared memory), or
 * as jobs on the `tiles` queue (tile-queue.ts) when TRENCHANT_REDIS_URL is set, the task names the layout's storage
 * key and at least one tile worker listens: tile workers open the layout through the storage interface (their read
 * cache on S3, the data folder's file on the local backend), not this process's local copy. Without a listening
 * tile worker the tiles stay here, so an analysis never waits on an empty queue. TRENCHANT_TILE_QUEUE=off keeps them
 * here always.
 */
import { availableParallelism } from 'node:os';
import type { ProcessModel } from '../etch';
import type { TileSource } from '../layout/tile-source';
import type { AnalysisHooks, AnalysisResult } from './run-analysis';
import type { AnalysisSettings } from './settings';
import type { TiledRunSummary } from './summary';
import { planTiles } from './tiled/plan';
import { runTiledAnalysis } from './tiled/run-tiled';
import type { TileSourceSpec } from './tiled/sources';
import { tileSizeForBudget } from './tiled/tile-budget';

/** Tile worker threads: TRENCHANT_TILE_THREADS, default 2 on machines with 4 or more cores, else 0 (this thread). */
export function tileThreads(env: Record<string, string | undefined> = process.env): number {
  const v = Number(env.TRENCHANT_TILE_THREADS);
  if (env.TRENCHANT_TILE_THREADS !== undefined && env.TRENCHANT_TILE_THREADS.trim() !== '' && Number.isInteger(v) && v >= 0) return Math.min(v, 64);
  return availableParallelism() >= 4 ? 2 : 0;
}

export interface TiledWorkerInput {
  source: TileSource;
  /** The local file the source reads (worker threads open it again). */
  path: string;
  topCell?: string;
  /** The layout's storage key and store, for tile workers on other machines. */
  stored?: { key: string; where: string };
  fileBytes: number;
  wholeReadBytes: number;
  memoryMb: number;
}

/** Tile jobs one analysis keeps on the queue at once: TRENCHANT_TILE_QUEUE_SLOTS, default 8. */
export function tileQueueSlots(env: Record<string, string | undefined> = process.env): number {
  const v = Number(env.TRENCHANT_TILE_QUEUE_SLOTS);
  return Number.isInteger(v) && v >= 1 ? Math.min(v, 256) : 8;
}

/** The Redis URL to send this analysis's tiles to, or null to run them in this process (see the module doc). */
export async function tileQueueUrl(input: Pick<TiledWorkerInput, 'stored'>, env: Record<string, string | undefined> = process.env): Promise<string | null> {
  const url = env.TRENCHANT_REDIS_URL?.trim();
  if (!url || !input.stored || env.TRENCHANT_TILE_QUEUE?.trim().toLowerCase() === 'off') return null;
  const { tileWorkerCount } = await import('./tiled/tile-queue');
  return (await tileWorkerCount(url).catch(() => 0)) > 0 ? url : null;
}

export async function analyseInTiles(input: TiledWorkerInput, settings: AnalysisSettings, model: ProcessModel, hooks: AnalysisHooks): Promise<AnalysisResult> {
  const threads = tileThreads();
  const first = planTiles(input.source.header, settings);
  // Tile size from the memory of one tile job per thread of this machine, wherever the jobs run (the tiling does
  // not change the result; a tile worker holds at most its own thread count of jobs).
  const budget = tileSizeForBudget(first, input.memoryMb, Math.max(1, threads));
  const queueUrl = await tileQueueUrl(input);
  const topCell = input.topCell ? { topCell: input.topCell } : {};
  const spec: TileSourceSpec = queueUrl && input.stored ? { kind: 'stored', key: input.stored.key, where: input.stored.where, ...topCell } : { kind: 'file', path: input.path, ...topCell };
  const r = await runTiledAnalysis(input.source, settings, model, { ...hooks, tileUm: budget.tileUm, threads: queueUrl ? tileQueueSlots() : threads, spec, queueUrl });
  const t = r.tiled;
  const tiled: TiledRunSummary = {
    tiles: t.tiles,
    tileUm: t.plan.tileUm,
    marginUm: t.plan.marginDbu * t.plan.dbuUm,
    rereads: t.growJobs,
    threads: t.threads,
    via: t.via,
    fileBytes: input.fileBytes,
    wholeReadBytes: input.wholeReadBytes,
    reason: budget.reason,
  };
  // In place (a spread or rest copy of the result would build its lazy per-opening objects).
  r.summary = { ...r.summary, tiled };
  return r;
}
