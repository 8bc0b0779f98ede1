/**
 * Worker-thread entry for `featureTableInThreads` (parallel-features.ts): measures chunks of the features of the
 * shared `OpenRegions`, taking them from the shared claim counter alongside the calling thread, posts its rows (a
 * column table, buffers transferred) and their roots on the given port, then raises the shared flag (1 done,
 * 2 failed) so the caller, blocked in Atomics.wait, wakes up and reads the port synchronously.
 */
import { workerData, type MessagePort } from 'node:worker_threads';
import { packFeatureTable } from './feature-pack';
import { measureFeatures, type FeatureOptions } from './features';
import type { OpenRegions } from './region-builder';

interface ThreadInput {
  regions: OpenRegions;
  opts: FeatureOptions;
  claim: { next: Int32Array; owner: Uint8Array; me: number };
  flag: Int32Array;
  port: MessagePort;
}

const input = workerData as ThreadInput | null;
if (input && input.flag instanceof Int32Array) {
  const { regions, opts, claim, flag, port } = input;
  try {
    const m = measureFeatures(regions, opts, claim);
    const { table, transfer } = packFeatureTable(m.table);
    port.postMessage({ table, roots: m.roots }, [...transfer, m.roots.buffer as ArrayBuffer]);
    Atomics.store(flag, 0, 1);
  } catch (err) {
    port.postMessage({ error: err instanceof Error ? err.message : String(err) });
    Atomics.store(flag, 0, 2);
  }
  Atomics.notify(flag, 0);
}
