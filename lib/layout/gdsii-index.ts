/**
 * Index pass over a GDSII file for reading it tile by tile: one sequential read with a bounded buffer (never the
 * whole file), through the same parser and checks as the whole-file reader, so bad input fails here with the same
 * LayoutReadError (code, byte offset). What stays in memory per cell: its references and absolute-width paths (as
 * the whole-file reader keeps them), and per layer/datatype a list of its polygon elements, each as
 *
 *   byte offset (uint32 half-offset below 8 GiB, else float64: 4 or 8 bytes)
 *   + outward-rounded local bbox (4 × int32, 16 bytes)                        = 20 (24) bytes per element,
 *
 * kept in the fixed-size chunks they were collected in (no second copy when the pass ends), plus, for lists
 * longer than GRID_MIN, a grid of buckets by element centre — elements are reordered by bucket in place, and each
 * bucket keeps its bbox (≈ 1 byte per element) — so a tile tests buckets first and reads only the elements it
 * needs. Geometry is read back by position.
 *
 * With `shared`, every typed array of the lists lives in shared memory (array-alloc.ts), so the index can be posted
 * to worker threads whole: the lists are shared, only the cell structure (names, references) is cloned.
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { plainAlloc, sharedAlloc, type ArrayAlloc } from './array-alloc';
import { LayoutReadError } from './errors';
import { GdsiiParser, type ElementSink } from './gdsii-parser';
import { bottomUpOrder, cellTotals, checkMissingCells, chooseTopCell, type CellTotals } from './hierarchy';
import { layerKey, type CellDef, type GdsLibrary } from './library';

/** Lists up to this many elements are scanned whole; longer ones get a bucket grid. */
export const GRID_MIN = 256;
/** Target elements per bucket. */
const PER_BUCKET = 32;
const I32_MIN = -2147483648;
const I32_MAX = 2147483647;

/** Elements per storage chunk: lists grow by whole chunks, never by copying, and stay in them. */
const CHUNK_BITS = 15;
const CHUNK = 1 << CHUNK_BITS;
const MASK = CHUNK - 1;

/** One cell's own polygon elements (BOUNDARY, BOX, positive-width PATH) on one layer/datatype (file order; long lists grouped by bucket). */
export interface ElementList {
  key: number;
  layer: number;
  datatype: number;
  count: number;
  /** Flattened point count of these elements (as the whole-file reader stores them). */
  points: number;
  /**
   * Element i starts at byte offsetChunks[i >> 15][i & 32767] × offsetScale. GDSII records have even lengths, so
   * every element starts at an even byte: files below 8 GiB store half the offset in a uint32 (scale 2).
   */
  offsetChunks: (Uint32Array | Float64Array)[];
  offsetScale: number;
  /** Element i: local bbox [x0, y0, x1, y1] at boxChunks[i >> 15][4·(i & 32767)…], rounded outward to int32 (int32 limits mean "unbounded"). */
  boxChunks: Int32Array[];
  /** Exact (float) bbox of every vertex of the list. */
  exact: Float64Array;
  /** Bucket grid: bucket k holds elements starts[k]..starts[k+1] (file order inside), boxes[4k..4k+4) their union. */
  grid: { starts: Uint32Array; boxes: Float64Array } | null;
}

export const elementOffset = (l: ElementList, i: number): number => (l.offsetChunks[i >> CHUNK_BITS]![i & MASK] as number) * l.offsetScale;

export interface IndexedCell {
  def: CellDef;
  lists: ElementList[];
  /** Own polygon elements in all lists. */
  elements: number;
}

export interface GdsiiIndex {
  path: string;
  fileSize: number;
  /** The file's modification time when indexing began: offsets are valid only while size and time are unchanged. */
  mtimeMs: number;
  /** Lists in shared memory (IndexOptions.shared). */
  shared: boolean;
  lib: GdsLibrary;
  cells: IndexedCell[];
  order: number[];
  totals: CellTotals;
  /** Top cell index; -1 for a library without cells. */
  top: number;
}

interface ListBuilder {
  key: number;
  layer: number;
  datatype: number;
  points: number;
  count: number;
  offsets: (Uint32Array | Float64Array)[];
  boxes: Int32Array[];
  exact: [number, number, number, number];
}

/** Collects offsets and boxes instead of geometry. */
class IndexSink implements ElementSink {
  readonly keepLabels = false;
  /** Store offset / 2 in uint32 (files below 8 GiB; element offsets are even). */
  constructor(readonly half: boolean, readonly alloc: ArrayAlloc) {}
  readonly byCell = new Map<CellDef, Map<number, ListBuilder>>();
  private lastCell: CellDef | null = null;
  private lastList: ListBuilder | null = null;

