/**
 * The analysis worker's path for layouts too large to read whole (lib/layout/whole-read-limit.ts): the GDSII file
 * is indexed on disk (gdsii-tile-source.ts) and analysed tile by tile (tiled/run-tiled.ts), giving the same maps,
 * openings, flags and summary as a whole read, plus a record of the tiling in the summary. Tiles are sized from the
 * analysis memory budget (tiled/tile-budget.ts). They run on this thread by default, or on
 * TRENCHANT_TILE_THREADS worker threads that each open the file themselves (each then holds its own index); never
 * on the queue's tile workers, which cannot see this process's local copy of the layout.
 */
import { availableParallelism } from 'node:os';
import type { ProcessModel } from '../etch';
import type { TileSource } from '../layout/tile-source';
import type { AnalysisHooks, AnalysisResult } from './run-analysis';
import type { AnalysisSettings } from './settings';
import type { TiledRunSummary } from './summary';
import { planTiles } from './tiled/plan';
import { runTiledAnalysis } from './tiled/run-tiled';
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
  fileBytes: number;
  wholeReadBytes: number;
  memoryMb: number;
}

export async function analyseInTiles(input: TiledWorkerInput, settings: AnalysisSettings, model: ProcessModel, hooks: AnalysisHooks): Promise<AnalysisResult> {
  const threads = tileThreads();
  const first = planTiles(input.source.header, settings);
  const budget = tileSizeForBudget(first, input.memoryMb, Math.max(1, threads));
  const spec = { kind: 'file' as const, path: input.path, ...(input.topCell ? { topCell: input.topCell } : {}) };
  const r = await runTiledAnalysis(input.source, settings, model, { ...hooks, tileUm: budget.tileUm, threads, spec, queueUrl: null });
  const t = r.tiled;
  const tiled: TiledRunSummary = {
    tiles: t.tiles,
    tileUm: t.plan.tileUm,
    marginUm: t.plan.marginDbu * t.plan.dbuUm,
    rereads: t.growJobs,
    threads: t.threads,
    fileBytes: input.fileBytes,
    wholeReadBytes: input.wholeReadBytes,
    reason: budget.reason,
  };
  // In place (a spread or rest copy of the result would build its lazy per-opening objects).
  r.summary = { ...r.summary, tiled };
  return r;
}
