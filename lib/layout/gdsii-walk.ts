/**
 * The hierarchy walk behind the on-disk GDSII reader (gdsii-tile-source.ts): every flattened polygon of some layers
 * whose bbox meets a box, from the index (gdsii-index.ts) and positional reads, never the whole file.
 *
 * From the top cell down, instances whose placed subtree box misses the box are skipped (AREF: only the lattice rows
 * that can meet it, per column); elements of large cells are chosen through their bucket grid, read by position and
 * decoded by the whole-file parser (element-reader.ts), placed by place.ts — the same vertices as the whole-file
 * flatten — and kept when their flattened bbox meets the closed box. Small cells (vias, standard cells) are decoded
 * once and kept in a bounded cache.
 */
import type { BboxDbu } from './bbox';
import type { CellBounds } from './cell-bounds';
import type { ElementReader } from './element-reader';
import { LayoutReadError } from './errors';
import { elementOffset, elementsMeeting, sortedOffsets, type GdsiiIndex, type IndexedCell } from './gdsii-index';
import type { CellDef } from './library';
import { placeAbsolutePath, placeShapes } from './place';
import { compose, IDENTITY, placeInstance, type Placement } from './transform';

/** Cells with at most this many elements and points are decoded whole and cached. */
const SMALL_ELEMENTS = 1024;
const SMALL_POINTS = 1 << 16;
/** Elements of a large cell decoded at once. */
const BATCH = 16_384;

export interface WalkHooks {
  subtree?: (c: number, t: Placement) => boolean;
  ownLists?: (c: number, t: Placement) => boolean;
}

/** Receives each placed polygon kept by a walk: points [from, to) of `coords`. */
export type Take = (key: number, coords: Float64Array, from: number, to: number) => void;

export interface WalkOptions {
  /** Budget of the decoded small-cell cache, in vertices (default 4 000 000 ≈ 64 MB). */
  cachePoints?: number;
  signal?: AbortSignal;
}

export class HierarchyWalker {
  private readonly cache = new Map<number, CellDef>();
  private cachedPoints = 0;
  private dst = new Float64Array(1024);
  private offs = new Uint32Array(64);
  private readonly scratch: number[] = [];

  constructor(private readonly index: GdsiiIndex, private readonly bounds: CellBounds, private readonly reader: ElementReader, private readonly opts: WalkOptions = {}) {}

  /** Drops the decoded small cells. */
  clearCache(): void {
    this.cache.clear();
    this.cachedPoints = 0;
  }

