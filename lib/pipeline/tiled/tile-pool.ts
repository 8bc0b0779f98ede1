/**
 * Where tile jobs run: inline on the calling thread, or on worker threads (tile-thread.ts), each opening its own
 * TileSource from a serialisable spec. Threads start like the feature threads (parallel-features.ts): the compiled
 * sibling `tile-thread.mjs` when present, else the TypeScript source through tsx's loader.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { TileSource } from '../../layout/tile-source';
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

interface Pending {
  resolve(r: TileJobResult & { worker: number }): void;
  reject(e: Error): void;
}

/** `threads` worker threads, or null when none can start (the caller then runs inline). */
export function threadExecutor(spec: TileSourceSpec, plan: TilePlan, threads: number): TileExecutor | null {
  const pool = startTileThreads(threads, { spec, plan });
  return pool && { threads, via: 'threads', run: (job) => pool.run(job), peakBytes: pool.peakBytes, close: pool.close };
}

/** Threads serving tiles of any analysis: each job names its source and plan (a tile queue worker, tile-queue.ts). */
export interface SharedTileThreads {
  readonly threads: number;
  run(job: TileJob, spec: TileSourceSpec, plan: TilePlan): Promise<TileJobResult & { worker: number }>;
  /** A thread stopped (crashed, ran out of memory): this pool runs nothing more; start another. */
  broken(): boolean;
  peakBytes(): number[];
  close(): Promise<void>;
}

export function sharedTileThreads(threads: number): SharedTileThreads | null {
  const pool = startTileThreads(threads, { perJob: true });
  return pool && { threads, run: (job, spec, plan) => pool.run(job, { spec, plan }), broken: pool.broken, peakBytes: pool.peakBytes, close: pool.close };
}

function startTileThreads(threads: number, boot: unknown) {
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
  const idle: number[] = workers.map((_, k) => k);
  const waiting: (() => void)[] = [];
  const inflight = new Map<number, Pending & { worker: number }>();
  let nextId = 1;
  let failed: Error | null = null;
  workers.forEach((w, k) => {
    w.on('message', (msg: { id: number; result?: TileJobResult & { packed: Float64Array }; error?: { name: string; message: string }; peakBytes: number }) => {
      peaks[k] = Math.max(peaks[k] as number, msg.peakBytes);
      const p = inflight.get(msg.id);
      if (!p) return;
      inflight.delete(msg.id);
      idle.push(k);
      waiting.shift()?.();
      if (msg.error) {
        const e = new Error(msg.error.message);
        e.name = msg.error.name;
        p.reject(e);
      } else if (msg.result) {
        const { packed, ...rest } = msg.result;
        const part = unpackPart(packed);
        p.resolve({ ...rest, features: part.features, keys: Array.from(part.keys), worker: k });
      }
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
  return {
    async run(job: TileJob, ctx?: { spec: TileSourceSpec; plan: TilePlan }): Promise<TileJobResult & { worker: number }> {
      while (idle.length === 0 && !failed) await new Promise<void>((r) => waiting.push(r));
      if (failed) throw failed;
      const k = idle.shift() as number;
      const id = nextId++;
      return new Promise((resolve, reject) => {
        inflight.set(id, { resolve, reject, worker: k });
        (workers[k] as Worker).postMessage({ id, job, ...ctx });
      });
    },
    broken: () => failed !== null,
    peakBytes: () => peaks.slice(),
    async close() {
      await Promise.all(workers.map((w) => w.terminate()));
    },
  };
}
