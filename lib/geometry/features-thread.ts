/**
 * Worker-thread entry for `featureTableInThreads` when the caller has no helper thread of its own
 * (parallel-features.ts): answers 'features' tasks — measures chunks of the shared `OpenRegions` from the shared
 * claim counter alongside the calling thread and posts its rows as a column table (buffers transferred).
 */
import { workerData } from 'node:worker_threads';
import { lowerThreadPriority } from '../jobs/thread-priority';
import { serveTasks, type HelperWorkerData } from '../threads/sync-helper';
import { featuresHelperTask } from './parallel-features';

const data = workerData as HelperWorkerData | null;
if (data && data.done instanceof Int32Array) {
  if (data.lowerPriority) lowerThreadPriority();
  serveTasks(data, { features: featuresHelperTask });
}