  ring(cell: CellDef, layer: number, datatype: number, xy: ArrayLike<number>, n: number, offset: number): void {
    let list = this.lastList;
    if (!list || this.lastCell !== cell || list.layer !== layer || list.datatype !== datatype) {
      let lists = this.byCell.get(cell);
      if (!lists) this.byCell.set(cell, (lists = new Map()));
      const key = layerKey(layer, datatype);
      list = lists.get(key) ?? null;
      if (!list) lists.set(key, (list = { key, layer, datatype, points: 0, count: 0, offsets: [], boxes: [], exact: [Infinity, Infinity, -Infinity, -Infinity] }));
      this.lastCell = cell;
      this.lastList = list;
    }
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let k = 0; k < n; k += 2) {
      const x = xy[k] as number, y = xy[k + 1] as number;
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
    const e = list.exact;
    if (x0 < e[0]) e[0] = x0;
    if (y0 < e[1]) e[1] = y0;
    if (x1 > e[2]) e[2] = x1;
    if (y1 > e[3]) e[3] = y1;
    list.points += n >> 1;
    const i = list.count & (CHUNK - 1);
    if (i === 0) {
      // Small lists (most cells) start small; later chunks are full size.
      const size = list.count === 0 ? 16 : CHUNK;
      list.offsets.push(this.half ? this.alloc.u32(size) : this.alloc.f64(size));
      list.boxes.push(this.alloc.i32(4 * size));
    } else if (i === list.offsets[list.offsets.length - 1]!.length) {
      // First chunk outgrew its small start: widen it to a full chunk.
      const o = this.half ? this.alloc.u32(CHUNK) : this.alloc.f64(CHUNK);
      o.set(list.offsets[0]!);
      list.offsets[0] = o;
      const b = this.alloc.i32(4 * CHUNK);
      b.set(list.boxes[0]!);
      list.boxes[0] = b;
    }
    const c = list.count >> CHUNK_BITS;
    list.offsets[c]![i] = this.half ? offset / 2 : offset;
    const bx = list.boxes[c]!;
    bx[4 * i] = lo(x0);
    bx[4 * i + 1] = lo(y0);
    bx[4 * i + 2] = hi(x1);
    bx[4 * i + 3] = hi(y1);
    list.count++;
  }
}

const lo = (v: number) => (v > I32_MIN ? Math.max(I32_MIN, Math.floor(v)) : I32_MIN);
const hi = (v: number) => (v < I32_MAX ? Math.min(I32_MAX, Math.ceil(v)) : I32_MAX);

const DONE = 0xffffffff;

/**
 * Trim the last chunk and, for long lists sort the elements into a grid
 * of buckets by bbox centre — in place (cycle-following permutation), so no second copy of the list exists.
 */
