/**
 * Features as columns (one typed array per field, row k = one opening) instead of one object per opening: a
 * million `Feature` objects with their bbox/centroid arrays live through a whole analysis and the garbage collector
 * copies and marks them again and again; a dozen typed arrays cost it nothing. `featureAt` gives one row as a
 * `Feature` for code that wants an object (tests, CLI JSON, small layouts).
 *
 * Build with `FeatureTableBuilder` (grows by doubling) and join parts with `concatFeatureTables` (shards of the
 * two-thread path, later tiles); `numberFeatureTable` puts a table in id order. Columns may be views into a larger
 * buffer: read `count` rows, never `column.length`.
 */
import type { Box, Feature, FeatureKind } from './types';

/** Kind codes of the `kind` column (index into this list). */
export const FEATURE_KINDS: readonly FeatureKind[] = ['round-hole', 'square-hole', 'trench', 'open-field', 'irregular'];
const KIND_CODE = new Map<FeatureKind, number>(FEATURE_KINDS.map((k, i) => [k, i]));

export function featureKindCode(kind: FeatureKind): number {
  const c = KIND_CODE.get(kind);
  if (c === undefined) throw new RangeError(`unknown feature kind ${String(kind)}`);
  return c;
}

/** The float columns, in µm (µm² for area), named like the `Feature` fields they hold. */
export const FEATURE_F64_COLUMNS = ['centroidXUm', 'centroidYUm', 'x0Um', 'y0Um', 'x1Um', 'y1Um', 'areaUm2', 'perimeterUm', 'minWidthUm', 'maxWidthUm', 'lengthUm', 'widthStepUm'] as const;
export type FeatureF64Column = (typeof FEATURE_F64_COLUMNS)[number];

export interface FeatureTable extends Record<FeatureF64Column, Float64Array> {
  count: number;
  /** Feature id (1-based reading order once numbered; 0 before). */
  id: Uint32Array;
  /** Index into FEATURE_KINDS. */
  kind: Uint8Array;
  /** 1 = widths exact. */
  widthExact: Uint8Array;
  /** Number of tile pieces the feature was stitched from. */
  pieces: Uint32Array;
}

/** One row as plain numbers (what the builder takes). */
export interface FeatureRow {
  kind: number;
  centroidXUm: number;
  centroidYUm: number;
  x0Um: number;
  y0Um: number;
  x1Um: number;
  y1Um: number;
  areaUm2: number;
  perimeterUm: number;
  minWidthUm: number;
  maxWidthUm: number;
  lengthUm: number;
  widthStepUm: number;
  widthExact: boolean;
  pieces: number;
}

/** `alloc` supplies the columns' memory (shared memory when another thread reads the table). */
export function emptyFeatureTable(capacity = 0, alloc: (bytes: number) => ArrayBufferLike = (b) => new ArrayBuffer(b)): FeatureTable {
  const t = { count: 0, id: new Uint32Array(alloc(4 * capacity)), kind: new Uint8Array(alloc(capacity)), widthExact: new Uint8Array(alloc(capacity)), pieces: new Uint32Array(alloc(4 * capacity)) } as FeatureTable;
  for (const c of FEATURE_F64_COLUMNS) t[c] = new Float64Array(alloc(8 * capacity));
  return t;
}

/** Every column of a table, for code that copies or transfers all of them. */
export function featureColumns(t: FeatureTable): (Float64Array | Uint32Array | Uint8Array)[] {
  return [t.id, t.kind, t.widthExact, t.pieces, ...FEATURE_F64_COLUMNS.map((c) => t[c])];
}

/** Rows [0, count) copied into tight new arrays (drops a builder's spare capacity; transferable on their own). */
export function trimFeatureTable(t: FeatureTable): FeatureTable {
  const n = t.count;
  const out = { count: n, id: t.id.slice(0, n), kind: t.kind.slice(0, n), widthExact: t.widthExact.slice(0, n), pieces: t.pieces.slice(0, n) } as FeatureTable;
  for (const c of FEATURE_F64_COLUMNS) out[c] = t[c].slice(0, n);
  return out;
}

/** Rows [from, to) as views into t's columns (no copy). */
export function sliceFeatureTable(t: FeatureTable, from: number, to: number): FeatureTable {
  const out = { count: to - from, id: t.id.subarray(from, to), kind: t.kind.subarray(from, to), widthExact: t.widthExact.subarray(from, to), pieces: t.pieces.subarray(from, to) } as FeatureTable;
  for (const c of FEATURE_F64_COLUMNS) out[c] = t[c].subarray(from, to);
  return out;
}

