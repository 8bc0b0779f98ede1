/**
 * Tile jobs over BullMQ (TRENCHANT_REDIS_URL set): the analysing process adds one job per tile to the queue
 * `tiles`; any number of tile workers (startTileQueueWorker, e.g. beside `npm run worker`) run them on their own
 * worker threads and return the core's coverage differences and the owned openings. Each job carries the source
 * spec and the plan, so a worker needs only what the spec names (a file path every worker can read, a module);
 * the 'memory' spec cannot cross processes and is refused.
 *
 * Results travel as base64 of the Float64Arrays (a 500 × 500-pixel core is 2 MB). A tile job is pure, so
 * BullMQ's retries of a failed or stalled job give the same result.
 */
import { createHash } from 'node:crypto';
import { Queue, QueueEvents, Worker, type Job } from 'bullmq';
import { openRedis, redisPrefix } from '../../jobs/bullmq-shared';
import type { TilePlan } from './plan';
import type { TileSourceSpec } from './sources';
import { packPart, unpackPart } from './stitch-features';
import { threadExecutor, type TileExecutor } from './tile-pool';
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

export async function queueExecutor(url: string, spec: TileSourceSpec, plan: TilePlan, slots: number): Promise<TileExecutor> {
  if (spec.kind === 'memory') throw new Error('tile jobs on the queue need a source every worker can open (a file or module spec), not an in-memory layout');
  const connection = openRedis(url, 'tiles-producer');
  const eventsConnection = openRedis(url, 'tiles-events');
  const queue = new Queue<TileQueueData>(TILE_QUEUE_NAME, { connection, prefix: redisPrefix() });
  const events = new QueueEvents(TILE_QUEUE_NAME, { connection: eventsConnection, prefix: redisPrefix() });
  await events.waitUntilReady();
  const peaks: number[] = [];
  return {
    threads: slots,
    via: 'queue',
    async run(job) {
      const j = await queue.add('tile', { spec, plan, job }, { attempts: 2, removeOnComplete: true, removeOnFail: true });
      const w = (await j.waitUntilFinished(events)) as WireResult;
      w.peakBytes.forEach((p, k) => (peaks[k] = Math.max(peaks[k] ?? 0, p)));
      const part = unpackPart(fromB64(w.part));
      const { acc, part: _p, peakBytes: _b, ...rest } = w;
      return { ...rest, ...(acc ? { acc: fromB64(acc) } : {}), features: part.features, keys: Array.from(part.keys), worker: 0 };
    },
    peakBytes: () => peaks.slice(),
    async close() {
      await events.close();
      await queue.close();
      connection.disconnect();
      eventsConnection.disconnect();
    },
  };
}

/** A tile worker: takes tile jobs from Redis and runs them on `threads` worker threads per plan. */
export async function startTileQueueWorker(url: string, threads = 1): Promise<{ close(): Promise<void> }> {
  const connection = openRedis(url, 'tiles-worker');
  // One thread pool per (spec, plan): its threads keep their source open between the tiles of one analysis.
  const pools = new Map<string, TileExecutor>();
  const processor = async (job: Job<TileQueueData>): Promise<WireResult> => {
    const { spec, plan } = job.data;
    const key = createHash('sha256').update(JSON.stringify([spec, plan])).digest('hex');
    let pool = pools.get(key);
    if (!pool) {
      pool = threadExecutor(spec, plan, threads) ?? undefined;
      if (!pool) throw new Error('tile worker: no worker thread could start');
      pools.set(key, pool);
    }
    const r = await pool.run(job.data.job);
    const { acc, features, keys, worker: _w, ...rest } = r;
    return { ...rest, ...(acc ? { acc: toB64(acc) } : {}), part: toB64(packPart({ features, keys })), peakBytes: pool.peakBytes() };
  };
  const worker = new Worker<TileQueueData>(TILE_QUEUE_NAME, processor, { connection, prefix: redisPrefix(), concurrency: threads });
  await worker.waitUntilReady();
  return {
    async close() {
      await worker.close();
      await Promise.all([...pools.values()].map((p) => p.close()));
      connection.disconnect();
    },
  };
}