function buildList(b: ListBuilder, halfOffsets: boolean, alloc: ArrayAlloc): ElementList {
  const count = b.count;
  const last = b.offsets.length - 1;
  const used = count - (last << CHUNK_BITS);
  if (last >= 0 && used < b.offsets[last]!.length) {
    const o = b.offsets[last]!;
    const trimmed = o instanceof Uint32Array ? alloc.u32(used) : alloc.f64(used);
    trimmed.set(o.subarray(0, used));
    b.offsets[last] = trimmed;
    const box = alloc.i32(4 * used);
    box.set((b.boxes[last] as Int32Array).subarray(0, 4 * used));
    b.boxes[last] = box;
  }
  const offsets = b.offsets;
  const boxes = b.boxes;
  const exact = alloc.f64(4);
  exact.set(b.exact);
  const list: ElementList = {
    key: b.key, layer: b.layer, datatype: b.datatype, count, points: b.points,
    offsetChunks: offsets, offsetScale: halfOffsets ? 2 : 1, boxChunks: boxes, exact, grid: null,
  };
  if (count <= GRID_MIN) return list;
  const boxAt = (i: number, q: number) => boxes[i >> CHUNK_BITS]![4 * (i & MASK) + q] as number;
  const [ex0, ey0, ex1, ey1] = b.exact;
  const g = Math.max(1, Math.ceil(Math.sqrt(count / PER_BUCKET)));
  const sx = g / Math.max(1, ex1 - ex0);
  const sy = g / Math.max(1, ey1 - ey0);
  // dest[i]: first the bucket of element i, then (counting sort, stable) its position in bucket order.
  const dest = new Uint32Array(count);
  const starts = alloc.u32(g * g + 1);
  for (let i = 0; i < count; i++) {
    const bx = Math.min(g - 1, Math.max(0, Math.floor(((boxAt(i, 0) + boxAt(i, 2)) / 2 - ex0) * sx)));
    const by = Math.min(g - 1, Math.max(0, Math.floor(((boxAt(i, 1) + boxAt(i, 3)) / 2 - ey0) * sy)));
    const k = by * g + bx;
    dest[i] = k;
    starts[k + 1]!++;
  }
  for (let k = 0; k < g * g; k++) starts[k + 1]! += starts[k] as number;
  const fill = starts.slice(0, g * g);
  const bb = alloc.f64(4 * g * g);
  for (let k = 0; k < g * g; k++) bb.set([Infinity, Infinity, -Infinity, -Infinity], 4 * k);
  for (let i = 0; i < count; i++) {
    const k = dest[i] as number;
    dest[i] = fill[k]!++;
    const x0 = boxAt(i, 0), y0 = boxAt(i, 1), x1 = boxAt(i, 2), y1 = boxAt(i, 3);
    if (x0 < (bb[4 * k] as number)) bb[4 * k] = x0;
    if (y0 < (bb[4 * k + 1] as number)) bb[4 * k + 1] = y0;
    if (x1 > (bb[4 * k + 2] as number)) bb[4 * k + 2] = x1;
    if (y1 > (bb[4 * k + 3] as number)) bb[4 * k + 3] = y1;
  }
  // Move every element to dest[i], one cycle at a time, carrying one element (offset + box) along.
  for (let s = 0; s < count; s++) {
    let j = dest[s] as number;
    if (j === DONE) continue;
    dest[s] = DONE;
    if (j === s) continue;
    const sc = boxes[s >> CHUNK_BITS]!, sq = 4 * (s & MASK);
    let co = offsets[s >> CHUNK_BITS]![s & MASK] as number;
    let c0 = sc[sq] as number, c1 = sc[sq + 1] as number, c2 = sc[sq + 2] as number, c3 = sc[sq + 3] as number;
    for (;;) {
      const oc = offsets[j >> CHUNK_BITS]!, bc = boxes[j >> CHUNK_BITS]!, q = j & MASK, q4 = 4 * q;
      const no = oc[q] as number, n0 = bc[q4] as number, n1 = bc[q4 + 1] as number, n2 = bc[q4 + 2] as number, n3 = bc[q4 + 3] as number;
      oc[q] = co;
      bc[q4] = c0; bc[q4 + 1] = c1; bc[q4 + 2] = c2; bc[q4 + 3] = c3;
      co = no; c0 = n0; c1 = n1; c2 = n2; c3 = n3;
      const nj = dest[j] as number;
      dest[j] = DONE;
      if (nj === DONE) break;
      j = nj;
    }
  }
  list.grid = { starts, boxes: bb };
  return list;
}

export interface IndexOptions {
  topCell?: string;
  /** Keep byte offsets as float64 even below 8 GiB (the large-file layout, for tests). */
  float64Offsets?: boolean;
  /** Keep the lists in shared memory, to hand the index to worker threads without copying (array-alloc.ts). */
  shared?: boolean;
  /** Read buffer size (default 1 MiB). */
  chunkBytes?: number;
  signal?: AbortSignal;
  /** Called after each buffer read with the bytes indexed so far and the file size (progress of a long pass). */
  onProgress?: (bytes: number, fileSize: number) => void;
}

let passes = 0;
/** Index passes this thread has started (how often a file was indexed: tests and logs of the tile threads). */
export const indexPasses = (): number => passes;

/** Index the GDSII file at `path`. Throws LayoutReadError for unreadable or bad input. */
export function indexGdsiiFile(path: string, opts: IndexOptions = {}): GdsiiIndex {
  passes++;
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch (err) {
    const e = err as NodeJS.ErrnoException;
    throw new LayoutReadError('io', `cannot read ${path}: ${e.code === 'ENOENT' ? 'no such file' : e.code === 'EISDIR' ? 'is a directory' : e.message}`);
  }
  try {
    const st = fstatSync(fd);
    const fileSize = st.size;
    const sink = new IndexSink(fileSize < 2 ** 33 && !opts.float64Offsets, opts.shared ? sharedAlloc() : plainAlloc);
    const parser = new GdsiiParser(sink);
    const buf = new Uint8Array(opts.chunkBytes ?? 1 << 20);
    for (let pos = 0; ;) {
      if (opts.signal?.aborted) throw new LayoutReadError('aborted', 'reading was cancelled');
      let n: number;
      try {
        n = readSync(fd, buf, 0, buf.length, pos);
      } catch (err) {
        const e = err as NodeJS.ErrnoException;
        throw new LayoutReadError('io', `cannot read ${path}: ${e.code === 'EISDIR' ? 'is a directory' : e.message}`);
      }
      if (n === 0) break;
      parser.push(n === buf.length ? buf : buf.subarray(0, n));
      pos += n;
      opts.onProgress?.(pos, fileSize);
    }
    const lib = parser.finish();
    const cells = lib.cells.map((def): IndexedCell => {
      const builders = sink.byCell.get(def);
      const lists = builders ? [...builders.values()].sort((a, b) => a.key - b.key).map((b) => buildList(b, sink.half, sink.alloc)) : [];
      sink.byCell.delete(def); // let the chunks go before the next cell's lists are built
      return { def, lists, elements: lists.reduce((n, l) => n + l.count, 0) };
    });
    sink.byCell.clear();
    checkMissingCells(lib);
    const order = bottomUpOrder(lib);
    const totals = cellTotals(lib, order, (_cell, i) => (cells[i] as IndexedCell).lists.map((l) => [l.key, l.count, l.points] as const));
    const top = chooseTopCell(lib, totals, opts.topCell);
    return { path, fileSize, mtimeMs: st.mtimeMs, shared: sink.alloc.shared, lib, cells, order, totals, top };
  } finally {
    closeSync(fd);
  }
}