/** Appends rows; `finish()` returns a tight table. */
export class FeatureTableBuilder {
  private t: FeatureTable;
  constructor(capacity = 1024) {
    this.t = emptyFeatureTable(Math.max(16, capacity));
  }

  get count(): number {
    return this.t.count;
  }

  /** Rows the current columns hold before they grow. */
  get capacity(): number {
    return this.t.id.length;
  }

  private grow(): void {
    const old = this.t;
    const next = emptyFeatureTable(old.id.length * 2);
    next.count = old.count;
    next.id.set(old.id);
    next.kind.set(old.kind);
    next.widthExact.set(old.widthExact);
    next.pieces.set(old.pieces);
    for (const c of FEATURE_F64_COLUMNS) next[c].set(old[c]);
    this.t = next;
  }

  /** Adds one row (id 0 unless given); returns its row index. */
  push(r: FeatureRow, id = 0): number {
    if (this.t.count === this.t.id.length) this.grow();
    const t = this.t;
    const k = t.count++;
    t.id[k] = id;
    t.kind[k] = r.kind;
    t.centroidXUm[k] = r.centroidXUm;
    t.centroidYUm[k] = r.centroidYUm;
    t.x0Um[k] = r.x0Um;
    t.y0Um[k] = r.y0Um;
    t.x1Um[k] = r.x1Um;
    t.y1Um[k] = r.y1Um;
    t.areaUm2[k] = r.areaUm2;
    t.perimeterUm[k] = r.perimeterUm;
    t.minWidthUm[k] = r.minWidthUm;
    t.maxWidthUm[k] = r.maxWidthUm;
    t.lengthUm[k] = r.lengthUm;
    t.widthStepUm[k] = r.widthStepUm;
    t.widthExact[k] = r.widthExact ? 1 : 0;
    t.pieces[k] = r.pieces;
    return k;
  }

  /** Appends every row of a table (ids kept). */
  append(src: FeatureTable): void {
    while (this.t.id.length < this.t.count + src.count) this.grow();
    const t = this.t, at = t.count, n = src.count;
    t.id.set(src.id.subarray(0, n), at);
    t.kind.set(src.kind.subarray(0, n), at);
    t.widthExact.set(src.widthExact.subarray(0, n), at);
    t.pieces.set(src.pieces.subarray(0, n), at);
    for (const c of FEATURE_F64_COLUMNS) t[c].set(src[c].subarray(0, n), at);
    t.count += n;
  }

  finish(): FeatureTable {
    return trimFeatureTable(this.t);
  }
}

/** The rows of several tables one after the other (ids kept; renumber with numberFeatureTable). */
export function concatFeatureTables(parts: readonly FeatureTable[]): FeatureTable {
  const b = new FeatureTableBuilder(parts.reduce((s, p) => s + p.count, 0));
  for (const p of parts) b.append(p);
  return b.finish();
}

/** Rows in the given order: out row k = row order[k] of t. */
export function permuteFeatureTable(t: FeatureTable, order: Uint32Array): FeatureTable {
  const n = order.length;
  const out = emptyFeatureTable(n);
  out.count = n;
  const gather = <A extends Float64Array | Uint32Array | Uint8Array>(src: A, dst: A) => {
    for (let k = 0; k < n; k++) dst[k] = src[order[k] as number] as number;
  };
  gather(t.id, out.id);
  gather(t.kind, out.kind);
  gather(t.widthExact, out.widthExact);
  gather(t.pieces, out.pieces);
  for (const c of FEATURE_F64_COLUMNS) gather(t[c], out[c]);
  return out;
}

/**
 * `order` stably sorted by v[order[k]] ascending: an LSD radix sort on the IEEE-754 bits (made unsigned-sortable;
 * -0 counts as 0), four 16-bit passes, skipping passes where every key has the same digit. The keys are gathered
 * into order once and travel with the indices, so every pass reads sequentially. A comparator sort over a million
 * indices costs several times more.
 */
