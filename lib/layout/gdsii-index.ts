/**
 * Index pass over a GDSII file for reading it tile by tile: one sequential read with a bounded buffer (never the
 * whole file), through the same parser and checks as the whole-file reader, so bad input fails here with the same
 * LayoutReadError (code, byte offset). What stays in memory per cell: its references and absolute-width paths (as
 * the whole-file reader keeps them), and per layer/datatype a list of its polygon elements, each as
 *
 *   byte offset (float64, 8 bytes) + outward-rounded local bbox (4 × int32, 16 bytes) = 24 bytes per element,
 *
 * plus, for lists longer than GRID_MIN, a grid of buckets (element centres) with each bucket's bbox (≈ 1 byte per
 * element) so a tile tests buckets first and reads only the elements it needs. Geometry is read back by position.
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { LayoutReadError } from './errors';
import { GdsiiParser, type ElementSink } from './gdsii-parser';
import { GrowF64, GrowI32 } from './grow-buffer';
import { bottomUpOrder, cellTotals, checkMissingCells, chooseTopCell, type CellTotals } from './hierarchy';
import { layerKey, type CellDef, type GdsLibrary } from './library';

/** Lists up to this many elements are scanned whole; longer ones get a bucket grid. */
export const GRID_MIN = 256;
/** Target elements per bucket. */
const PER_BUCKET = 32;
const I32_MIN = -2147483648;
const I32_MAX = 2147483647;

/** One cell's own polygon elements (BOUNDARY, BOX, positive-width PATH) on one layer/datatype. */
export interface ElementList {
  key: number;
  layer: number;
  datatype: number;
  count: number;
  /** Flattened point count of these elements (as the whole-file reader stores them). */
  points: number;
  /** Element start bytes, grouped by bucket (file order inside a bucket). */
  offsets: Float64Array;
  /** Local bbox per element [x0, y0, x1, y1], rounded outward to int32 (int32 limits mean "unbounded"). */
  boxes: Int32Array;
  /** Exact (float) bbox of every vertex of the list. */
  exact: Float64Array;
  /** Bucket grid: elements of bucket k are [starts[k], starts[k+1]); boxes[4k..4k+4) their union. */
  grid: { starts: Uint32Array; boxes: Float64Array } | null;
}

export interface IndexedCell {
  def: CellDef;
  lists: ElementList[];
  /** Own polygon elements in all lists. */
  elements: number;
}

export interface GdsiiIndex {
  path: string;
  fileSize: number;
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
  offsets: GrowF64;
  boxes: GrowI32;
  exact: [number, number, number, number];
}

/** Collects offsets and boxes instead of geometry. */
class IndexSink implements ElementSink {
  readonly keepLabels = false;
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
      if (!list) lists.set(key, (list = { key, layer, datatype, points: 0, offsets: new GrowF64(16), boxes: new GrowI32(64), exact: [Infinity, Infinity, -Infinity, -Infinity] }));
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
    const offs = list.offsets.reserve(1);
    offs[list.offsets.length++] = offset;
    list.boxes.push4(lo(x0), lo(y0), hi(x1), hi(y1));
  }
}

const lo = (v: number) => (v > I32_MIN ? Math.max(I32_MIN, Math.floor(v)) : I32_MIN);
const hi = (v: number) => (v < I32_MAX ? Math.min(I32_MAX, Math.ceil(v)) : I32_MAX);

