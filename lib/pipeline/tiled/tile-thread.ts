/**
 * Worker-thread entry of the tiled analysis (tile-pool.ts): opens its own TileSource from the serialisable spec,
 * then runs the jobs it is sent, one at a time, and posts each result with its buffers transferred. Memory is
 * sampled (this isolate's heap + external buffers) at the stage boundaries inside each job.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { TilePlan } from './plan';
import { openTileSource, type TileSourceSpec } from './sources';
import { packPart } from './stitch-features';
import { runTileJob, type TileJob } from './tile-work';

interface Boot {
  spec: TileSourceSpec;
  plan: TilePlan;
}

const boot = workerData as Boot | null;
if (boot && parentPort && boot.plan) {
  const port = parentPort;
  let peak = 0;
  const sample = () => {
    const m = process.memoryUsage();
    peak = Math.max(peak, m.heapUsed + m.external);
  };
  const ready = openTileSource(boot.spec);
  port.on('message', (msg: { id: number; job: TileJob }) => {
    ready
      .then((source) => {
        sample();
        const r = runTileJob(source, boot.plan, msg.job, sample);
        sample();
        const packed = packPart(r);
        const transfer: ArrayBuffer[] = [packed.buffer as ArrayBuffer];
        if (r.acc) transfer.push(r.acc.buffer as ArrayBuffer);
        port.postMessage({ id: msg.id, result: { ...r, features: null, keys: [], packed }, peakBytes: peak }, transfer);
      })
      .catch((err: unknown) => {
        port.postMessage({ id: msg.id, error: { name: err instanceof Error ? err.name : 'Error', message: err instanceof Error ? err.message : String(err) }, peakBytes: peak });
      });
  });
}
