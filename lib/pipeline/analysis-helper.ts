/**
 * The analysis's helper thread: started once per analysis of a big layout (or earlier by the caller, so its
 * start-up overlaps reading the file) and shared by the stages that split their work (union, features). Nothing
 * depends on it: without it every stage runs on the calling thread with the same result.
 */
import { startSyncHelper, type TaskThread } from '../threads/sync-helper';

/** Start the helper thread: the compiled sibling beside the analysis worker bundle, else the TypeScript source. */
export function startAnalysisHelper(): TaskThread | null {
  return startSyncHelper(new URL('./analysis-helper-thread.mjs', import.meta.url), new URL('./analysis-helper-thread.ts', import.meta.url));
}
