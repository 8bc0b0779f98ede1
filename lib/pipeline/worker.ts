/**
 * Worker-thread entry for one analysis, shaped for piscina: `pool.run(task, { transferList: [port] })` with the
 * default export as the task function. Thin on purpose: read the layout, validate, runAnalysis, write the maps. A
 * GDSII file above the whole-read size (TRENCHANT_WHOLE_READ_MB) is never read whole: it is indexed on disk and
 * analysed tile by tile (worker-tiled.ts) with the same outputs; its summary then records the tiling.
 *
 * Task (AnalysisTask): { layoutPath, settings, model, outDir, port?, cancelFlag?, topCell?, maxResultBytes? } —
 * settings and model are raw JSON and are validated here (so a stored analysis replays exactly as stored).
 * maxResultBytes caps what the task may write (maps + per-opening file); over it nothing is written and the task
 * resolves { ok: false, code: 'over-budget' } naming the limit and the size.
 *
 * Messages worker → parent on `port` (WorkerMessage):
 *   { type: 'progress', stage, fraction }   stage in ANALYSIS_STAGES order then 'reading' first and 'writing' /
 *                                           'done' last; fraction = overall 0..1, non-decreasing; throttled to
 *                                           one per 100 ms plus every stage change.
 * Cancelling (the task then resolves { ok: false, code: 'cancelled' }):
 *   - cancelFlag: an Int32Array over a SharedArrayBuffer (length ≥ 1); the parent sets it with
 *     Atomics.store(flag, 0, 1). Seen at every check point, also in the middle of the (synchronous) analysis.
 *     This is the one to use for a Cancel button.
 *   - { type: 'cancel' } posted on `port`: seen only while the worker awaits I/O (reading the layout, writing
 *     maps), because the analysis itself blocks the worker's event loop.
 *   - piscina's own `signal` option: terminates the thread at once (no clean result).
 *
 * Result (AnalysisTaskResult): expected failures resolve `{ ok: false, code, message, issues? }` so the job runner
 * can store them without parsing messages; anything else (a bug) rejects and the runner marks the job failed.
 * Files: one TRGRID1 file per map in outDir (names from map-files.ts) and the per-opening results as one TRFEAT1
 * column file (lib/jobs/feature-file.ts), all written atomically; the result names the feature file instead of
 * carrying a million objects through structured clone. A failed task leaves only complete files, which the runner
 * may delete.
 */
import { statSync } from 'node:fs';
import { mkdir, unlink } from 'node:fs/promises';
import { join } from 'node:path';
import type { MessagePort } from 'node:worker_threads';
import { encodeFeatureFile, FEATURE_FILE_NAME } from '../jobs/feature-file';
import { lowerThreadPriority } from '../jobs/thread-priority';
import { parseProcessModel } from '../etch';
import { LayoutReadError } from '../layout/errors';
import { readLayoutFile } from '../layout/read';
import { openGdsiiTileSource } from '../layout/gdsii-tile-source';
import type { TileSource } from '../layout/tile-source';
import { readsThroughIndex, wholeReadLimitBytes } from '../layout/whole-read-limit';
import { bytesIntoPlace, moveIntoPlace } from '../storage/place-file';
import { headerLayout } from './tiled/plan';
import { analyseInTiles } from './worker-tiled';
import type { TiledAnalysisResult } from './tiled/run-tiled';
import { AnalysisInputError, isAbortError } from './errors';
import type { Flag } from './flags';
import type { GridMap, GridUnit } from './grid-file';
import { writeGridFile } from './grid-file-node';
import { mapFileName } from './map-files';
import { runAnalysis, type AnalysisStage } from './run-analysis';
import { applyPixelBudget, DEFAULT_ANALYSIS_MEMORY_MB, parseAnalysisSettings, type FieldIssue } from './settings';
import { dieFrame } from './etch-layers';
import type { AnalysisSummary } from './summary';

export interface AnalysisTask {
  layoutPath: string;
  settings: unknown;
  model: unknown;
  outDir: string;
  /** Transferred MessagePort for progress and cancel (see module doc). */
  port?: MessagePort;
  /** Shared cancel flag: non-zero element 0 = cancel (see module doc). */
  cancelFlag?: Int32Array;
  topCell?: string;
  /** Most bytes this task may write (maps + per-opening file); unset = no cap. */
  maxResultBytes?: number;
  /** How the refusal names that cap, e.g. "this team's limit of 2,048 MiB per analysis". */
  resultBudgetLabel?: string;
  /** GDSII files larger than this are analysed tile by tile from an on-disk index (default TRENCHANT_WHOLE_READ_MB). */
  wholeReadBytes?: number;
  /** The layout's storage key and store (ObjectStore.where): lets tiles run on queue tile workers (worker-tiled.ts). */
  storedLayout?: { key: string; where: string };
}

