/**
 * Whole computations handed to the analysis's helper thread while the analysis thread does something else: the
 * effective-density convolution while the density windows are computed, the result maps while the flags are
 * collected. `offload` posts the task at once and returns a getter: the helper's answer when it arrives, else (no
 * helper, a failure, a malformed or late answer) the same function computed here. Both sides call the same pure
 * function on the same inputs, so where it ran never shows in the result.
 */
import { effectiveDensity, type EffectiveDensityOptions, type Grid } from '../geometry';
import type { TaskThread } from '../threads/sync-helper';
import { paintFeatureColumns, type FeatureMaps, type PaintColumns } from './result-maps';

/** Generous: the helper only has to finish this one task (and at most a claim of an earlier split stage). */
const TIMEOUT_MS = 60_000;

export function offload<T>(helper: TaskThread | null, kind: string, payload: unknown, local: () => T, accept: (reply: unknown) => T | null): () => T {
  if (!helper) return local;
  const id = helper.post(kind, payload);
  return () => {
    const reply = helper.wait(id, TIMEOUT_MS);
    return (reply === null ? null : accept(reply)) ?? local();
  };
}

interface EffectiveTask {
  coverage: Float32Array;
  grid: Grid;
  opts: EffectiveDensityOptions;
}

export function effectiveHelperTask(payload: unknown): { result: unknown; transfer: ArrayBuffer[] } {
  const { coverage, grid, opts } = payload as EffectiveTask;
  const out = effectiveDensity(coverage, grid, opts);
  return { result: out, transfer: [out.buffer as ArrayBuffer] };
}

/** effectiveDensity(coverage, grid, opts) on the helper (coverage in shared memory, else it is copied). */
export function effectiveOffloaded(helper: TaskThread | null, coverage: Float32Array, grid: Grid, opts: EffectiveDensityOptions): () => Float32Array {
  const n = grid.nx * grid.ny;
  return offload(helper, 'effective', { coverage, grid, opts } satisfies EffectiveTask, () => effectiveDensity(coverage, grid, opts), (r) => (r instanceof Float32Array && r.length === n ? r : null));
}

interface PaintTask {
  columns: PaintColumns;
  risks: Float64Array;
  coverage: Float32Array;
  grid: Grid;
}

export function paintHelperTask(payload: unknown): { result: unknown; transfer: ArrayBuffer[] } {
  const { columns, risks, coverage, grid } = payload as PaintTask;
  const maps = paintFeatureColumns(columns, risks, coverage, grid);
  const transfer = [maps.aspectRatio, maps.predictedDepth, maps.risk, maps.depthSigma].filter((m): m is Float32Array => m !== null).map((m) => m.buffer as ArrayBuffer);
  return { result: maps, transfer };
}

/** paintFeatureColumns on the helper (columns in shared memory, else they are copied). */
export function paintOffloaded(helper: TaskThread | null, columns: PaintColumns, risks: Float64Array, coverage: Float32Array, grid: Grid): () => FeatureMaps {
  const n = grid.nx * grid.ny;
  const ok = (m: unknown): m is Float32Array => m instanceof Float32Array && m.length === n;
  return offload(helper, 'paint', { columns, risks, coverage, grid } satisfies PaintTask, () => paintFeatureColumns(columns, risks, coverage, grid), (r) => {
    const m = r as Partial<FeatureMaps> | null;
    if (!m || !ok(m.aspectRatio) || !ok(m.predictedDepth) || !ok(m.risk)) return null;
    const sigmaWanted = columns.depthSigmaUm !== null;
    if (sigmaWanted ? !ok(m.depthSigma) : m.depthSigma !== null) return null;
    return m as FeatureMaps;
  });
}
