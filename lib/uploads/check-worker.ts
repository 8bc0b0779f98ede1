/**
 * Worker-thread entry of the upload check pool (bundled by scripts/build-worker.mjs into upload-worker.mjs).
 * Task: { file, limits } → UploadCheckResult (see check-layout.ts). Bugs reject; bad files resolve ok: false.
 */
import { lowerThreadPriority } from '@/lib/jobs/thread-priority';
import { checkLayoutFile, type UploadCheckResult, type UploadLimits } from './check-layout';

lowerThreadPriority();

export interface UploadCheckTask {
  file: string;
  limits: UploadLimits;
}

export default function checkUpload(task: UploadCheckTask): Promise<UploadCheckResult> {
  return checkLayoutFile(task.file, task.limits);
}
