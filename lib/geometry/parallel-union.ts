/**
 * The tiled union (open-regions.ts) on two threads: the tiles are cut into chunks of consecutive tiles (row-major,
 * about equal polygon counts), the calling thread and a helper thread take chunks from a shared counter, each
 * chunk is written to its own builder, and the chunks are joined in tile order. Every tile is computed exactly as
 * in `openRegions` (a tile's output depends only on its own polygons), and joining in order renumbers pieces,
 * rings and points as one pass would, so the result is the same array for array (tests/geometry/parallel-union).
 * Input polygons and the plan go to the helper in shared memory; its chunks come back as transferred buffers. The
 * joined output is in shared memory too, so the features stage shares it with its own helper without a copy.
 * Chunks the helper took but did not deliver are computed by the caller.
 */
import type { PolygonSet } from '../layout/types';
import type { TaskThread } from '../threads/sync-helper';
import { openRegions, planUnion, unionTileRange, type OpenRegionsOptions, type UnionPlan } from './open-regions';
import { Builder, matchSeamLines, type OpenRegions } from './region-builder';

/** Below this many polygons the second thread is not worth a task. */
const MIN_POLYGONS = 50_000;
/** Chunks per union: enough that a slow thread takes fewer, few enough that joining them stays cheap. */
const CHUNKS = 64;
const CALLER = 1, HELPER = 2;

/** One chunk's output: a builder's arrays, numbered from 0 within the chunk. */
export interface UnionChunk {
  coords: Float64Array;
  ringOffsets: Uint32Array;
  pieceRings: Uint32Array;
  pieceCoverage: Uint8Array;
  /** Tile-line stretches: key → [lo, hi, piece, side] quadruples (see Builder.lines). */
  lines: Map<string, number[]>;
  covCoords: Float64Array;
  covRingOffsets: Uint32Array;
  /** Lowest and highest y of each piece's points (OpenRegions.pieceY). */
  pieceY: Float64Array;
}

/** What the helper receives (all typed arrays over shared memory). */
export interface UnionTask {
  set: PolygonSet;
  plan: UnionPlan;
  /** Chunk c is tiles bounds[c] .. bounds[c + 1] − 1. */
  bounds: Uint32Array;
  next: Int32Array;
  owner: Uint8Array;
}

const sharedAlloc = (bytes: number): SharedArrayBuffer => new SharedArrayBuffer(bytes);

