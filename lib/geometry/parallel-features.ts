/**
 * Features of big layouts measured on two threads, behind a synchronous call (the pipeline is synchronous): the
 * caller and a worker thread take chunks of the same regions (shared memory, no copy per feature) from a shared
 * counter until none are left — so a thread slowed by a busy machine simply takes fewer — then the caller blocks on
 * a shared flag and reads the worker's column table (transferred buffers) with receiveMessageOnPort. Same features
 * and ids as `featureTableFromRegions`: rows are numbered with their root piece as the last tie-break, so the split
 * does not show. Chunks the worker took but did not deliver (it failed or timed out) are measured by the caller.
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
import { FEATURE_CHUNK, featureTableFromRegions, measureFeatures, type FeatureOptions } from './features';
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

/** `chunk`: piece indices per claimed chunk (default FEATURE_CHUNK; tests use small ones to exercise the split). */
export type ThreadOptions = FeatureOptions & { threads?: number; minPieces?: number; chunk?: number };

/** `featureTableInThreads` as `Feature` objects (tests, small layouts). */
export function featuresInThreads(regions: OpenRegions, opts: ThreadOptions = {}, info: { threads?: number } = {}): Feature[] {
  return featureList(featureTableInThreads(regions, opts, info));
}

/**
 * `featureTableFromRegions(regions, opts)` spread over two threads when the layout is big and a worker can start.
 * `threads: 1` forces one thread. `meanwhile`, when given, runs on the calling thread once the worker has started
 * (other work of the caller; the worker takes more chunks in the meantime); `info.meanwhileRan` says whether it did
 * (not on one thread: then the caller runs it itself).
 */
export function featureTableInThreads(regions: OpenRegions, opts: ThreadOptions = {}, info: { threads?: number; meanwhileRan?: boolean } = {}, meanwhile?: () => void): FeatureTable {
  const { threads, minPieces, chunk: chunkOpt, ...featureOpts } = opts;
  const chunk = chunkOpt ?? FEATURE_CHUNK;
  const want = Math.min(threads ?? 2, availableParallelism());
  info.threads = 1;
  info.meanwhileRan = false;
  if (want < 2 || regions.pieceCount < (minPieces ?? MIN_PIECES) || featureOpts.shard) return featureTableFromRegions(regions, featureOpts);
  const flag = new Int32Array(new SharedArrayBuffer(4));
  const chunks = Math.ceil(regions.pieceCount / chunk);
  const next = new Int32Array(new SharedArrayBuffer(4));
  const owner = new Uint8Array(new SharedArrayBuffer(Math.max(1, chunks)));
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
  const ME = 1, WORKER = 2;
  const worker = startWorker({ regions: sharedRegions, opts: featureOpts, claim: { next, owner, me: WORKER, chunk }, flag, port: channel.port2 }, channel.port2);
  if (!worker) return featureTableFromRegions(regions, featureOpts);
  worker.unref();
  try {
    const t0 = performance.now();
    if (meanwhile) {
      meanwhile();
      info.meanwhileRan = true;
    }
    const mine = measureFeatures(regions, featureOpts, { next, owner, me: ME, chunk });
    // The worker is at most one chunk behind unless it is stuck; allow generous slack (start-up, a busy machine).
    const limit = Math.max(60_000, 4 * (performance.now() - t0));
    const until = performance.now() + limit;
    while (Atomics.load(flag, 0) === 0 && performance.now() < until) Atomics.wait(flag, 0, 0, Math.min(1000, until - performance.now()));
    let msg: { table?: unknown; roots?: unknown; error?: string } | undefined;
    for (let k = 0; k < 100 && Atomics.load(flag, 0) !== 0 && !msg; k++) {
      msg = receiveMessageOnPort(channel.port1)?.message as typeof msg;
      if (!msg) Atomics.wait(flag, 0, -1, 10);
    }
    const parts = [mine];
    if (msg?.table && msg.roots instanceof Float64Array) {
      const table = unpackFeatureTable(msg.table);
      if (msg.roots.length !== table.count) throw new Error('features thread: roots and rows differ in number');
      parts.push({ table, roots: msg.roots });
      info.threads = 2;
    } else {
      // No result: stop further claims and measure every chunk this thread did not (whatever the worker took).
      Atomics.store(next, 0, chunks);
      const todo: number[] = [];
      for (let c = 0; c < chunks; c++) if (Atomics.load(owner, c) !== ME) todo.push(c);
      parts.push(measureFeatures(regions, featureOpts, { only: Uint32Array.from(todo), chunk }));
    }
    const roots = new Float64Array(parts.reduce((s, p) => s + p.roots.length, 0));
    let at = 0;
    for (const p of parts) {
      roots.set(p.roots, at);
      at += p.roots.length;
    }
    return numberFeatureTable(concatFeatureTables(parts.map((p) => p.table)), roots);
  } finally {
    void worker.terminate();
    channel.port1.close();
  }
}