/** Group elements into a grid of buckets by bbox centre (counting sort, stable: file order kept per bucket). */
function buildList(b: ListBuilder): ElementList {
  const count = b.offsets.length;
  let offsets = b.offsets.data.slice(0, count);
  let boxes = b.boxes.data.slice(0, 4 * count);
  const base = { key: b.key, layer: b.layer, datatype: b.datatype, count, points: b.points, exact: Float64Array.from(b.exact) };
  if (count <= GRID_MIN) return { ...base, offsets, boxes, grid: null };
  const [ex0, ey0, ex1, ey1] = b.exact;
  const g = Math.max(1, Math.ceil(Math.sqrt(count / PER_BUCKET)));
  const sx = g / Math.max(1, ex1 - ex0);
  const sy = g / Math.max(1, ey1 - ey0);
  const bucket = new Uint32Array(count);
  const starts = new Uint32Array(g * g + 1);
  for (let i = 0; i < count; i++) {
    const cx = ((boxes[4 * i] as number) + (boxes[4 * i + 2] as number)) / 2;
    const cy = ((boxes[4 * i + 1] as number) + (boxes[4 * i + 3] as number)) / 2;
    const bx = Math.min(g - 1, Math.max(0, Math.floor((cx - ex0) * sx)));
    const by = Math.min(g - 1, Math.max(0, Math.floor((cy - ey0) * sy)));
    const k = by * g + bx;
    bucket[i] = k;
    starts[k + 1]!++;
  }
  for (let k = 0; k < g * g; k++) starts[k + 1]! += starts[k] as number;
  const fill = starts.slice(0, g * g);
  const o2 = new Float64Array(count);
  const b2 = new Int32Array(4 * count);
  const bb = new Float64Array(4 * g * g);
  for (let k = 0; k < g * g; k++) bb.set([Infinity, Infinity, -Infinity, -Infinity], 4 * k);
  for (let i = 0; i < count; i++) {
    const k = bucket[i] as number;
    const j = fill[k]!++;
    o2[j] = offsets[i] as number;
    for (let q = 0; q < 4; q++) b2[4 * j + q] = boxes[4 * i + q] as number;
    if ((boxes[4 * i] as number) < (bb[4 * k] as number)) bb[4 * k] = boxes[4 * i] as number;
    if ((boxes[4 * i + 1] as number) < (bb[4 * k + 1] as number)) bb[4 * k + 1] = boxes[4 * i + 1] as number;
    if ((boxes[4 * i + 2] as number) > (bb[4 * k + 2] as number)) bb[4 * k + 2] = boxes[4 * i + 2] as number;
    if ((boxes[4 * i + 3] as number) > (bb[4 * k + 3] as number)) bb[4 * k + 3] = boxes[4 * i + 3] as number;
  }
  offsets = o2;
  boxes = b2;
  return { ...base, offsets, boxes, grid: { starts, boxes: bb } };
}

export interface IndexOptions {
  topCell?: string;
  /** Read buffer size (default 1 MiB). */
  chunkBytes?: number;
  signal?: AbortSignal;
}

/** Index the GDSII file at `path`. Throws LayoutReadError for unreadable or bad input. */
export function indexGdsiiFile(path: string, opts: IndexOptions = {}): GdsiiIndex {
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch (err) {
    const e = err as NodeJS.ErrnoException;
    throw new LayoutReadError('io', `cannot read ${path}: ${e.code === 'ENOENT' ? 'no such file' : e.code === 'EISDIR' ? 'is a directory' : e.message}`);
  }
  try {
    const fileSize = fstatSync(fd).size;
    const sink = new IndexSink();
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
    }
    const lib = parser.finish();
    const cells = lib.cells.map((def): IndexedCell => {
      const builders = sink.byCell.get(def);
      const lists = builders ? [...builders.values()].sort((a, b) => a.key - b.key).map(buildList) : [];
      return { def, lists, elements: lists.reduce((n, l) => n + l.count, 0) };
    });
    sink.byCell.clear();
    checkMissingCells(lib);
    const order = bottomUpOrder(lib);
    const totals = cellTotals(lib, order, (_cell, i) => (cells[i] as IndexedCell).lists.map((l) => [l.key, l.count, l.points] as const));
    const top = chooseTopCell(lib, totals, opts.topCell);
    return { path, fileSize, lib, cells, order, totals, top };
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
  const scan = (from: number, to: number, boxes: ArrayLike<number>, push: boolean): boolean => {
    for (let i = from; i < to; i++) {
      if (placedBoxMeets(t, boxes[4 * i] as number, boxes[4 * i + 1] as number, boxes[4 * i + 2] as number, boxes[4 * i + 3] as number, box)) {
        if (!push) return true;
        out.push(i);
      }
    }
    return false;
  };
  const grid = list.grid;
  if (!grid) {
    scan(0, list.count, list.boxes, true);
    return;
  }
  const nb = grid.starts.length - 1;
  for (let k = 0; k < nb; k++) {
    const s = grid.starts[k] as number, e = grid.starts[k + 1] as number;
    if (s === e) continue;
    if (scan(k, k + 1, grid.boxes, false)) scan(s, e, list.boxes, true);
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
