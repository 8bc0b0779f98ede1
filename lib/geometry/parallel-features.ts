/**
 * Features of big layouts measured on two threads, behind a synchronous call (the pipeline is synchronous): the
 * caller measures shard 0 while a worker thread measures shard 1 of the same regions (shared memory, no copy per
 * feature), then blocks on a shared flag and reads the worker's column table (transferred buffers) with
 * receiveMessageOnPort. Same features and ids as `featureTableFromRegions` (numberFeatureTable merges shards).
 *
 * The worker runs features-thread: the compiled sibling `features-thread.mjs` when present (bundles), else the
 * TypeScript source through tsx's loader (CLI and benchmarks run from source). When neither can start, or the
 * worker does not answer in time, everything is measured on the calling thread — slower, never different.
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { MessageChannel, receiveMessageOnPort, Worker } from 'node:worker_threads';
import { unpackFeatureTable } from './feature-pack';
import { concatFeatureTables, featureList, numberFeatureTable, type FeatureTable } from './feature-table';
import { featureTableFromRegions, type FeatureOptions } from './features';
import type { OpenRegions } from './region-builder';
import type { Feature } from './types';

/** Below this many union pieces a second thread costs more to start than it saves. */
const MIN_PIECES = 50_000;

function shared<T extends Float64Array | Uint32Array | Uint8Array>(a: T): T {
  const Ctor = a.constructor as { new (b: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };
  const copy = new Ctor(new SharedArrayBuffer(Math.max(Ctor.BYTES_PER_ELEMENT, a.length * Ctor.BYTES_PER_ELEMENT)));
  copy.set(a);
  return a.length === 0 ? (copy.subarray(0, 0) as T) : copy;
}

function startWorker(data: unknown, transfer: MessageChannel['port2']): Worker | null {
  try {
    const built = new URL('./features-thread.mjs', import.meta.url);
    if (built.protocol === 'file:' && existsSync(fileURLToPath(built))) return new Worker(built, { workerData: data, transferList: [transfer] });
    const source = new URL('./features-thread.ts', import.meta.url);
    if (source.protocol !== 'file:' || !existsSync(fileURLToPath(source)) || typeof import.meta.resolve !== 'function') return null;
    const tsx = import.meta.resolve('tsx/esm/api');
    const boot = `import(${JSON.stringify(tsx)}).then((m) => { m.register(); return import(${JSON.stringify(source.href)}); });`;
    return new Worker(boot, { eval: true, workerData: data, transferList: [transfer] });
  } catch {
    return null;
  }
}

export type ThreadOptions = FeatureOptions & { threads?: number; minPieces?: number };

/** `featureTableInThreads` as `Feature` objects (tests, small layouts). */
export function featuresInThreads(regions: OpenRegions, opts: ThreadOptions = {}, info: { threads?: number } = {}): Feature[] {
  return featureList(featureTableInThreads(regions, opts, info));
}

/**
 * `featureTableFromRegions(regions, opts)` spread over two threads when the layout is big and a worker can start.
 * `threads: 1` forces one thread.
 */
export function featureTableInThreads(regions: OpenRegions, opts: ThreadOptions = {}, info: { threads?: number } = {}): FeatureTable {
  const { threads, minPieces, ...featureOpts } = opts;
  const want = Math.min(threads ?? 2, availableParallelism());
  info.threads = 1;
  if (want < 2 || regions.pieceCount < (minPieces ?? MIN_PIECES) || featureOpts.shard) return featureTableFromRegions(regions, featureOpts);
  const flag = new Int32Array(new SharedArrayBuffer(4));
  const channel = new MessageChannel();
  const sharedRegions: OpenRegions = {
    ...regions,
    coords: shared(regions.coords),
    ringOffsets: shared(regions.ringOffsets),
    pieceRings: shared(regions.pieceRings),
    seamA: shared(regions.seamA),
    seamB: shared(regions.seamB),
    seamLen: shared(regions.seamLen),
    // Not read by features: sent empty.
    pieceCoverage: new Uint8Array(0),
    coverageCoords: new Float64Array(0),
    coverageRingOffsets: new Uint32Array(0),
  };
  const worker = startWorker({ regions: sharedRegions, opts: featureOpts, shard: { index: 1, count: 2 }, flag, port: channel.port2 }, channel.port2);
  if (!worker) return featureTableFromRegions(regions, featureOpts);
  worker.unref();
  try {
    const t0 = performance.now();
    const mine = featureTableFromRegions(regions, { ...featureOpts, shard: { index: 0, count: 2 } });
    // The worker does the same amount of work; allow it generous slack (start-up, a busy machine) before giving up.
    const limit = Math.max(60_000, 4 * (performance.now() - t0));
    const until = performance.now() + limit;
    while (Atomics.load(flag, 0) === 0 && performance.now() < until) Atomics.wait(flag, 0, 0, Math.min(1000, until - performance.now()));
    let msg: { table?: unknown; error?: string } | undefined;
    for (let k = 0; k < 100 && Atomics.load(flag, 0) !== 0 && !msg; k++) {
      msg = receiveMessageOnPort(channel.port1)?.message as typeof msg;
      if (!msg) Atomics.wait(flag, 0, -1, 10);
    }
    const theirs = msg?.table ? unpackFeatureTable(msg.table) : featureTableFromRegions(regions, { ...featureOpts, shard: { index: 1, count: 2 } });
    if (msg?.table) info.threads = 2;
    return numberFeatureTable(concatFeatureTables([mine, theirs]));
  } finally {
    void worker.terminate();
    channel.port1.close();
  }
}