/** The per-opening results file the task wrote (inside outDir). */
export interface FeatureFileInfo {
  file: string;
  count: number;
  bytes: number;
}

export type WorkerStage = 'reading' | AnalysisStage | 'writing';
export type WorkerMessage = { type: 'progress'; stage: WorkerStage; fraction: number };
export type ParentMessage = { type: 'cancel' };

export interface MapFile {
  kind: GridMap['kind'];
  unit: GridUnit;
  /** File name inside outDir. */
  file: string;
  grid: GridMap['grid'];
  meta: Record<string, unknown>;
  bytes: number;
}

export type AnalysisTaskResult =
  | { ok: true; summary: AnalysisSummary; featureFile: FeatureFileInfo; flags: Flag[]; maps: MapFile[] }
  | { ok: false; code: 'cancelled' | 'bad-settings' | 'bad-model' | 'layout-unreadable' | 'bad-input' | 'over-budget'; message: string; issues?: FieldIssue[] };

// The request thread should win the CPU over analyses (a pool thread runs many tasks; this is per thread).
lowerThreadPriority();

/** Overall fraction given to reading the layout and to writing maps; the analysis gets the rest. */
const READ_SHARE = 0.15;
const WRITE_SHARE = 0.05;

function progressPoster(port: MessagePort | undefined) {
  let lastStage = '';
  let lastAt = 0;
  let lastFraction = 0;
  return (stage: WorkerStage, fraction: number) => {
    if (!port) return;
    const now = Date.now();
    fraction = Math.max(lastFraction, Math.min(1, fraction));
    if (stage === lastStage && now - lastAt < 100 && fraction < 1) return;
    lastStage = stage;
    lastAt = now;
    lastFraction = fraction;
    const msg: WorkerMessage = { type: 'progress', stage, fraction };
    port.postMessage(msg);
  };
}