function radixSortBy(order: Uint32Array, v: Float64Array): Uint32Array {
  const n = order.length;
  const f = new Float64Array(n);
  for (let k = 0; k < n; k++) f[k] = (v[order[k] as number] as number) + 0;
  let keys = new Uint32Array(f.buffer); // [lo, hi] per entry, little-endian
  // Sortable unsigned form: negative numbers flip every bit, others flip the sign bit.
  for (let k = 0; k < n; k++) {
    const hi = keys[2 * k + 1] as number;
    if (hi & 0x80000000) {
      keys[2 * k] = ~(keys[2 * k] as number) >>> 0;
      keys[2 * k + 1] = ~hi >>> 0;
    } else keys[2 * k + 1] = (hi | 0x80000000) >>> 0;
  }
  // All four digit histograms in one sequential pass.
  const hist = new Uint32Array(4 * 65_536);
  for (let k = 0; k < n; k++) {
    const lo = keys[2 * k] as number, hi = keys[2 * k + 1] as number;
    hist[lo & 0xffff]!++;
    hist[65_536 + (lo >>> 16)]!++;
    hist[131_072 + (hi & 0xffff)]!++;
    hist[196_608 + (hi >>> 16)]!++;
  }
  let src: Uint32Array = order, dst: Uint32Array = new Uint32Array(n);
  let keysOut = new Uint32Array(2 * n);
  const start = new Uint32Array(65_536);
  for (let pass = 0; pass < 4; pass++) {
    const base = pass * 65_536, word = pass >> 1, shift = (pass & 1) * 16;
    if (n === 0 || hist[base + (((keys[word] as number) >>> shift) & 0xffff)] === n) continue; // one digit: order unchanged
    let at = 0;
    for (let d = 0; d < 65_536; d++) {
      start[d] = at;
      at += hist[base + d] as number;
    }
    for (let k = 0; k < n; k++) {
      const lo = keys[2 * k] as number, hi = keys[2 * k + 1] as number;
      const to = start[((word === 0 ? lo : hi) >>> shift) & 0xffff]!++;
      dst[to] = src[k] as number;
      keysOut[2 * to] = lo;
      keysOut[2 * to + 1] = hi;
    }
    [src, dst] = [dst, src];
    [keys, keysOut] = [keysOut, keys];
  }
  return src;
}

/**
 * Id order (see numberFeatures in features.ts): by bbox lower edge, then left edge, then centroid x, ties by
 * `tieBreak` when given (the root piece: then the order does not depend on how rows were split between threads),
 * else in row order. Row order[k] of t gets id k + 1.
 */
export function featureIdOrder(t: FeatureTable, tieBreak?: Float64Array): Uint32Array {
  const n = t.count;
  let order: Uint32Array = new Uint32Array(n);
  for (let k = 0; k < n; k++) order[k] = k;
  // Least significant key first; each pass is stable, so earlier keys break ties of later ones.
  for (const col of tieBreak ? [tieBreak, t.centroidXUm, t.x0Um, t.y0Um] : [t.centroidXUm, t.x0Um, t.y0Um]) order = radixSortBy(order, col);
  return order;
}

/** The table in id order with ids 1..n (see featureIdOrder). */
export function numberFeatureTable(t: FeatureTable, tieBreak?: Float64Array): FeatureTable {
  const n = t.count;
  const out = permuteFeatureTable(t, featureIdOrder(t, tieBreak));
  for (let k = 0; k < n; k++) out.id[k] = k + 1;
  return out;
}

/** Rows and their tie-break keys (the root piece: unique per row), as measured or sorted. */
export interface KeyedRows {
  table: FeatureTable;
  roots: Float64Array;
}

/** The rows in id order (featureIdOrder with the roots as tie-break), ids left as they are. */
export function sortKeyedRows(part: KeyedRows): KeyedRows {
  const order = featureIdOrder(part.table, part.roots);
  const roots = new Float64Array(order.length);
  for (let k = 0; k < order.length; k++) roots[k] = part.roots[order[k] as number] as number;
  return { table: permuteFeatureTable(part.table, order), roots };
}

const cmpBits = new Float64Array(2);
const cmpWords = new Uint32Array(cmpBits.buffer);
/** The radix sort's order on one key: numeric, -0 equal to 0, NaN placed by its sortable bit pattern. */
function keyOrder(a: number, b: number): number {
  if (a < b) return -1;
  if (a > b) return 1;
  if (a === b) return 0;
  cmpBits[0] = a + 0;
  cmpBits[1] = b + 0;
  const sortable = (hi: number, lo: number) => (hi & 0x80000000 ? [~hi >>> 0, ~lo >>> 0] : [(hi | 0x80000000) >>> 0, lo]);
  const [ah, al] = sortable(cmpWords[1] as number, cmpWords[0] as number) as [number, number];
  const [bh, bl] = sortable(cmpWords[3] as number, cmpWords[2] as number) as [number, number];
  return ah !== bh ? (ah < bh ? -1 : 1) : al !== bl ? (al < bl ? -1 : 1) : 0;
}

