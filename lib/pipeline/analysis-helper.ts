/**
 * The analysis's helper thread: started once per analysis of a big layout (or earlier by the caller, so its
 * start-up overlaps reading the file) and shared by the stages that split their work (union, raster, features,
 * predictions) or hand it over (offload.ts). Nothing depends on it: without it every stage runs on the calling
 * thread with the same result.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { freshHelperThreadFile } from '../jobs/worker-file';
import { startSyncHelper, type TaskThread } from '../threads/sync-helper';

/**
 * Start the helper thread: the compiled sibling beside the analysis worker bundle; else, when running from source,
 * the compiled file in node_modules/.cache/trenchant if it is up to date with its sources (it starts in ≈ 0.1 s
 * where loading the sources through tsx takes ≈ 1 s of CPU); else the TypeScript source through tsx.
 */
export function startAnalysisHelper(): TaskThread | null {
  const sibling = new URL('./analysis-helper-thread.mjs', import.meta.url);
  const source = new URL('./analysis-helper-thread.ts', import.meta.url);
  let built = sibling;
  if (!(sibling.protocol === 'file:' && existsSync(fileURLToPath(sibling))) && source.protocol === 'file:' && existsSync(fileURLToPath(source))) {
    const cached = freshHelperThreadFile();
    if (cached) built = pathToFileURL(cached);
  }
  return startSyncHelper(built, source);
}
