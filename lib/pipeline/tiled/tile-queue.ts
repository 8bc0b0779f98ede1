/**
 * Tile jobs over BullMQ (TRENCHANT_REDIS_URL set): the analysing process adds one job per tile to the queue
 * `tiles`; any number of tile workers (startTileQueueWorker, run by `npm run worker` beside its analysis worker)
 * run them on their own worker threads and return the core's coverage differences and the owned openings. Each job
 * carries the source spec and the plan, so a worker needs only what the spec names: a layout in storage ('stored',
 * fetched into the worker's read cache, stored-source.ts), a file path every worker can read, or a module. The
 * 'memory' spec cannot cross processes and is refused.
 *
 * One pool of threads per tile worker serves every analysis. A file's GDSII index is built once per tile worker, by
 * one of its threads, in shared memory, and used by all of them (index-registry.ts); it is kept for the last few
 * files, also across a pool restarted after a thread died, and rebuilt when the file changes (size, time).
 *
 * Results travel as base64 of the Float64Arrays (a 500 × 500-pixel core is 2 MB). A tile job is pure, so a retry
 * gives the same result: a job that fails is retried once (attempts: 2); a worker that dies mid-job (kill -9, out
 * of memory) stops renewing its lock, BullMQ's stalled check puts the job back after about TRENCHANT_QUEUE_LOCK_MS
 * and another worker (or the same one restarted) runs it again. Jobs of an analysis that stops early (cancel, an
 * error) are removed from the queue when it closes its executor, unless a worker already holds them.
 */
import { existsSync } from 'node:fs';
import { Queue, QueueEvents, UnrecoverableError, Worker, type Job } from 'bullmq';
import { lockMs, openRedis, redisPrefix, safeUrl } from '../../jobs/bullmq-shared';
import { IndexRegistry } from './index-registry';
import type { TilePlan } from './plan';
import type { TileSourceSpec } from './sources';
import { packPart, unpackPart } from './stitch-features';
import { sharedTileThreads, type SharedTileThreads, type TileExecutor } from './tile-pool';
import type { TileJob, TileJobResult } from './tile-work';

export const TILE_QUEUE_NAME = 'tiles';

interface TileQueueData {
  spec: TileSourceSpec;
  plan: TilePlan;
  job: TileJob;
}

type WireResult = Omit<TileJobResult, 'acc' | 'features' | 'keys'> & { acc?: string; part: string; peakBytes: number[] };

const toB64 = (a: Float64Array) => Buffer.from(a.buffer, a.byteOffset, a.byteLength).toString('base64');
function fromB64(s: string): Float64Array {
  const b = Buffer.from(s, 'base64');
  const out = new Float64Array(b.byteLength / 8);
  new Uint8Array(out.buffer).set(b);
  return out;
}

/** Tile workers listening on the `tiles` queue now (0: tiles sent there would wait until one starts). */
export async function tileWorkerCount(url: string): Promise<number> {
  const connection = openRedis(url, 'tiles-probe');
  const queue = new Queue(TILE_QUEUE_NAME, { connection, prefix: redisPrefix() });
  try {
    return await queue.getWorkersCount();
  } finally {
    await queue.close();
    connection.disconnect();
  }
}

/** How long an analysis waits with no tile worker listening before it fails: TRENCHANT_TILE_WORKER_GRACE_MS, default 60 s. */
export function tileWorkerGraceMs(env: Record<string, string | undefined> = process.env): number {
  const v = Number(env.TRENCHANT_TILE_WORKER_GRACE_MS);
  return Number.isFinite(v) && v > 0 ? v : 60_000;
}

export async function queueExecutor(url: string, spec: TileSourceSpec, plan: TilePlan, slots: number): Promise<TileExecutor> {
  if (spec.kind === 'memory') throw new Error('tile jobs on the queue need a source every worker can open (a stored layout, file or module spec), not an in-memory layout');
  const connection = openRedis(url, 'tiles-producer');
  const eventsConnection = openRedis(url, 'tiles-events');
  const queue = new Queue<TileQueueData>(TILE_QUEUE_NAME, { connection, prefix: redisPrefix() });
  const events = new QueueEvents(TILE_QUEUE_NAME, { connection: eventsConnection, prefix: redisPrefix() });
  await events.waitUntilReady();
  const peaks: number[] = [];
  const unfinished = new Set<Job<TileQueueData>>();
  // Every tile worker gone (stopped, crashed, unreachable): the tiles would wait for ever, so after a grace period
  // the analysis fails and says why, instead of hanging (a worker restarting within the grace takes them over).
  const giveUp = new Set<(e: Error) => void>();
  const graceMs = tileWorkerGraceMs();
  let emptySince: number | null = null;
  const watchdog = setInterval(() => {
    void queue.getWorkersCount().then((n) => {
      if (n > 0) emptySince = null;
      else if (emptySince === null) emptySince = Date.now();
      else if (Date.now() - emptySince >= graceMs) {
        const e = new Error(`no tile worker has listened on the ${TILE_QUEUE_NAME} queue for ${Math.round(graceMs / 1000)} s; start one (npm run worker) or set TRENCHANT_TILE_QUEUE=off and run the analysis again`);
        for (const f of giveUp) f(e);
      }
    }, () => undefined);
  }, Math.min(5_000, Math.max(250, graceMs / 4)));
  watchdog.unref();
  return {
    threads: slots,
    via: 'queue',
    async run(job) {
      const j = await queue.add('tile', { spec, plan, job }, { attempts: 2, backoff: { type: 'fixed', delay: 500 }, removeOnComplete: true, removeOnFail: true });
      unfinished.add(j);
      let w: WireResult;
      let stop: ((e: Error) => void) | null = null;
      try {
        const abandoned = new Promise<never>((_, reject) => {
          stop = reject;
          giveUp.add(reject);
        });
        w = (await Promise.race([j.waitUntilFinished(events), abandoned])) as WireResult;
      } finally {
        unfinished.delete(j);
        if (stop) giveUp.delete(stop);
      }
      w.peakBytes.forEach((p, k) => (peaks[k] = Math.max(peaks[k] ?? 0, p)));
      const part = unpackPart(fromB64(w.part));
      const { acc, part: _p, peakBytes: _b, ...rest } = w;
      return { ...rest, ...(acc ? { acc: fromB64(acc) } : {}), features: part.features, keys: Array.from(part.keys), worker: 0 };
    },
    peakBytes: () => peaks.slice(),
    async close() {
      clearInterval(watchdog);
      // Waiting jobs of a cancelled or failed analysis would only keep workers busy; a job a worker holds cannot be
      // removed (it ends on its own, its result unread).
      await Promise.all([...unfinished].map((j) => j.remove().catch(() => undefined)));
      await events.close();
      await queue.close();
      connection.disconnect();
      eventsConnection.disconnect();
    },
  };
}