function sharedCopy<T extends Float64Array | Uint32Array>(a: T): T {
  const Ctor = a.constructor as { new (b: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };
  const out = new Ctor(new SharedArrayBuffer(a.length * Ctor.BYTES_PER_ELEMENT));
  out.set(a);
  return out;
}

/** Chunk boundaries (tile indices) so each chunk holds about the same number of polygon-in-tile entries. */
export function unionChunkBounds(plan: UnionPlan, chunks: number): Uint32Array {
  const tiles = plan.ntx * plan.nty;
  const total = plan.counts[tiles] as number;
  const n = Math.max(1, Math.min(chunks, tiles));
  const out: number[] = [0];
  let t = 0;
  for (let c = 1; c < n; c++) {
    const target = (total * c) / n;
    while (t < tiles && (plan.counts[t] as number) < target) t++;
    if (t > (out[out.length - 1] as number) && t < tiles) out.push(t);
  }
  out.push(tiles);
  return Uint32Array.from(out);
}

/** The union of tiles t0 .. t1 − 1 in a builder of its own. */
export function unionChunk(set: PolygonSet, plan: UnionPlan, t0: number, t1: number): UnionChunk {
  let points = 0;
  for (let k = plan.counts[t0] as number; k < (plan.counts[t1] as number); k++) {
    const p = plan.bucket[k] as number;
    points += (set.offsets[p + 1] as number) - (set.offsets[p] as number);
  }
  const b = new Builder(2 * points);
  unionTileRange(set, plan, t0, t1, b);
  const pieces = b.pieceRings.length - 1;
  const pieceY = new Float64Array(2 * pieces);
  const rings = b.ringOffsets.data, starts = b.pieceRings.data, xy = b.coords;
  for (let q = 0; q < pieces; q++) {
    let lo = Infinity, hi = -Infinity;
    const e = rings[starts[q + 1] as number] as number;
    for (let k = rings[starts[q] as number] as number; k < e; k++) {
      const y = xy[2 * k + 1] as number;
      if (y < lo) lo = y;
      if (y > hi) hi = y;
    }
    pieceY[2 * q] = lo;
    pieceY[2 * q + 1] = hi;
  }
  return {
    pieceY,
    coords: b.coords.subarray(0, b.coordLen),
    ringOffsets: b.ringOffsets.data.subarray(0, b.ringOffsets.length),
    pieceRings: b.pieceRings.data.subarray(0, b.pieceRings.length),
    pieceCoverage: Uint8Array.from(b.pieceCoverage.view()),
    lines: b.lines,
    covCoords: Float64Array.from(b.covCoords),
    covRingOffsets: Uint32Array.from(b.covRingOffsets),
  };
}

/** Take chunks from the shared counter until none are left; returns the chunks taken, in the order taken. */
export function claimUnionChunks(task: UnionTask, me: number): { chunk: number; out: UnionChunk }[] {
  const { set, plan, bounds, next, owner } = task;
  const chunks = bounds.length - 1;
  const done: { chunk: number; out: UnionChunk }[] = [];
  for (;;) {
    const c = Atomics.add(next, 0, 1);
    if (c >= chunks) return done;
    Atomics.store(owner, c, me);
    done.push({ chunk: c, out: unionChunk(set, plan, bounds[c] as number, bounds[c + 1] as number) });
  }
}

/** Helper-thread side of `openRegionsInThreads`. */
export function unionHelperTask(payload: unknown): { result: unknown; transfer: ArrayBuffer[] } {
  const done = claimUnionChunks(payload as UnionTask, HELPER);
  const transfer: ArrayBuffer[] = [];
  for (const { out } of done) {
    for (const a of [out.coords, out.ringOffsets, out.pieceRings, out.pieceCoverage, out.covCoords, out.covRingOffsets, out.pieceY]) transfer.push(a.buffer as ArrayBuffer);
  }
  return { result: done, transfer };
}

function isChunk(x: unknown): x is UnionChunk {
  const o = x as Partial<UnionChunk> | null;
  return (
    !!o &&
    o.coords instanceof Float64Array &&
    o.ringOffsets instanceof Uint32Array &&
    o.pieceRings instanceof Uint32Array &&
    o.pieceCoverage instanceof Uint8Array &&
    o.lines instanceof Map &&
    o.covCoords instanceof Float64Array &&
    o.covRingOffsets instanceof Uint32Array &&
    o.pieceY instanceof Float64Array &&
    o.pieceY.length === 2 * (o.pieceRings.length - 1)
  );
}

/** Join chunks in order into one OpenRegions (shared memory), renumbering as one builder would have. */
export function joinUnionChunks(outs: readonly UnionChunk[], dbuUm: number, plan: UnionPlan): OpenRegions {
  let coordLen = 0, rings = 0, pieces = 0, covLen = 0, covRings = 0;
  for (const o of outs) {
    coordLen += o.coords.length;
    rings += o.ringOffsets.length - 1;
    pieces += o.pieceRings.length - 1;
    covLen += o.covCoords.length;
    covRings += o.covRingOffsets.length - 1;
  }
  const coords = new Float64Array(sharedAlloc(coordLen * 8));
  const ringOffsets = new Uint32Array(sharedAlloc((rings + 1) * 4));
  const pieceRings = new Uint32Array(sharedAlloc((pieces + 1) * 4));
  const pieceCoverage = new Uint8Array(sharedAlloc(Math.max(1, pieces))).subarray(0, pieces);
  const pieceY = new Float64Array(sharedAlloc(16 * pieces));
  const coverageCoords = new Float64Array(covLen);
  const coverageRingOffsets = new Uint32Array(covRings + 1);
  const lines = new Map<string, number[]>();
  let pointBase = 0, ringBase = 0, pieceBase = 0, covAt = 0, covRingBase = 0;
  for (const o of outs) {
    coords.set(o.coords, 2 * pointBase);
    for (let r = 1; r < o.ringOffsets.length; r++) ringOffsets[ringBase + r] = (o.ringOffsets[r] as number) + pointBase;
    for (let q = 1; q < o.pieceRings.length; q++) pieceRings[pieceBase + q] = (o.pieceRings[q] as number) + ringBase;
    pieceCoverage.set(o.pieceCoverage, pieceBase);
    pieceY.set(o.pieceY, 2 * pieceBase);
    for (const [key, list] of o.lines) {
      let to = lines.get(key);
      if (!to) lines.set(key, (to = []));
      for (let k = 0; k < list.length; k += 4) to.push(list[k] as number, list[k + 1] as number, (list[k + 2] as number) + pieceBase, list[k + 3] as number);
    }
    coverageCoords.set(o.covCoords, covAt);
    const covPointBase = covAt / 2;
    for (let r = 1; r < o.covRingOffsets.length; r++) coverageRingOffsets[covRingBase + r] = (o.covRingOffsets[r] as number) + covPointBase;
    pointBase += o.coords.length / 2;
    ringBase += o.ringOffsets.length - 1;
    pieceBase += o.pieceRings.length - 1;
    covAt += o.covCoords.length;
    covRingBase += o.covRingOffsets.length - 1;
  }
  const seamA: number[] = [], seamB: number[] = [], seamLen: number[] = [];
  matchSeamLines(lines, seamA, seamB, seamLen);
  return {
    dbuUm,
    regionDbu: plan.region,
    coords,
    ringOffsets,
    ringCount: rings,
    pieceRings,
    pieceCount: pieces,
    seamA: Uint32Array.from(seamA),
    seamB: Uint32Array.from(seamB),
    seamLen: Float64Array.from(seamLen),
    tileDbu: plan.tile,
    pieceCoverage,
    coverageCoords,
    coverageRingOffsets,
    pieceY,
  };
}

export interface UnionThreadOptions {
  /** Chunks to cut the tiles into (default 64; tests use other counts to move the cut). */
  chunks?: number;
  /** Below this many polygons everything stays on the calling thread (default 50 000). */
  minPolygons?: number;
  /** Filled in: chunks the helper delivered. */
  info?: { helperChunks?: number };
}

/**
 * `openRegions(set, dbuUm, opts)` with the tiles shared between the calling thread and `helper` (see module doc).
 * Without a helper, or for a small set, it is `openRegions` itself.
 */
export function openRegionsInThreads(set: PolygonSet, dbuUm: number, opts: OpenRegionsOptions, helper: TaskThread | null, tune: UnionThreadOptions = {}): OpenRegions {
  if (tune.info) tune.info.helperChunks = 0;
  if (!helper || set.count < (tune.minPolygons ?? MIN_POLYGONS)) return openRegions(set, dbuUm, opts);
  const plan = planUnion(set, opts, sharedAlloc);
  if ('empty' in plan) return openRegions(set, dbuUm, opts);
  const sharedSet: PolygonSet = { layer: set.layer, datatype: set.datatype, count: set.count, coords: sharedCopy(set.coords), offsets: sharedCopy(set.offsets) };
  const bounds = unionChunkBounds(plan, tune.chunks ?? CHUNKS);
  const chunks = bounds.length - 1;
  const task: UnionTask = { set: sharedSet, plan, bounds, next: new Int32Array(sharedAlloc(4)), owner: new Uint8Array(sharedAlloc(chunks)) };
  const t0 = performance.now();
  const id = helper.post('union', task);
  const outs: (UnionChunk | undefined)[] = new Array(chunks);
  for (const { chunk, out } of claimUnionChunks(task, CALLER)) outs[chunk] = out;
  let theirs = 0;
  for (let c = 0; c < chunks; c++) if (Atomics.load(task.owner, c) === HELPER) theirs++;
  if (theirs > 0) {
    // The helper is at most one chunk behind unless it is stuck; allow generous slack for a busy machine.
    const reply = helper.wait(id, Math.max(30_000, 4 * (performance.now() - t0)));
    if (Array.isArray(reply)) {
      for (const r of reply as { chunk?: unknown; out?: unknown }[]) {
        if (typeof r.chunk === 'number' && r.chunk >= 0 && r.chunk < chunks && outs[r.chunk] === undefined && isChunk(r.out)) {
          outs[r.chunk] = r.out;
          if (tune.info) tune.info.helperChunks = (tune.info.helperChunks ?? 0) + 1;
        }
      }
    }
  }
  // Anything not delivered (the helper failed, timed out or had not recorded its claim yet) is done here.
  for (let c = 0; c < chunks; c++) outs[c] ??= unionChunk(set, plan, bounds[c] as number, bounds[c + 1] as number);
  return joinUnionChunks(outs as UnionChunk[], dbuUm, plan);
}