  /**
   * Visit every flattened polygon of layers `keys` (null: all) whose bbox meets `box` (null: everywhere).
   * `hooks.subtree(c, t)` may claim an instance of cell c placed by t (its subtree is then not visited);
   * `hooks.ownLists(c, t)` may claim the cell's own element lists (they are then not read; absolute paths still are).
   */
  walk(box: BboxDbu | null, keys: Set<number> | null, take: Take, hooks: WalkHooks = {}): void {
    const { index, bounds } = this;
    const cells = index.cells;
    const m = box ? 2 + 1e-9 * Math.max(...box.map(Math.abs)) : 0;
    const wide = box ? [box[0] - m, box[1] - m, box[2] + m, box[3] + m] : null;
    // Per cell: whether its subtree has polygons on the asked layers, and its culling box over those layers.
    const relevant = new Int8Array(cells.length).fill(-1);
    const isRelevant = (c: number): boolean => {
      if (relevant[c] === -1) {
        const byLayer = index.totals.byLayer[c];
        let any = false;
        if (byLayer) for (const [key, [p]] of byLayer) if (p > 0 && (!keys || keys.has(key))) any = true;
        relevant[c] = any ? 1 : 0;
      }
      return relevant[c] === 1;
    };
    const cullBoxes = new Map<number, Float64Array | null>();
    const cullBox = (c: number): Float64Array | null => {
      if (cullBoxes.has(c)) return cullBoxes.get(c) ?? null;
      const sub = bounds.sub[c];
      let u: Float64Array | null = null;
      if (sub) {
        u = Float64Array.of(Infinity, Infinity, -Infinity, -Infinity);
        for (const [key, b] of sub) {
          if (keys && !keys.has(key)) continue;
          u[0] = Math.min(u[0] as number, b[0] as number); u[1] = Math.min(u[1] as number, b[1] as number);
          u[2] = Math.max(u[2] as number, b[2] as number); u[3] = Math.max(u[3] as number, b[3] as number);
        }
      }
      cullBoxes.set(c, u);
      return u;
    };
    const wantTop = index.top;
    if (wantTop < 0 || !isRelevant(wantTop)) return;
    if (hooks.subtree?.(wantTop, IDENTITY)) return;
    this.emitOwn(wantTop, IDENTITY, box, wide, keys, take, hooks.ownLists);

    interface Frame { cell: number; t: Placement; r: number; shape: Placement | null; i: number; j: number; jEnd: number; cull: number[] | null }
    const stack: Frame[] = [{ cell: wantTop, t: IDENTITY, r: 0, shape: null, i: 0, j: 0, jEnd: -1, cull: null }];
    const leafT: Placement = { ...IDENTITY };
    const signal = this.opts.signal;
    let work = 0;
    // Rows j of column i whose origin can meet the tile: cull = [Ox, Oy, Cx, Cy, Rx, Ry, lox, loy, hix, hiy].
    const rowRange = (f: Frame, rows: number) => {
      f.j = 0;
      f.jEnd = rows - 1;
      const q = f.cull;
      if (!q) return;
      const [Ox, Oy, Cx, Cy, Rx, Ry, lox, loy, hix, hiy] = q as [number, number, number, number, number, number, number, number, number, number];
      const px = Ox + f.i * Cx, py = Oy + f.i * Cy;
      let lo = 0, hi = rows - 1;
      for (const [p, r, l, h] of [[px, Rx, lox, hix], [py, Ry, loy, hiy]] as [number, number, number, number][]) {
        if (Math.abs(r) < 1e-12) {
          if (p < l || p > h) { lo = 1; hi = 0; }
          continue;
        }
        const a = (l - p) / r, b = (h - p) / r;
        lo = Math.max(lo, Math.ceil(Math.min(a, b) - 1e-9));
        hi = Math.min(hi, Math.floor(Math.max(a, b) + 1e-9));
      }
      f.j = lo;
      f.jEnd = hi;
    };
    while (stack.length > 0) {
      const f = stack[stack.length - 1] as Frame;
      const def = (cells[f.cell] as IndexedCell).def;
      const ref = def.refs[f.r];
      if (!ref) {
        stack.pop();
        continue;
      }
      const child = ref.child;
      if (!f.shape) {
        if (!isRelevant(child)) {
          f.r++;
          continue;
        }
        const p = f.t;
        f.shape = compose(p, ref, 0, 0);
        f.cull = null;
        const cb = wide ? cullBox(child) : null;
        if (wide && cb) {
          const s = f.shape;
          const cx = ((cb[0] as number) + (cb[2] as number)) / 2, cy = ((cb[1] as number) + (cb[3] as number)) / 2;
          const hx = ((cb[2] as number) - (cb[0] as number)) / 2, hy = ((cb[3] as number) - (cb[1] as number)) / 2;
          const pad = bounds.pad[child] as number;
          const scx = s.a * cx + s.b * cy, scy = s.c * cx + s.d * cy;
          const ex = Math.abs(s.a) * hx + Math.abs(s.b) * hy + pad, ey = Math.abs(s.c) * hx + Math.abs(s.d) * hy + pad;
          f.cull = [
            p.a * ref.x + p.b * ref.y + p.tx, p.c * ref.x + p.d * ref.y + p.ty,
            p.a * ref.colDx + p.b * ref.colDy, p.c * ref.colDx + p.d * ref.colDy,
            p.a * ref.rowDx + p.b * ref.rowDy, p.c * ref.rowDx + p.d * ref.rowDy,
            (wide[0] as number) - scx - ex, (wide[1] as number) - scy - ey, (wide[2] as number) - scx + ex, (wide[3] as number) - scy + ey,
          ];
        }
        f.i = 0;
        rowRange(f, ref.rows);
      }
      const leaf = (cells[child] as IndexedCell).def.refs.length === 0;
      let pushed = false;
      while (f.i < ref.cols) {
        if (f.j > f.jEnd) {
          f.i++;
          if (f.i < ref.cols) rowRange(f, ref.rows);
          continue;
        }
        if (((work += 1) & 0xfff) === 0 && signal?.aborted) throw new LayoutReadError('aborted', 'reading was cancelled');
        const t = placeInstance(f.t, f.shape, ref, f.i, f.j, leaf ? leafT : { ...f.shape });
        f.j++;
        if (hooks.subtree?.(child, t)) continue;
        this.emitOwn(child, t, box, wide, keys, take, hooks.ownLists);
        if (!leaf) {
          stack.push({ cell: child, t, r: 0, shape: null, i: 0, j: 0, jEnd: -1, cull: null });
          pushed = true;
          break;
        }
      }
      if (!pushed) {
        f.r++;
        f.shape = null;
      }
    }
  }