export interface TileQueueWorkerOptions {
  /** Worker threads (and jobs at once) of this tile worker; default 1. */
  threads?: number;
  /** A line per job started and ended (default: none; `npm run worker` passes console.log). */
  log?: (line: string) => void;
  /** Where the GDSII indexes of this worker live (default: its own; tests pass one to count builds). */
  indexes?: IndexRegistry;
}

/** A tile worker: takes tile jobs of any analysis from Redis and runs them on its threads. */
export async function startTileQueueWorker(url: string, options: number | TileQueueWorkerOptions = {}): Promise<{ close(): Promise<void>; threads: number }> {
  const opts = typeof options === 'number' ? { threads: options } : options;
  const threads = Math.max(1, opts.threads ?? 1);
  const log = opts.log ?? (() => undefined);
  const connection = openRedis(url, 'tiles-worker');
  let pool: SharedTileThreads | null = null;
  const indexes = opts.indexes ?? new IndexRegistry();
  // A stored layout is looked up in the read cache once per process, not per tile: the cache marks a copy used by
  // touching its file times, which an open GDSII source would take for a changed file.
  const resolved = new Map<string, Promise<TileSourceSpec>>();
  const resolveOnce = async (spec: TileSourceSpec): Promise<TileSourceSpec> => {
    if (spec.kind !== 'stored') return spec;
    const key = JSON.stringify(spec);
    let p = resolved.get(key);
    const still = p ? await p.catch(() => null) : null;
    if (!still || (still.kind === 'file' && !existsSync(still.path))) {
      const { resolveStoredSpec } = await import('./stored-source');
      p = resolveStoredSpec(spec);
      resolved.delete(key);
      resolved.set(key, p);
      while (resolved.size > 16) resolved.delete(resolved.keys().next().value as string);
    }
    return p as Promise<TileSourceSpec>;
  };
  const processor = async (job: Job<TileQueueData>): Promise<WireResult> => {
    const { spec, plan } = job.data;
    // Loaded here, not at the top: tile workers that only see file or module specs never load storage.
    const { StoredSourceMismatchError } = await import('./stored-source');
    let local: TileSourceSpec;
    try {
      local = await resolveOnce(spec);
    } catch (err) {
      // Another storage than the analysing process's: no retry on this worker could help.
      if (err instanceof StoredSourceMismatchError) throw new UnrecoverableError(err.message);
      throw err;
    }
    if (pool?.broken()) {
      const old = pool;
      pool = null;
      await old.close();
    }
    pool ??= sharedTileThreads(threads, indexes);
    if (!pool) throw new Error('tile worker: no worker thread could start');
    log(`[trenchant] tile worker ${process.pid}: job ${job.id} (${job.data.job.kind} of tile ${job.data.job.tile}) started${job.attemptsStarted > 1 ? ` (pick-up ${job.attemptsStarted})` : ''}`);
    const r = await pool.run(job.data.job, local, plan);
    const { acc, features, keys, worker: _w, ...rest } = r;
    return { ...rest, ...(acc ? { acc: toB64(acc) } : {}), part: toB64(packPart({ features, keys })), peakBytes: pool.peakBytes() };
  };
  const lock = lockMs();
  const worker = new Worker<TileQueueData>(TILE_QUEUE_NAME, processor, {
    connection,
    prefix: redisPrefix(),
    concurrency: threads,
    lockDuration: lock,
    stalledInterval: Math.max(1_000, Math.floor(lock / 2)),
    // A tile killed with its worker goes back to the queue; a tile that kills every worker that takes it stops.
    maxStalledCount: 2,
  });
  worker.on('error', (err) => console.error('[trenchant] tile worker:', err.message));
  await worker.waitUntilReady();
  log(`[trenchant] tile worker ${process.pid} on ${safeUrl(url)}: up to ${threads} tile job(s) at a time`);
  return {
    threads,
    async close() {
      await worker.close();
      await pool?.close();
      indexes.clear();
      connection.disconnect();
    },
  };
}
