/**
 * Worker-thread entry for `featuresInThreads` (parallel-features.ts): measures one shard of the features of the
 * shared `OpenRegions`, posts the column table on the given port (buffers transferred), then raises the shared flag (1 done, 2 failed) so the
 * caller, blocked in Atomics.wait, wakes up and reads the port synchronously.
 */
import { workerData, type MessagePort } from 'node:worker_threads';
import { packFeatureTable } from './feature-pack';
import { featureTableFromRegions, type FeatureOptions } from './features';
import type { OpenRegions } from './region-builder';

interface ThreadInput {
  regions: OpenRegions;
  opts: FeatureOptions;
  shard: { index: number; count: number };
  flag: Int32Array;
  port: MessagePort;
}

const input = workerData as ThreadInput | null;
if (input && input.flag instanceof Int32Array) {
  const { regions, opts, shard, flag, port } = input;
  try {
    const { table, transfer } = packFeatureTable(featureTableFromRegions(regions, { ...opts, shard }));
    port.postMessage({ table }, transfer);
    Atomics.store(flag, 0, 1);
  } catch (err) {
    port.postMessage({ error: err instanceof Error ? err.message : String(err) });
    Atomics.store(flag, 0, 2);
  }
  Atomics.notify(flag, 0);
}