export default async function analyse(task: AnalysisTask): Promise<AnalysisTaskResult> {
  const controller = new AbortController();
  const onMessage = (m: ParentMessage) => {
    if (m && m.type === 'cancel') controller.abort();
  };
  task.port?.on('message', onMessage);
  const post = progressPoster(task.port);
  let source: TileSource | null = null;
  let spilledFile: { path: string; count: number; bytes: number } | null = null;
  try {
    const settings = parseAnalysisSettings(task.settings);
    if (!settings.ok) return { ok: false, code: 'bad-settings', message: `settings: ${settings.issues.map((i) => `${i.path || '(root)'}: ${i.message}`).join('; ')}`, issues: settings.issues };
    const model = parseProcessModel(task.model);
    if (!model.ok) return { ok: false, code: 'bad-model', message: `process model: ${model.issues.map((i) => `${i.path}: ${i.message}`).join('; ')}`, issues: model.issues };

    post('reading', 0);
    const flag = task.cancelFlag;
    const isCancelled = () => controller.signal.aborted || (flag !== undefined && Atomics.load(flag, 0) !== 0);
    // A GDSII file above the whole-read size is indexed on disk and analysed tile by tile (worker-tiled.ts).
    const wholeReadBytes = task.wholeReadBytes ?? wholeReadLimitBytes();
    if (readsThroughIndex(task.layoutPath, wholeReadBytes)) {
      // The reader polls `aborted` only: this view of it also sees the shared cancel flag, inside the index pass and tile reads.
      const readSignal = { get aborted() { return isCancelled(); } } as AbortSignal;
      source = openGdsiiTileSource(task.layoutPath, {
        // In shared memory: tile threads of this analysis (TRENCHANT_TILE_THREADS) read this index, not their own.
        shared: true,
        signal: readSignal,
        onProgress: (bytes, size) => post('reading', (READ_SHARE * bytes) / Math.max(1, size)),
        ...(task.topCell ? { topCell: task.topCell } : {}),
      });
    }
    const layout = source ? headerLayout(source.header) : await readLayoutFile(task.layoutPath, { signal: controller.signal, ...(task.topCell ? { topCell: task.topCell } : {}) });
    // Memory budget: the automatic pixel is chosen within it; an explicit pixel beyond it is refused by name.
    const bbox = layout.bboxDbu;
    const dieUm: [number, number] = bbox ? [(bbox[2] - bbox[0]) * layout.dbuUm, (bbox[3] - bbox[1]) * layout.dbuUm] : [0, 0];
    const budgeted = applyPixelBudget(settings.settings, dieUm, analysisMemoryMb());
    if (!budgeted.ok) return { ok: false, code: 'bad-input', message: budgeted.message };
    if (task.maxResultBytes !== undefined && bbox) {
      // Maps alone (coverage, effective density, local width, aspect ratio, depth, risk: float32 each) already
      // over the write cap: refuse before computing anything.
      const { grid } = dieFrame(layout, budgeted.settings);
      const mapBytes = 6 * 4 * grid.nx * grid.ny;
      if (mapBytes > task.maxResultBytes) {
        const label = task.resultBudgetLabel ?? `the limit of ${(task.maxResultBytes / MiB).toFixed(0)} MiB per analysis`;
        return { ok: false, code: 'over-budget', message: overBudgetMessage(mapBytes, label, `6 maps of ${grid.nx} × ${grid.ny} pixels at ${grid.pixelUm} µm`) };
      }
    }
    const hooks = {
      signal: controller.signal,
      ...(flag ? { isCancelled: () => Atomics.load(flag, 0) !== 0 } : {}),
      onProgress: (stage: AnalysisStage | 'done', f: number) => post(stage === 'done' ? 'writing' : stage, READ_SHARE + (1 - READ_SHARE - WRITE_SHARE) * f),
    };
    const result = source
      ? await analyseInTiles(
          { source, path: task.layoutPath, ...(task.topCell ? { topCell: task.topCell } : {}), ...(task.storedLayout ? { stored: task.storedLayout } : {}), fileBytes: statSync(task.layoutPath).size, wholeReadBytes, memoryMb: analysisMemoryMb() },
          budgeted.settings,
          model.model,
          hooks,
        )
      : runAnalysis(layout, budgeted.settings, model.model, hooks);
    source?.close();
    source = null;
    // A tiled run with many openings spilled them and wrote its feature file itself (a temporary file we own).
    spilledFile = (result as Partial<TiledAnalysisResult>).featureFile ?? null;
    const featureBytes = spilledFile ? { body: null, tables: null, byteLength: spilledFile.bytes } : encodeFeatureFile(result.featureTable);
    const featureCount = spilledFile ? spilledFile.count : result.featureTable.count;
    // TRGRID1 header + metadata stays far below 64 KiB; float32 samples dominate.
    const mapBytes = result.maps.reduce((n, m) => n + m.grid.nx * m.grid.ny * 4 + 65_536, 0);
    const planned = featureBytes.byteLength + mapBytes;
    if (task.maxResultBytes !== undefined && planned > task.maxResultBytes) {
      const label = task.resultBudgetLabel ?? `the limit of ${(task.maxResultBytes / MiB).toFixed(0)} MiB per analysis`;
      return { ok: false, code: 'over-budget', message: overBudgetMessage(planned, label, `${featureCount} openings, ${result.maps.length} maps`) };
    }
    if (isCancelled()) return cancelled();

    await mkdir(task.outDir, { recursive: true });
    if (spilledFile) await moveIntoPlace(spilledFile.path, join(task.outDir, FEATURE_FILE_NAME));
    else if (featureBytes.body && featureBytes.tables) await bytesIntoPlace(join(task.outDir, FEATURE_FILE_NAME), [featureBytes.body, featureBytes.tables]);
    spilledFile = null;
    const featureFile: FeatureFileInfo = { file: FEATURE_FILE_NAME, count: featureCount, bytes: featureBytes.byteLength };
    const maps: MapFile[] = [];
    for (const [n, map] of result.maps.entries()) {
      if (isCancelled()) return cancelled();
      const file = mapFileName(map);
      const bytes = await writeGridFile(join(task.outDir, file), map);
      maps.push({ kind: map.kind, unit: map.unit, file, grid: map.grid, meta: map.meta, bytes });
      post('writing', 1 - WRITE_SHARE + (WRITE_SHARE * (n + 1)) / result.maps.length);
    }
    post('done', 1);
    return { ok: true, summary: result.summary, featureFile, flags: result.flags, maps };
  } catch (err) {
    if (isAbortError(err) || (err instanceof LayoutReadError && err.code === 'aborted')) return cancelled();
    if (err instanceof LayoutReadError) return { ok: false, code: 'layout-unreadable', message: err.message };
    if (err instanceof AnalysisInputError) return { ok: false, code: 'bad-input', message: err.message };
    throw err;
  } finally {
    source?.close();
    if (spilledFile) await unlink(spilledFile.path).catch(() => undefined);
    task.port?.off('message', onMessage);
    task.port?.close();
  }
}

const MiB = 1024 * 1024;

/** Memory for one analysis's pixel maps: TRENCHANT_ANALYSIS_MEMORY_MB, default DEFAULT_ANALYSIS_MEMORY_MB. */
function analysisMemoryMb(): number {
  const v = Number(process.env.TRENCHANT_ANALYSIS_MEMORY_MB);
  return Number.isFinite(v) && v > 0 ? v : DEFAULT_ANALYSIS_MEMORY_MB;
}

function overBudgetMessage(planned: number, label: string, what: string): string {
  return `the results would take ${(planned / MiB).toFixed(1)} MiB (${what}), above ${label}; choose a coarser pixel (pixel.sizeUm or pixel.maxPixels) or fewer density windows, or ask a team admin to raise the limit`;
}

function cancelled(): AnalysisTaskResult {
  return { ok: false, code: 'cancelled', message: 'analysis cancelled' };
}
