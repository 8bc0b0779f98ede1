/**
 * Where tile jobs run: inline on the calling thread, or on worker threads (tile-thread.ts), each opening its own
 * TileSource from a serialisable spec. A GDSII file's index is not built per thread: the pool asks its registry
 * (index-registry.ts), which has the first free thread build it in shared memory once, and sends it with each
 * thread's first job of that file. Threads start like the feature threads (parallel-features.ts): the compiled
 * sibling `tile-thread.mjs` when present, else the TypeScript source through tsx's loader.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { GdsiiIndex } from '../../layout/gdsii-index';
import type { TileSource } from '../../layout/tile-source';
import { IndexRegistry } from './index-registry';
import type { TilePlan } from './plan';
import type { TileSourceSpec } from './sources';
import { unpackPart } from './stitch-features';
import { runTileJob, type TileJob, type TileJobResult } from './tile-work';

export interface TileExecutor {
  /** Worker threads in use (queue: jobs in flight); 0 = inline. */
  readonly threads: number;
  readonly via: 'inline' | 'threads' | 'queue';
  run(job: TileJob): Promise<TileJobResult & { worker: number }>;
  /** Peak sampled memory (heap + external buffers, bytes) per worker. */
  peakBytes(): number[];
  /** GDSII index passes run by the worker threads (none inline or on the queue: the source or the tile workers index). */
  indexPasses?(): number[];
  close(): Promise<void>;
}

export function inlineExecutor(source: TileSource, plan: TilePlan): TileExecutor {
  let peak = 0;
  const sample = () => {
    const m = process.memoryUsage();
    peak = Math.max(peak, m.heapUsed + m.external);
  };
  return {
    threads: 0,
    via: 'inline',
    run: async (job) => ({ ...runTileJob(source, plan, job, sample), worker: 0 }),
    peakBytes: () => [peak],
    close: async () => {},
  };
}

function startWorker(data: unknown): Worker | null {
  try {
    const built = new URL('./tile-thread.mjs', import.meta.url);
    if (built.protocol === 'file:' && existsSync(fileURLToPath(built))) return new Worker(built, { workerData: data });
    const source = new URL('./tile-thread.ts', import.meta.url);
    if (source.protocol !== 'file:' || !existsSync(fileURLToPath(source)) || typeof import.meta.resolve !== 'function') return null;
    const tsx = import.meta.resolve('tsx/esm/api');
    const boot = `import(${JSON.stringify(tsx)}).then((m) => { m.register(); return import(${JSON.stringify(source.href)}); });`;
    return new Worker(boot, { eval: true, workerData: data });
  } catch {
    return null;
  }
}

interface Reply {
  id: number;
  result?: TileJobResult & { packed: Float64Array };
  /** Answer to a build request: the index, its lists in shared memory. */
  index?: GdsiiIndex;
  /** The thread no longer has the index the job names: send it again with the index. */
  need?: boolean;
  error?: { name: string; message: string };
  peakBytes: number;
  /** GDSII index passes this thread has run (gdsii-index.ts indexPasses). */
  indexPasses?: number;
}

interface Pending {
  resolve(r: Reply): void;
  reject(e: Error): void;
  worker: number;
}

/**
 * `threads` worker threads, or null when none can start (the caller then runs inline). `index`: a GDSII index the
 * caller built in shared memory for `spec`'s file (the analysis's own source), handed to the threads as it is.
 */
export function threadExecutor(spec: TileSourceSpec, plan: TilePlan, threads: number, index?: GdsiiIndex): TileExecutor | null {
  const registry = new IndexRegistry();
  if (index) registry.put(index);
  const pool = startTileThreads(threads, { spec, plan }, registry);
  return pool && {
    threads,
    via: 'threads',
    run: (job) => pool.run(job),
    peakBytes: pool.peakBytes,
    indexPasses: pool.indexPasses,
    async close() {
      await pool.close();
      registry.clear();
    },
  };
}

/** Threads serving tiles of any analysis: each job names its source and plan (a tile queue worker, tile-queue.ts). */
export interface SharedTileThreads {
  readonly threads: number;
  run(job: TileJob, spec: TileSourceSpec, plan: TilePlan): Promise<TileJobResult & { worker: number }>;
  /** A thread stopped (crashed, ran out of memory): this pool runs nothing more; start another. */
  broken(): boolean;
  peakBytes(): number[];
  /** GDSII index passes each thread has run so far (one per file per pool when the registry works). */
  indexPasses(): number[];
  close(): Promise<void>;
}

