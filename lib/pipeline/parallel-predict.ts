/**
 * Predictions of a big feature table on two threads: the calling thread and the analysis's helper thread take
 * chunks of rows from a shared counter and write into one result table in shared memory. Each thread keeps its own
 * note lists (RowPredictor); afterwards the rows' note indices are renumbered in row order by first use of each
 * list's content, which is exactly how one pass numbers them — so the table equals `predictFeatureTable`'s
 * (tests/pipeline/parallel-predict.test.ts). Every row's prediction depends on that row alone (the caches only hold
 * values the model would compute again). If any row fails (an opening without a measurable width) or the helper
 * fails or does not answer, the whole table is predicted again on this thread into a fresh table, so the result
 * and the error reported are the one pass's.
 */
import type { FeatureTable, Grid } from '../geometry';
import type { ProcessModel } from '../etch';
import type { TaskThread } from '../threads/sync-helper';
import { emptyFeatureResultTable, type FeatureResultTable } from './feature-results';
import { calibratedRangeOf, predictFeatureTable, RowPredictor, type PredictOptions } from './predict-features';

/** Below this many openings the helper is not asked. */
const MIN_ROWS = 50_000;
const CHUNK = 8192;
const CALLER = 1, HELPER = 2;

/** What the helper receives: the columns prediction reads and the result columns, all in shared memory. */
interface PredictTask {
  features: FeatureTable;
  results: FeatureResultTable;
  effective: Float32Array;
  grid: Grid;
  model: ProcessModel;
  exposedFraction: number;
  next: Int32Array;
  owner: Uint8Array;
  chunk: number;
}

const sab = (bytes: number): SharedArrayBuffer => new SharedArrayBuffer(bytes);

function sharedCopy<T extends Float64Array | Float32Array | Uint32Array | Uint8Array>(a: T, n = a.length): T {
  if (a.buffer instanceof SharedArrayBuffer) return a; // already shared (the two-thread features' table, the raster)
  const Ctor = a.constructor as { new (b: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };
  const out = new Ctor(sab(n * Ctor.BYTES_PER_ELEMENT));
  out.set(a.subarray(0, n));
  return out;
}

/** Claim chunks until none are left, predicting each into `results`; returns how many rows were done. */
function claimRows(task: PredictTask, rows: RowPredictor, me: number, onChunk?: (done: number) => void): number {
  const { features, results, effective, grid, next, owner, chunk } = task;
  const chunks = Math.ceil(features.count / chunk);
  let done = 0;
  for (;;) {
    const c = Atomics.add(next, 0, 1);
    if (c >= chunks) return done;
    Atomics.store(owner, c, me);
    const from = c * chunk, to = Math.min(features.count, from + chunk);
    rows.predict(features, results, effective, grid, from, to);
    done += to - from;
    onChunk?.(c * chunk);
  }
}

/** Helper-thread side: its rows go straight into the shared result columns; only its note lists come back. */
export function predictHelperTask(payload: unknown): { result: unknown } {
  const task = payload as PredictTask;
  const rows = new RowPredictor(task.model, task.exposedFraction);
  claimRows(task, rows, HELPER);
  return { result: { lists: rows.lists } };
}

/**
 * `predictFeatureTable(features, effective, grid, model, opts)` shared with `helper` (see module doc); without a
 * helper, or for a small table, it is that function itself. `opts.onTick` is called between this thread's chunks.
 */
export function predictInThreads(features: FeatureTable, effective: Float32Array, grid: Grid, model: ProcessModel, opts: PredictOptions, helper: TaskThread | null, tune: { minRows?: number; chunk?: number; info?: { helperRows?: number } } = {}): FeatureResultTable {
  if (tune.info) tune.info.helperRows = 0;
  const n = features.count;
  if (!helper || n < (tune.minRows ?? MIN_ROWS)) return predictFeatureTable(features, effective, grid, model, opts);
  const chunk = tune.chunk ?? CHUNK;
  const chunks = Math.ceil(n / chunk);
  // The helper reads only these columns of the geometry.
  const f = { count: n, id: sharedCopy(features.id, n), kind: sharedCopy(features.kind, n), widthExact: sharedCopy(features.widthExact, n) } as FeatureTable;
  for (const c of ['centroidXUm', 'centroidYUm', 'areaUm2', 'perimeterUm', 'minWidthUm'] as const) f[c] = sharedCopy(features[c], n);
  const results = emptyFeatureResultTable(features, calibratedRangeOf(model), sab);
  const task: PredictTask = {
    features: f,
    results: { ...results, features: f },
    effective: sharedCopy(effective),
    grid,
    model,
    exposedFraction: opts.exposedFraction,
    next: new Int32Array(sab(4)),
    owner: new Uint8Array(sab(chunks)),
    chunk,
  };
  const t0 = performance.now();
  const id = helper.post('predict', task);
  const mine = new RowPredictor(model, opts.exposedFraction);
  opts.onTick?.(0, n);
  try {
    claimRows(task, mine, CALLER, (at) => opts.onTick?.(at, n));
  } catch (err) {
    if (err instanceof RangeError) return predictFeatureTable(features, effective, grid, model, opts);
    throw err; // an abort from onTick
  }
  // Any chunk not ours was taken by the helper (it records a claim before working on it, possibly just after we
  // looked): wait for its reply, so no row is still being written when the note indices are renumbered.
  let theirs = 0;
  for (let c = 0; c < chunks; c++) if (Atomics.load(task.owner, c) !== CALLER) theirs++;
  let helperLists: (readonly string[])[] = [];
  if (theirs > 0) {
    const reply = helper.wait(id, Math.max(30_000, 4 * (performance.now() - t0))) as { lists?: unknown } | null;
    let complete = !!reply && Array.isArray(reply.lists);
    for (let c = 0; c < chunks && complete; c++) if (Atomics.load(task.owner, c) === 0) complete = false;
    // A failed or late helper: predict everything again into a fresh table (the helper may still be writing).
    if (!complete) return predictFeatureTable(features, effective, grid, model, opts);
    helperLists = (reply as { lists: (readonly string[])[] }).lists;
  }
  results.noteLists = joinNoteLists(results, task.owner, chunk, mine.lists, helperLists);
  opts.onTick?.(n, n);
  if (tune.info) tune.info.helperRows = theirs * chunk;
  return results;
}

/** Renumber the rows' note indices (each thread's own) by first use in row order; returns the joined lists. */
function joinNoteLists(t: FeatureResultTable, owner: Uint8Array, chunk: number, mine: readonly (readonly string[])[], theirs: readonly (readonly string[])[]): (readonly string[])[] {
  const lists: (readonly string[])[] = [t.noteLists[0] as readonly string[]];
  const byContent = new Map<string, number>();
  const mapMine = new Int32Array(mine.length).fill(-1);
  const mapTheirs = new Int32Array(theirs.length).fill(-1);
  mapMine[0] = 0;
  if (theirs.length) mapTheirs[0] = 0;
  for (let k = 0; k < t.count; k++) {
    const li = t.notes[k] as number;
    if (li === 0) continue;
    const helperRow = owner[Math.floor(k / chunk)] === HELPER;
    const map = helperRow ? mapTheirs : mapMine;
    let to = map[li] as number;
    if (to < 0) {
      const list = (helperRow ? theirs : mine)[li] as readonly string[];
      const content = list.join('\u0000');
      let at = byContent.get(content);
      if (at === undefined) byContent.set(content, (at = lists.push(list) - 1));
      map[li] = to = at;
    }
    t.notes[k] = to;
  }
  return lists;
}
