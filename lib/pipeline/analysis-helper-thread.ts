/**
 * Worker-thread entry of the analysis's helper thread (analysis-helper.ts): one thread, started when the analysis
 * begins, that takes a share of each split stage (union tiles, coverage raster, features, predictions) while the analysis thread
 * does the rest; and whole computations the analysis thread does not wait for (effective density, result maps:
 * offload.ts). Compiled to analysis-helper-thread.mjs beside the analysis worker (scripts/build-worker.mjs).
 */
import { workerData } from 'node:worker_threads';
import { featuresHelperTask } from '../geometry/parallel-features';
import { unionHelperTask } from '../geometry/parallel-union';
import { rasterHelperTask } from '../geometry/parallel-raster';
import { lowerThreadPriority } from '../jobs/thread-priority';
import { secondCoreFree, serveTasks, type HelperWorkerData } from '../threads/sync-helper';
import { warmUpGeometry } from '../geometry/warm-up';
import { effectiveHelperTask, paintHelperTask } from './offload';
import { predictHelperTask } from './parallel-predict';

const data = workerData as HelperWorkerData | null;
if (data && data.done instanceof Int32Array) {
  // Under the app's analysis pool the request thread must keep winning the CPU (lib/jobs/thread-priority.ts).
  if (data.lowerPriority) lowerThreadPriority();
  // Tasks posted meanwhile wait in the port's queue; the caller does their shares alone until this is done. Only
  // when the union will be split (run-analysis.ts asks the same question).
  if (secondCoreFree()) warmUpGeometry();
  serveTasks(data, { union: unionHelperTask, raster: rasterHelperTask, features: featuresHelperTask, predict: predictHelperTask, effective: effectiveHelperTask, paint: paintHelperTask });
}
