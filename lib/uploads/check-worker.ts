/**
 * Worker-thread entry of the upload check pool (bundled by scripts/build-worker.mjs into upload-worker.mjs).
 * Task: { file, limits, wholeReadBytes } → UploadCheckResult (see check-layout.ts; GDSII files above
 * wholeReadBytes are checked from their on-disk index, check-indexed.ts). Bugs reject; bad files resolve ok: false.
 */
import { lowerThreadPriority } from '@/lib/jobs/thread-priority';
import { wholeReadLimitBytes } from '@/lib/layout/whole-read-limit';
import type { UploadCheckResult, UploadLimits } from './check-layout';
import { checkStoredLayout } from './check-indexed';

lowerThreadPriority();

export interface UploadCheckTask {
  file: string;
  limits: UploadLimits;
  /** Larger GDSII files are checked from the index (the server's TRENCHANT_WHOLE_READ_MB; default this thread's). */
  wholeReadBytes?: number;
}

export default function checkUpload(task: UploadCheckTask): Promise<UploadCheckResult & { via: 'whole' | 'index' }> {
  return checkStoredLayout(task.file, task.limits, task.wholeReadBytes ?? wholeReadLimitBytes());
}
