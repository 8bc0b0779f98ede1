/**
 * Worker-thread entry of the tiled analysis (tile-pool.ts): opens its own TileSource from a serialisable spec,
 * then runs the jobs it is sent, one at a time, and posts each result with its buffers transferred. Memory is
 * sampled (this isolate's heap + external buffers) at the stage boundaries inside each job.
 *
 * Two ways to be told what to read: one spec and plan for the thread's whole life (workerData, one analysis), or a
 * spec and plan with every job (a tile queue worker serving many analyses, tile-queue.ts). A GDSII file is not
 * indexed here per thread: the pool has one thread build its index in shared memory (a `build` message) and sends
 * that index with the first job of each thread (`index.data`; later jobs name it by id), so all threads read the
 * same lists (index-registry.ts). A job naming an index this thread no longer has is answered with `need`. Open
 * sources are kept, the last OPEN_SOURCES of them; older ones are closed.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { indexGdsiiFile, indexPasses, type GdsiiIndex } from '../../layout/gdsii-index';
import { gdsiiTileSourceOfSharedIndex } from '../../layout/gdsii-tile-source';
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

interface Message {
  id: number;
  job?: TileJob;
  spec?: TileSourceSpec;
  plan?: TilePlan;
  /** The shared index of the job's GDSII file: its id, and the index itself the first time this thread gets it. */
  index?: { id: string; data?: GdsiiIndex };
  /** Build the index of this file in shared memory, keep it as `indexId` and post it back. */
  build?: { path: string; indexId: string };
  /** The pool let this index go. */
  drop?: string;
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
  const reply = (msg: object, transfer: ArrayBuffer[] = []) => port.postMessage({ ...msg, peakBytes: peak, indexPasses: indexPasses() }, transfer);
  // Insertion order = least recently used first.
  const indexes = new Map<string, GdsiiIndex>();
  const open = new Map<string, Promise<TileSource>>();
  const closeSource = (key: string) => {
    const p = open.get(key);
    open.delete(key);
    void p?.then((s) => s.close(), () => undefined);
  };
  const dropIndex = (id: string) => {
    indexes.delete(id);
    for (const key of [...open.keys()]) if (key.startsWith(`index:${id}|`)) closeSource(key);
  };
  const keepIndex = (id: string, index: GdsiiIndex) => {
    indexes.delete(id);
    indexes.set(id, index);
    while (indexes.size > OPEN_SOURCES) dropIndex(indexes.keys().next().value as string);
  };
  const keyOf = (spec: TileSourceSpec, indexId?: string) =>
    indexId !== undefined ? `index:${indexId}|${'topCell' in spec ? (spec.topCell ?? '') : ''}` : spec.kind === 'memory' ? 'memory' : JSON.stringify(spec);
  const sourceFor = (spec: TileSourceSpec, indexId?: string): Promise<TileSource> => {
    const key = keyOf(spec, indexId);
    let p = open.get(key);
    if (p) open.delete(key);
    else if (indexId !== undefined) {
      const index = indexes.get(indexId) as GdsiiIndex;
      const topCell = 'topCell' in spec ? spec.topCell : undefined;
      p = new Promise((resolve) => resolve(gdsiiTileSourceOfSharedIndex(index, topCell !== undefined ? { topCell } : {})));
    } else p = openTileSource(spec);
    open.set(key, p);
    while (open.size > OPEN_SOURCES) closeSource(open.keys().next().value as string);
    // A source that failed to open is not kept: the next job (a retry) tries again.
    p.catch(() => {
      if (open.get(key) === p) open.delete(key);
    });
    return p;
  };
  const failure = (err: unknown) => ({ name: err instanceof Error ? err.name : 'Error', message: err instanceof Error ? err.message : String(err) });
  const runOne = async (msg: Message) => {
    if (msg.drop !== undefined) return dropIndex(msg.drop);
    if (msg.build) {
      try {
        const index = indexGdsiiFile(msg.build.path, { shared: true });
        keepIndex(msg.build.indexId, index);
        sample();
        return reply({ id: msg.id, index });
      } catch (err) {
        return reply({ id: msg.id, error: failure(err) });
      }
    }
    const spec = msg.spec ?? boot.spec;
    const plan = msg.plan ?? boot.plan;
    const indexId = msg.index?.id;
    if (msg.index?.data) keepIndex(msg.index.id, msg.index.data);
    else if (indexId !== undefined) {
      const have = indexes.get(indexId);
      if (!have) return reply({ id: msg.id, need: true });
      keepIndex(indexId, have);
    }
    const opening = spec ? sourceFor(spec, indexId) : null;
    try {
      if (!opening || !plan || !msg.job) throw new Error('tile job without a source spec or plan');
      const source = await opening;
      sample();
      const r = runTileJob(source, plan, msg.job, sample);
      sample();
      const packed = packPart(r);
      const transfer: ArrayBuffer[] = [packed.buffer as ArrayBuffer];
      if (r.acc) transfer.push(r.acc.buffer as ArrayBuffer);
      reply({ id: msg.id, result: { ...r, features: null, keys: [], packed } }, transfer);
    } catch (err) {
      // A job that failed drops its source, so a retry opens the file afresh (a file indexed here is indexed again).
      if (opening && spec) {
        const key = keyOf(spec, indexId);
        if (open.get(key) === opening) closeSource(key);
      }
      reply({ id: msg.id, error: failure(err) });
    }
  };
  port.on('message', (msg: Message) => void runOne(msg));
}
