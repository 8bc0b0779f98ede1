/**
 * The upload check pool: a small piscina pool, separate from the analysis pool so an upload is never queued
 * behind a long analysis (and an upload bomb never holds an analysis thread). One thread by default
 * (TRENCHANT_UPLOAD_CHECK_THREADS), with a V8 heap cap (TRENCHANT_UPLOAD_CHECK_MEMORY_MB, default 1024) so a
 * hostile file that slips past the counts kills its own thread, not the server. Kept on globalThis (Next may load
 * this module in several bundles).
 */
import Piscina from 'piscina';
import { uploadWorkerFile } from '@/lib/jobs/worker-file';
import { wholeReadLimitBytes } from '@/lib/layout/whole-read-limit';
import type { UploadCheckResult, UploadLimits } from './check-layout';
import type { UploadCheckTask } from './check-worker';

type Checked = UploadCheckResult & { via?: 'whole' | 'index' };
type Pool = Piscina<UploadCheckTask, Checked>;
const holder = globalThis as typeof globalThis & { __trenchantUploadPool?: Promise<Pool> };

function positiveEnv(name: string, fallback: number): number {
  const v = Number(process.env[name]);
  return Number.isFinite(v) && v >= 1 ? Math.floor(v) : fallback;
}

function pool(): Promise<Pool> {
  holder.__trenchantUploadPool ??= uploadWorkerFile().then(
    (filename) =>
      new Piscina<UploadCheckTask, Checked>({
        filename,
        minThreads: 0,
        maxThreads: positiveEnv('TRENCHANT_UPLOAD_CHECK_THREADS', 1),
        idleTimeout: 30_000,
        resourceLimits: { maxOldGenerationSizeMb: positiveEnv('TRENCHANT_UPLOAD_CHECK_MEMORY_MB', 1024) },
      }),
  );
  holder.__trenchantUploadPool.catch(() => (holder.__trenchantUploadPool = undefined));
  return holder.__trenchantUploadPool;
}

/** Runs the upload check of `file` in the pool. Rejects only on a worker failure (crash, out of memory). */
export async function checkUploadInWorker(file: string, limits: UploadLimits, signal?: AbortSignal): Promise<Checked> {
  const p = await pool();
  return p.run({ file, limits, wholeReadBytes: wholeReadLimitBytes() }, signal ? { signal } : {});
}

/** Stops the pool's threads (benchmarks, tests; the server keeps its pool). */
export async function closeUploadPool(): Promise<void> {
  const p = holder.__trenchantUploadPool;
  holder.__trenchantUploadPool = undefined;
  if (p) await (await p).destroy();
}
