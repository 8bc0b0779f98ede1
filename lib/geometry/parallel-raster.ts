/**
 * The coverage raster of a big union on two threads: the grid's rows are cut into bands, the calling thread and the
 * helper take bands from a shared counter, accumulate the pieces' edges into that band only (raster.ts stores only
 * a window's rows and skips pieces outside it, adding in the same order as a whole-grid pass) and write the band's
 * coverage, as float32, into one shared map. Rows never mix, so the map equals
 * `Float32Array.from(rasterizeOpenRegions(regions, grid))` bit for bit (tests/geometry/parallel-raster.test.ts).
 */
import type { TaskThread } from '../threads/sync-helper';
import { accumulateRegions, rasterizeOpenRegions } from './raster';
import type { OpenRegions } from './region-builder';
import type { Grid } from './types';

/** Below this many pieces the helper is not asked. */
const MIN_PIECES = 50_000;
const BANDS = 8;
const CALLER = 1, HELPER = 2;

interface RasterTask {
  regions: OpenRegions;
  grid: Grid;
  out: Float32Array;
  /** Band b is rows bounds[b] .. bounds[b + 1] − 1. */
  bounds: Uint32Array;
  next: Int32Array;
  owner: Uint8Array;
}

/** Coverage of rows j0 .. j1 − 1 into `out` (float32, whole grid layout). */
export function rasterBand(regions: OpenRegions, grid: Grid, j0: number, j1: number, out: Float32Array): void {
  const stride = grid.nx + 2;
  const acc = accumulateRegions(regions, grid, { i0: 0, j0, nx: stride, ny: j1 - j0 });
  const nx = grid.nx;
  for (let j = j0; j < j1; j++) {
    let run = 0;
    const line = (j - j0) * stride;
    for (let i = 0; i < nx; i++) {
      run += acc[line + i] as number;
      // As coverageFromDifferences: clamp float noise only.
      out[j * nx + i] = run < 0 ? 0 : run > 1 ? 1 : run;
    }
  }
}

function claimBands(task: RasterTask, me: number): void {
  const bands = task.bounds.length - 1;
  for (;;) {
    const b = Atomics.add(task.next, 0, 1);
    if (b >= bands) return;
    Atomics.store(task.owner, b, me);
    rasterBand(task.regions, task.grid, task.bounds[b] as number, task.bounds[b + 1] as number, task.out);
  }
}

/** Helper-thread side: its bands go straight into the shared map. */
export function rasterHelperTask(payload: unknown): { result: unknown } {
  claimBands(payload as RasterTask, HELPER);
  return { result: true };
}

const sab = (bytes: number): SharedArrayBuffer => new SharedArrayBuffer(bytes);

function shared<T extends Float64Array | Uint32Array | Uint8Array>(a: T): T {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const Ctor = a.constructor as { new (b: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };
  const out = new Ctor(sab(a.length * Ctor.BYTES_PER_ELEMENT));
  out.set(a);
  return out;
}

/**
 * `Float32Array.from(rasterizeOpenRegions(regions, grid))`, the rows shared with `helper` (see module doc). Without
 * a helper, or for a small union, that expression itself.
 */
export function coverageInThreads(regions: OpenRegions, grid: Grid, helper: TaskThread | null, tune: { bands?: number; minPieces?: number; info?: { helperBands?: number } } = {}): Float32Array {
  if (tune.info) tune.info.helperBands = 0;
  if (!helper || regions.pieceCount < (tune.minPieces ?? MIN_PIECES) || grid.ny < 2) return Float32Array.from(rasterizeOpenRegions(regions, grid));
  const n = Math.max(1, Math.min(tune.bands ?? BANDS, grid.ny));
  const bounds = Uint32Array.from({ length: n + 1 }, (_, b) => Math.round((b * grid.ny) / n));
  const task: RasterTask = {
    regions: { ...regions, coords: shared(regions.coords), ringOffsets: shared(regions.ringOffsets), pieceRings: shared(regions.pieceRings), pieceCoverage: shared(regions.pieceCoverage), ...(regions.pieceY ? { pieceY: shared(regions.pieceY) } : {}), seamA: new Uint32Array(0), seamB: new Uint32Array(0), seamLen: new Float64Array(0) },
    grid,
    out: new Float32Array(sab(4 * grid.nx * grid.ny)),
    bounds,
    next: new Int32Array(sab(4)),
    owner: new Uint8Array(sab(n)),
  };
  const t0 = performance.now();
  const id = helper.post('raster', task);
  claimBands(task, CALLER);
  let theirs = 0;
  for (let b = 0; b < n; b++) if (Atomics.load(task.owner, b) !== CALLER) theirs++;
  const ok = theirs === 0 || helper.wait(id, Math.max(30_000, 4 * (performance.now() - t0))) === true;
  // Bands the helper did not finish are done here (same values; a late helper would write the same values too).
  for (let b = 0; b < n; b++) {
    const o = Atomics.load(task.owner, b);
    if (o === CALLER || (o === HELPER && ok)) continue;
    rasterBand(task.regions, grid, bounds[b] as number, bounds[b + 1] as number, task.out);
  }
  if (tune.info) tune.info.helperBands = ok ? theirs : 0;
  return task.out;
}
