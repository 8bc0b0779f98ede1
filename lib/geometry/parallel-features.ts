/**
 * Features of big layouts measured on two threads, behind a synchronous call (the pipeline is synchronous): the
 * caller and a worker thread take chunks of the same regions (shared memory, no copy per feature) from a shared
 * counter until none are left — so a thread slowed by a busy machine simply takes fewer — then the caller waits for
 * the worker's column table (transferred buffers; lib/threads/sync-helper.ts). Each thread sorts its own rows into
 * id order and the caller merges the two. Same features and ids as `featureTableFromRegions`: rows are ordered with
 * their root piece as the last tie-break, so the split does not show. Chunks the worker took but did not deliver (it failed or timed out) are measured by the caller.
 *
 * The worker is the caller's helper thread when it has one (the analysis keeps one for all its stages), else
 * features-thread: the compiled sibling `features-thread.mjs` when present (bundles), else the TypeScript source
 * through tsx's loader (CLI and benchmarks run from source). When neither can start, or the
 * worker does not answer in time, everything is measured on the calling thread — slower, never different.
 */
import { availableParallelism } from 'node:os';
import { startSyncHelper, type TaskThread } from '../threads/sync-helper';
import { packFeatureTable, unpackFeatureTable } from './feature-pack';
import { featureList, mergeSortedRows, sortKeyedRows, type FeatureTable } from './feature-table';
import { FEATURE_CHUNK, featureTableFromRegions, measureFeatures, type FeatureClaim, type FeatureOptions } from './features';
import type { OpenRegions } from './region-builder';
import type { Feature } from './types';

/** Below this many union pieces a second thread costs more to start than it saves. */
const MIN_PIECES = 50_000;

function shared<T extends Float64Array | Uint32Array | Uint8Array>(a: T): T {
  if (a.buffer instanceof SharedArrayBuffer) return a; // already shared (the two-thread union's output)
  const Ctor = a.constructor as { new (b: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };
  const copy = new Ctor(new SharedArrayBuffer(Math.max(Ctor.BYTES_PER_ELEMENT, a.length * Ctor.BYTES_PER_ELEMENT)));
  copy.set(a);
  return a.length === 0 ? (copy.subarray(0, 0) as T) : copy;
}

/** The features-only helper (features-thread): the compiled sibling when present (bundles), else the source. */
function startFeaturesThread(): TaskThread | null {
  return startSyncHelper(new URL('./features-thread.mjs', import.meta.url), new URL('./features-thread.ts', import.meta.url));
}

interface FeaturesTask {
  regions: OpenRegions;
  opts: FeatureOptions;
  claim: FeatureClaim;
}

/** Helper-thread side: measure chunks from the shared claim counter; the rows go back as transferred columns. */
export function featuresHelperTask(payload: unknown): { result: unknown; transfer: ArrayBuffer[] } {
  const { regions, opts, claim } = payload as FeaturesTask;
  // Sorted here, in parallel with the caller sorting its own rows: the caller then only merges.
  const m = sortKeyedRows(measureFeatures(regions, opts, claim));
  const { table, transfer } = packFeatureTable(m.table);
  return { result: { table, roots: m.roots, sorted: true }, transfer: [...transfer, m.roots.buffer as ArrayBuffer] };
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
 * (not on one thread: then the caller runs it itself). `helper`: a running helper thread to use (the analysis keeps
 * one for all its stages; it stays open); without one a features thread is started and closed here.
 */
export function featureTableInThreads(
  regions: OpenRegions,
  opts: ThreadOptions = {},
  info: { threads?: number; meanwhileRan?: boolean } = {},
  meanwhile?: () => void,
  helper?: TaskThread | null,
): FeatureTable {
  const { threads, minPieces, chunk: chunkOpt, ...featureOpts } = opts;
  const chunk = chunkOpt ?? FEATURE_CHUNK;
  const want = Math.min(threads ?? 2, availableParallelism());
  info.threads = 1;
  info.meanwhileRan = false;
  if (want < 2 || regions.pieceCount < (minPieces ?? MIN_PIECES) || featureOpts.shard || helper === null) return featureTableFromRegions(regions, featureOpts);
  const chunks = Math.ceil(regions.pieceCount / chunk);
  const next = new Int32Array(new SharedArrayBuffer(4));
  const owner = new Uint8Array(new SharedArrayBuffer(Math.max(1, chunks)));
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
  const thread = helper ?? startFeaturesThread();
  if (!thread) return featureTableFromRegions(regions, featureOpts);
  try {
    const t0 = performance.now();
    const id = thread.post('features', { regions: sharedRegions, opts: featureOpts, claim: { next, owner, me: WORKER, chunk } } satisfies FeaturesTask);
    if (meanwhile) {
      meanwhile();
      info.meanwhileRan = true;
    }
    const parts = [sortKeyedRows(measureFeatures(regions, featureOpts, { next, owner, me: ME, chunk }))];
    let theirs = 0;
    for (let c = 0; c < chunks; c++) if (Atomics.load(owner, c) === WORKER) theirs++;
    // The worker is at most one chunk behind unless it is stuck; allow generous slack (start-up, a busy machine).
    const msg = theirs > 0 ? (thread.wait(id, Math.max(60_000, 4 * (performance.now() - t0))) as { table?: unknown; roots?: unknown; sorted?: unknown } | null) : null;
    if (msg?.table && msg.roots instanceof Float64Array) {
      const table = unpackFeatureTable(msg.table);
      if (msg.roots.length !== table.count) throw new Error('features thread: roots and rows differ in number');
      parts.push(msg.sorted === true ? { table, roots: msg.roots } : sortKeyedRows({ table, roots: msg.roots }));
      info.threads = 2;
    }
    // Chunks nobody delivered (the worker failed, timed out, or had claimed without recording it yet): stop further
    // claims and measure them here.
    Atomics.store(next, 0, chunks);
    const todo: number[] = [];
    for (let c = 0; c < chunks; c++) {
      const o = Atomics.load(owner, c);
      if (o !== ME && !(o === WORKER && info.threads === 2)) todo.push(c);
    }
    if (todo.length) parts.push(sortKeyedRows(measureFeatures(regions, featureOpts, { only: Uint32Array.from(todo), chunk })));
    // In shared memory: the prediction stage shares these columns with the helper thread without a copy.
    return mergeSortedRows(parts, (bytes) => new SharedArrayBuffer(bytes));
  } finally {
    if (!helper) thread.close();
  }
}
