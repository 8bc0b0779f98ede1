/**
 * The openings of a tiled analysis on disk instead of in one table, read back in id order a chunk at a time.
 *
 * Each job's owned openings are one run: sorted by the id order's keys (keyedOrder: bbox lower edge, left edge,
 * centroid x, then the first piece's (cell, rank) — unique, so the order is total) and appended to one file as
 * row-major float64 records (every FeatureTable column holds integers or float64, so the copy is exact). Reading
 * back is a k-way merge of the runs (an external merge sort whose runs are the jobs' outputs) through a heap of
 * block cursors; a run is opened only when its first row could be next, and closed when read. Openings are owned by
 * the tile holding their lowest vertex, which is their bbox's lower edge, so runs of different tile rows do not
 * interleave: the cursors open at once are about one tile row's jobs, and memory is blocks × tiles per row, not
 * the number of openings. The merged order is the one stitchFeatures sorts into, so ids are the same.
 */
import { closeSync, mkdtempSync, openSync, readSync, rmSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { emptyFeatureTable, FEATURE_F64_COLUMNS, featureColumns, sliceFeatureTable, type FeatureTable } from '../../geometry/feature-table';
import { keyedOrder, PACKED_COLUMNS, type FeaturePart } from './stitch-features';

/** Floats per record: the table's columns, then cell and rank. */
const R = PACKED_COLUMNS + 2;
const F = 4; // id, kind, widthExact, pieces come first (featureColumns order)
const Y0 = F + FEATURE_F64_COLUMNS.indexOf('y0Um'), X0 = F + FEATURE_F64_COLUMNS.indexOf('x0Um'), CX = F + FEATURE_F64_COLUMNS.indexOf('centroidXUm');
const CELL = PACKED_COLUMNS, RANK = PACKED_COLUMNS + 1;
/** Records per cursor read (≈ 144 KiB). */
const BLOCK = 1024;

interface Run {
  /** Byte offset of the first record. */
  at: number;
  count: number;
  first: Float64Array;
}

interface Cursor {
  run: Run;
  buf: Float64Array;
  /** Records in buf, the current one, and records of the run read so far. */
  n: number;
  pos: number;
  read: number;
}

/** keyedOrder's comparison on two records. */
function cmp(a: Float64Array, i: number, b: Float64Array, j: number): number {
  return (a[i + Y0] as number) - (b[j + Y0] as number) || (a[i + X0] as number) - (b[j + X0] as number) || (a[i + CX] as number) - (b[j + CX] as number) || (a[i + CELL] as number) - (b[j + CELL] as number) || (a[i + RANK] as number) - (b[j + RANK] as number);
}

export class OpeningSpill {
  readonly dir: string;
  private readonly fd: number;
  private readonly runs: Run[] = [];
  private bytes = 0;
  count = 0;
  /** Largest number of cursors open at once in the last merge (for tests and benches). */
  peakCursors = 0;

  constructor(parent: string) {
    this.dir = mkdtempSync(join(parent, 'trenchant-spill-'));
    this.fd = openSync(join(this.dir, 'openings.f64'), 'w+');
  }

  /** Appends a job's openings as one sorted run. */
  add(part: FeaturePart): void {
    const t = part.features, n = t.count;
    if (n === 0) return;
    const cell = new Float64Array(n), rank = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      cell[i] = part.keys[2 * i] as number;
      rank[i] = part.keys[2 * i + 1] as number;
    }
    const order = keyedOrder(t, cell, rank);
    const rec = new Float64Array(n * R);
    const cols = featureColumns(t);
    for (let k = 0; k < n; k++) {
      const i = order[k] as number, o = k * R;
      for (let c = 0; c < PACKED_COLUMNS; c++) rec[o + c] = (cols[c] as ArrayLike<number>)[i] as number;
      rec[o + CELL] = cell[i] as number;
      rec[o + RANK] = rank[i] as number;
    }
    const bytes = new Uint8Array(rec.buffer);
    let done = 0;
    while (done < bytes.length) done += writeSync(this.fd, bytes, done, bytes.length - done, this.bytes + done);
    this.runs.push({ at: this.bytes, count: n, first: rec.slice(0, R) });
    this.bytes += bytes.length;
    this.count += n;
  }

  /** Every opening in id order, ids 1..count, as tables of up to `chunkRows` rows (each new; keep or drop it). */
  forEachChunk(chunkRows: number, each: (t: FeatureTable) => void): void {
    const runs = [...this.runs].sort((a, b) => cmp(a.first, 0, b.first, 0));
    const heap: Cursor[] = [];
    const less = (a: Cursor, b: Cursor) => cmp(a.buf, a.pos * R, b.buf, b.pos * R) < 0;
    const up = (k: number) => {
      while (k > 0) {
        const p = (k - 1) >> 1;
        if (!less(heap[k] as Cursor, heap[p] as Cursor)) break;
        [heap[k], heap[p]] = [heap[p] as Cursor, heap[k] as Cursor];
        k = p;
      }
    };
    const down = (k: number) => {
      for (;;) {
        const l = 2 * k + 1, r = l + 1;
        let m = k;
        if (l < heap.length && less(heap[l] as Cursor, heap[m] as Cursor)) m = l;
        if (r < heap.length && less(heap[r] as Cursor, heap[m] as Cursor)) m = r;
        if (m === k) return;
        [heap[k], heap[m]] = [heap[m] as Cursor, heap[k] as Cursor];
        k = m;
      }
    };
    const fill = (c: Cursor): boolean => {
      const n = Math.min(BLOCK, c.run.count - c.read);
      if (n === 0) return false;
      this.readRecords(c.buf, c.run.at + c.read * R * 8, n);
      c.n = n;
      c.pos = 0;
      c.read += n;
      return true;
    };
    let next = 0, id = 0, peak = 0;
    let out = emptyFeatureTable(chunkRows), cols = featureColumns(out), at = 0;
    while (true) {
      // Open every run whose first record could come before the heap's top.
      while (next < runs.length && (heap.length === 0 || cmp((runs[next] as Run).first, 0, (heap[0] as Cursor).buf, (heap[0] as Cursor).pos * R) <= 0)) {
        const run = runs[next++] as Run;
        const c: Cursor = { run, buf: new Float64Array(Math.min(BLOCK, run.count) * R), n: 0, pos: 0, read: 0 };
        fill(c);
        heap.push(c);
        up(heap.length - 1);
      }
      peak = Math.max(peak, heap.length);
      if (heap.length === 0) break;
      const c = heap[0] as Cursor, o = c.pos * R;
      for (let f = 0; f < PACKED_COLUMNS; f++) (cols[f] as Float64Array)[at] = c.buf[o + f] as number;
      out.id[at] = ++id;
      if (++at === chunkRows) {
        out.count = at;
        each(out);
        out = emptyFeatureTable(chunkRows);
        cols = featureColumns(out);
        at = 0;
      }
      if (++c.pos === c.n && !fill(c)) {
        const last = heap.pop() as Cursor;
        if (heap.length > 0) {
          heap[0] = last;
          down(0);
        }
      } else down(0);
    }
    if (at > 0) {
      out.count = at;
      each(sliceFeatureTable(out, 0, at));
    }
    this.peakCursors = peak;
    if (id !== this.count) throw new Error(`opening spill: merged ${id} of ${this.count} openings`);
  }

  private readRecords(buf: Float64Array, position: number, n: number): void {
    const view = new Uint8Array(buf.buffer, 0, n * R * 8);
    let got = 0;
    while (got < view.length) {
      const r = readSync(this.fd, view, got, view.length - got, position + got);
      if (r <= 0) throw new Error(`opening spill ${this.dir}: file ends at byte ${position + got}, expected ${view.length - got} more`);
      got += r;
    }
  }

  /** Closes and deletes the spill file. */
  close(): void {
    try {
      closeSync(this.fd);
    } catch {
      // already closed
    }
    rmSync(this.dir, { recursive: true, force: true });
  }
}