/** `registry`: where the GDSII indexes of the files live; give one that outlives the pool to keep them across pools. */
export function sharedTileThreads(threads: number, registry: IndexRegistry = new IndexRegistry()): SharedTileThreads | null {
  const pool = startTileThreads(threads, { perJob: true }, registry);
  return pool && { threads, run: (job, spec, plan) => pool.run(job, { spec, plan }), broken: pool.broken, peakBytes: pool.peakBytes, indexPasses: pool.indexPasses, close: pool.close };
}

function startTileThreads(threads: number, boot: { spec?: TileSourceSpec; plan?: TilePlan; perJob?: boolean }, registry: IndexRegistry) {
  const workers: Worker[] = [];
  for (let k = 0; k < threads; k++) {
    const w = startWorker(boot);
    if (!w) {
      for (const x of workers) void x.terminate();
      return null;
    }
    workers.push(w);
  }
  const peaks = new Array<number>(threads).fill(0);
  const passes = new Array<number>(threads).fill(0);
  const idle: number[] = workers.map((_, k) => k);
  const waiting: (() => void)[] = [];
  const inflight = new Map<number, Pending>();
  // Which registry indexes each thread was sent (a thread that let one go asks again: `need`).
  const sent = workers.map(() => new Set<string>());
  let nextId = 1;
  let failed: Error | null = null;
  workers.forEach((w, k) => {
    w.on('message', (msg: Reply) => {
      peaks[k] = Math.max(peaks[k] as number, msg.peakBytes);
      passes[k] = Math.max(passes[k] as number, msg.indexPasses ?? 0);
      const p = inflight.get(msg.id);
      if (!p) return;
      inflight.delete(msg.id);
      if (msg.error) {
        const e = new Error(msg.error.message);
        e.name = msg.error.name;
        p.reject(e);
      } else p.resolve(msg);
    });
    const fail = (err: Error) => {
      failed = err;
      // Wake every caller waiting for a free thread: they see the failure instead of waiting for ever.
      while (waiting.length > 0) waiting.shift()?.();
      for (const [id, p] of inflight) if (p.worker === k) {
        inflight.delete(id);
        p.reject(err);
      }
    };
    w.on('error', fail);
    w.on('exit', (code) => {
      if (code !== 0) fail(new Error(`tile worker ${k} stopped (exit code ${code})`));
    });
  });
  const stopListening = registry.onEvict((indexId) => {
    workers.forEach((w, k) => {
      if ((sent[k] as Set<string>).delete(indexId)) w.postMessage({ drop: indexId });
    });
  });
  const acquire = async (): Promise<number> => {
    while (idle.length === 0 && !failed) await new Promise<void>((r) => waiting.push(r));
    if (failed) throw failed;
    return idle.shift() as number;
  };
  const release = (k: number) => {
    idle.push(k);
    waiting.shift()?.();
  };
  const ask = (k: number, msg: object): Promise<Reply> =>
    new Promise((resolve, reject) => {
      const id = nextId++;
      inflight.set(id, { resolve, reject, worker: k });
      (workers[k] as Worker).postMessage({ ...msg, id });
    });
  // The first thread free builds a file's index; the registry makes every other request wait for that one.
  const build = async (path: string, indexId: string): Promise<GdsiiIndex> => {
    const k = await acquire();
    try {
      (sent[k] as Set<string>).add(indexId);
      const r = await ask(k, { build: { path, indexId } });
      if (!r.index) throw new Error(`tile thread ${k} sent no index for ${path}`);
      return r.index;
    } finally {
      release(k);
    }
  };
  return {
    async run(job: TileJob, ctx?: { spec: TileSourceSpec; plan: TilePlan }): Promise<TileJobResult & { worker: number }> {
      if (failed) throw failed;
      const spec = ctx?.spec ?? boot.spec;
      const building = spec?.kind === 'file' ? registry.get(spec.path, build) : null;
      const entry = building ? await building : null;
      const k = await acquire();
      try {
        const has = sent[k] as Set<string>;
        const send = (withIndex: boolean) => ask(k, { job, ...ctx, ...(entry ? { index: { id: entry.id, ...(withIndex ? { data: entry.index } : {}) } } : {}) });
        const fresh = entry !== null && !has.has(entry.id);
        if (entry) has.add(entry.id);
        let r = await send(fresh);
        if (r.need) r = await send(true);
        if (!r.result) throw new Error(`tile thread ${k} sent no result`);
        const { packed, ...rest } = r.result;
        const part = unpackPart(packed);
        return { ...rest, features: part.features, keys: Array.from(part.keys), worker: k };
      } finally {
        release(k);
      }
    },
    broken: () => failed !== null,
    peakBytes: () => peaks.slice(),
    indexPasses: () => passes.slice(),
    async close() {
      stopListening();
      await Promise.all(workers.map((w) => w.terminate()));
    },
  };
}