  /** Place cell c's own polygons on `keys` by t and hand those whose bbox meets `box` to `take`. */
  private emitOwn(
    c: number, t: Placement, box: BboxDbu | null, wide: number[] | null, keys: Set<number> | null, take: Take,
    ownLists?: (c: number, t: Placement) => boolean,
  ): void {
    const cell = this.index.cells[c] as IndexedCell;
    const lists = keys ? cell.lists.filter((l) => keys.has(l.key)) : cell.lists;
    if (lists.length > 0 && !ownLists?.(c, t)) {
      const points = cell.lists.reduce((n, l) => n + l.points, 0);
      if (cell.elements <= SMALL_ELEMENTS && points <= SMALL_POINTS) {
        let decoded = this.cache.get(c);
        if (!decoded) {
          decoded = this.reader.decode(cell.def.name, sortedOffsets(cell.lists, null));
          const budget = this.opts.cachePoints ?? 4_000_000;
          if (this.cachedPoints + points > budget) {
            this.cache.clear();
            this.cachedPoints = 0;
          }
          this.cache.set(c, decoded);
          this.cachedPoints += points;
        }
        this.placeDecoded(decoded, t, box, keys, take);
      } else {
        // In batches, so a huge cell never has all its geometry in memory (and a tile's cap trips early).
        const run = (offsets: Float64Array) => {
          for (let k = 0; k < offsets.length; k += BATCH) {
            this.placeDecoded(this.reader.decode(cell.def.name, offsets.subarray(k, k + BATCH)), t, box, keys, take);
          }
        };
        if (wide) {
          run(sortedOffsets(lists, lists.map((l) => {
            const idx: number[] = [];
            elementsMeeting(l, t, wide, idx);
            return idx;
          })));
        } else {
          // Everything (a walk without a box): list by list, in batches.
          const batch = new Float64Array(BATCH);
          for (const l of lists) {
            for (let k = 0; k < l.count; k += BATCH) {
              const n = Math.min(BATCH, l.count - k);
              for (let q = 0; q < n; q++) batch[q] = elementOffset(l, k + q);
              run(batch.subarray(0, n).sort()); // bucket order → file order for the reads
            }
          }
        }
      }
    }
    for (const p of cell.def.absPaths) {
      if (keys && !keys.has(p.key)) continue;
      this.reserve(p.points * 2 + 16, 1);
      const n = placeAbsolutePath(p, t, this.scratch, this.dst, 0);
      this.keep(p.key, 0, n, box, take);
    }
  }

  private placeDecoded(decoded: CellDef, t: Placement, box: BboxDbu | null, keys: Set<number> | null, take: Take): void {
    for (const s of decoded.shapes) {
      if (keys && !keys.has(s.key)) continue;
      const np = s.starts.length, npts = s.coords.length >> 1;
      this.reserve(npts, np);
      placeShapes(s.coords.data, s.starts.data, np, npts, t, this.dst, this.offs, 0, 0);
      for (let k = 0; k < np; k++) this.keep(s.key, this.offs[k] as number, k + 1 < np ? (this.offs[k + 1] as number) : npts, box, take);
    }
  }

  private keep(key: number, from: number, to: number, box: BboxDbu | null, take: Take): void {
    if (box) {
      const d = this.dst;
      let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
      for (let k = 2 * from; k < 2 * to; k += 2) {
        const x = d[k] as number, y = d[k + 1] as number;
        if (x < x0) x0 = x;
        if (x > x1) x1 = x;
        if (y < y0) y0 = y;
        if (y > y1) y1 = y;
      }
      if (!(x1 >= box[0] && x0 <= box[2] && y1 >= box[1] && y0 <= box[3])) return;
    }
    take(key, this.dst, from, to);
  }

  private reserve(points: number, polygons: number): void {
    if (this.dst.length < 2 * points) this.dst = new Float64Array(Math.max(2 * points, 2 * this.dst.length));
    if (this.offs.length < polygons + 1) this.offs = new Uint32Array(Math.max(polygons + 1, 2 * this.offs.length));
  }
}