/**
 * Indices of the elements of `list` whose bbox, placed by the affine map (a, b, c, d, tx, ty), meets `box`
 * (already widened by the caller's margin), appended to `out`. Uses the buckets when there are any.
 */
export function elementsMeeting(
  list: ElementList, t: { a: number; b: number; c: number; d: number; tx: number; ty: number }, box: readonly number[], out: number[],
): void {
  const chunks = list.boxChunks;
  const test = (i: number) => {
    const bc = chunks[i >> CHUNK_BITS] as Int32Array;
    const q = 4 * (i & MASK);
    if (placedBoxMeets(t, bc[q] as number, bc[q + 1] as number, bc[q + 2] as number, bc[q + 3] as number, box)) out.push(i);
  };
  const grid = list.grid;
  if (!grid) {
    for (let i = 0; i < list.count; i++) test(i);
    return;
  }
  const nb = grid.starts.length - 1;
  const bb = grid.boxes;
  for (let k = 0; k < nb; k++) {
    const s = grid.starts[k] as number, e = grid.starts[k + 1] as number;
    if (s === e || !placedBoxMeets(t, bb[4 * k] as number, bb[4 * k + 1] as number, bb[4 * k + 2] as number, bb[4 * k + 3] as number, box)) continue;
    for (let j = s; j < e; j++) test(j);
  }
}

/** Whether the bbox of box [x0, y0, x1, y1] under the affine map meets `box` [X0, Y0, X1, Y1]. */
export function placedBoxMeets(
  t: { a: number; b: number; c: number; d: number; tx: number; ty: number }, x0: number, y0: number, x1: number, y1: number, box: readonly number[],
): boolean {
  const cx = (x0 + x1) / 2, cy = (y0 + y1) / 2, hx = (x1 - x0) / 2, hy = (y1 - y0) / 2;
  const X = t.a * cx + t.b * cy + t.tx, Y = t.c * cx + t.d * cy + t.ty;
  const ex = Math.abs(t.a) * hx + Math.abs(t.b) * hy, ey = Math.abs(t.c) * hx + Math.abs(t.d) * hy;
  return X + ex >= (box[0] as number) && X - ex <= (box[2] as number) && Y + ey >= (box[1] as number) && Y - ey <= (box[3] as number);
}

/** Bytes held by the element lists of an index (offsets, boxes, buckets), for benchmarks and reports. */
export function indexBytes(index: GdsiiIndex): { bytes: number; elements: number } {
  let bytes = 0;
  let elements = 0;
  for (const c of index.cells) {
    for (const l of c.lists) {
      elements += l.count;
      for (const c of l.offsetChunks) bytes += c.byteLength;
      for (const c of l.boxChunks) bytes += c.byteLength;
      bytes += l.exact.byteLength + (l.grid ? l.grid.starts.byteLength + l.grid.boxes.byteLength : 0);
    }
  }
  return { bytes, elements };
}

/** Start offsets of the chosen elements (`pick[i]`: indices into lists[i]; null: all), ascending. */
export function sortedOffsets(lists: ElementList[], pick: number[][] | null): Float64Array {
  let n = 0;
  lists.forEach((l, i) => (n += pick ? (pick[i] as number[]).length : l.count));
  const out = new Float64Array(n);
  let w = 0;
  lists.forEach((l, i) => {
    if (pick) for (const k of pick[i] as number[]) out[w++] = elementOffset(l, k);
    else for (let k = 0; k < l.count; k++) out[w++] = elementOffset(l, k);
  });
  return out.sort();
}
