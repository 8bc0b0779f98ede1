/**
 * Worker-thread entry of the tiled analysis (tile-pool.ts): opens its own TileSource from a serialisable spec,
 * then runs the jobs it is sent, one at a time, and posts each result with its buffers transferred. Memory is
 * sampled (this isolate's heap + external buffers) at the stage boundaries inside each job.
 *
 * Two ways to be told what to read: one spec and plan for the thread's whole life (workerData, one analysis), or a
 * spec and plan with every job (a tile queue worker serving many analyses, tile-queue.ts). Open sources are kept
 * by spec, the last OPEN_SOURCES of them, so the GDSII index of a file is built once and reused by every tile of it
 * this thread runs; older ones are closed.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { TileSource } from '../../layout/tile-source';
import type { TilePlan } from './plan';
import { openTileSource, type TileSourceSpec } from './sources';
import { packPart } from './stitch-features';
import { runTileJob, type TileJob } from './tile-work';

interface Boot {
  spec?: TileSourceSpec;
  plan?: TilePlan;
  /** Jobs carry their own spec and plan. */
  perJob?: boolean;
}

interface JobMessage {
  id: number;
  job: TileJob;
  spec?: TileSourceSpec;
  plan?: TilePlan;
}

const OPEN_SOURCES = 2;

const boot = workerData as Boot | null;
if (boot && parentPort && (boot.plan || boot.perJob)) {
  const port = parentPort;
  let peak = 0;
  const sample = () => {
    const m = process.memoryUsage();
    peak = Math.max(peak, m.heapUsed + m.external);
  };
  // Insertion order = least recently used first.
  const open = new Map<string, Promise<TileSource>>();
  const sourceFor = (spec: TileSourceSpec): Promise<TileSource> => {
    const key = spec.kind === 'memory' ? 'memory' : JSON.stringify(spec);
    let p = open.get(key);
    if (p) open.delete(key);
    else p = openTileSource(spec);
    open.set(key, p);
    while (open.size > OPEN_SOURCES) {
      const [oldKey, old] = open.entries().next().value as [string, Promise<TileSource>];
      open.delete(oldKey);
      void old.then((s) => s.close(), () => undefined);
    }
    // A source that failed to open is not kept: the next job (a retry) tries again.
    p.catch(() => {
      if (open.get(key) === p) open.delete(key);
    });
    return p;
  };
  const fixed = boot.spec && !boot.perJob ? sourceFor(boot.spec) : null;
  fixed?.catch(() => undefined);
  const runOne = async (msg: JobMessage) => {
    const spec = msg.spec ?? boot.spec;
    const plan = msg.plan ?? boot.plan;
    const opening = fixed ?? (spec ? sourceFor(spec) : null);
    try {
      if (!opening || !plan) throw new Error('tile job without a source spec or plan');
      const source = await opening;
      sample();
      const r = runTileJob(source, plan, msg.job, sample);
      sample();
      const packed = packPart(r);
      const transfer: ArrayBuffer[] = [packed.buffer as ArrayBuffer];
      if (r.acc) transfer.push(r.acc.buffer as ArrayBuffer);
      port.postMessage({ id: msg.id, result: { ...r, features: null, keys: [], packed }, peakBytes: peak }, transfer);
    } catch (err) {
      // A job that failed drops its source (a queue worker's thread), so a retry opens and indexes the file afresh.
      if (opening && !fixed && spec) {
        const key = spec.kind === 'memory' ? 'memory' : JSON.stringify(spec);
        if (open.get(key) === opening) open.delete(key);
        void opening.then((s) => s.close(), () => undefined);
      }
      port.postMessage({ id: msg.id, error: { name: err instanceof Error ? err.name : 'Error', message: err instanceof Error ? err.message : String(err) }, peakBytes: peak });
    }
  };
  port.on('message', (msg: JobMessage) => void runOne(msg));
}
