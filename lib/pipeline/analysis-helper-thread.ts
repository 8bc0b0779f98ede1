/**
 * Worker-thread entry of the analysis's helper thread (analysis-helper.ts): one thread, started when the analysis
 * begins, that takes a share of each parallel stage — union tiles, features — while the analysis thread does the
 * rest. Compiled to analysis-helper-thread.mjs beside the analysis worker (scripts/build-worker.mjs).
 */
import { workerData } from 'node:worker_threads';
import { featuresHelperTask } from '../geometry/parallel-features';
import { unionHelperTask } from '../geometry/parallel-union';
import { serveTasks, type HelperWorkerData } from '../threads/sync-helper';

const data = workerData as HelperWorkerData | null;
if (data && data.done instanceof Int32Array) serveTasks(data, { union: unionHelperTask, features: featuresHelperTask });