/**
 * Parts each sorted by `sortKeyedRows`, merged into one table numbered 1..n: the same table as
 * `numberFeatureTable(concatFeatureTables(tables), concatenated roots)` (the order is total: roots are unique), at
 * the cost of a merge instead of a sort of all rows — threads sort their own parts at the same time. `alloc`: as
 * for emptyFeatureTable.
 */
export function mergeSortedRows(parts: readonly KeyedRows[], alloc?: (bytes: number) => ArrayBufferLike): FeatureTable {
  const live = parts.filter((p) => p.table.count > 0);
  const n = live.reduce((s, p) => s + p.table.count, 0);
  const from = new Uint8Array(n), row = new Uint32Array(n);
  const at = live.map(() => 0);
  const before = (a: number, b: number): boolean => {
    const A = live[a] as KeyedRows, B = live[b] as KeyedRows, i = at[a] as number, j = at[b] as number;
    const ta = A.table, tb = B.table;
    return (
      (keyOrder(ta.y0Um[i] as number, tb.y0Um[j] as number) ||
        keyOrder(ta.x0Um[i] as number, tb.x0Um[j] as number) ||
        keyOrder(ta.centroidXUm[i] as number, tb.centroidXUm[j] as number) ||
        keyOrder(A.roots[i] as number, B.roots[j] as number)) < 0
    );
  };
  for (let k = 0; k < n; k++) {
    let best = -1;
    for (let p = 0; p < live.length; p++) {
      if ((at[p] as number) >= (live[p] as KeyedRows).table.count) continue;
      if (best < 0 || before(p, best)) best = p;
    }
    from[k] = best;
    row[k] = at[best] as number;
    at[best]!++;
  }
  const out = emptyFeatureTable(n, alloc);
  out.count = n;
  const gather = <A extends Float64Array | Uint32Array | Uint8Array>(pick: (t: FeatureTable) => A, dst: A) => {
    const srcs = live.map((p) => pick(p.table));
    for (let k = 0; k < n; k++) dst[k] = (srcs[from[k] as number] as A)[row[k] as number] as number;
  };
  gather((t) => t.kind, out.kind);
  gather((t) => t.widthExact, out.widthExact);
  gather((t) => t.pieces, out.pieces);
  for (const c of FEATURE_F64_COLUMNS) gather((t) => t[c], out[c]);
  for (let k = 0; k < n; k++) out.id[k] = k + 1;
  return out;
}

/** Row k as a `Feature` object (fresh arrays each call). */
export function featureAt(t: FeatureTable, k: number): Feature {
  return {
    id: t.id[k] as number,
    kind: FEATURE_KINDS[t.kind[k] as number] as FeatureKind,
    centroidUm: [t.centroidXUm[k] as number, t.centroidYUm[k] as number],
    bboxUm: [t.x0Um[k] as number, t.y0Um[k] as number, t.x1Um[k] as number, t.y1Um[k] as number] as Box,
    areaUm2: t.areaUm2[k] as number,
    perimeterUm: t.perimeterUm[k] as number,
    minWidthUm: t.minWidthUm[k] as number,
    maxWidthUm: t.maxWidthUm[k] as number,
    lengthUm: t.lengthUm[k] as number,
    widthStepUm: t.widthStepUm[k] as number,
    widthExact: t.widthExact[k] === 1,
    pieces: t.pieces[k] as number,
  };
}

/** Every row as a `Feature` (one object per opening: for tests and small layouts). */
export function featureList(t: FeatureTable): Feature[] {
  const out = new Array<Feature>(t.count);
  for (let k = 0; k < t.count; k++) out[k] = featureAt(t, k);
  return out;
}

/** A table from `Feature` objects (ids kept). */
export function featureTableOf(fs: readonly Feature[]): FeatureTable {
  const b = new FeatureTableBuilder(fs.length);
  for (const f of fs) {
    b.push(
      {
        kind: featureKindCode(f.kind),
        centroidXUm: f.centroidUm[0],
        centroidYUm: f.centroidUm[1],
        x0Um: f.bboxUm[0],
        y0Um: f.bboxUm[1],
        x1Um: f.bboxUm[2],
        y1Um: f.bboxUm[3],
        areaUm2: f.areaUm2,
        perimeterUm: f.perimeterUm,
        minWidthUm: f.minWidthUm,
        maxWidthUm: f.maxWidthUm,
        lengthUm: f.lengthUm,
        widthStepUm: f.widthStepUm,
        widthExact: f.widthExact,
        pieces: f.pieces,
      },
      f.id,
    );
  }
  return b.finish();
}
