/**
 * Flatten a GDSII hierarchy into one `PolygonSet` per layer/datatype, iteratively (explicit frame stack), writing
 * transformed coordinates straight into exactly-sized output typed arrays.
 *
 * - Vertices are placed by place.ts (shared with the tile reader): snapped to the integer dbu grid (Math.round)
 *   after transformation, Manhattan placements (angles multiple of 90°, integer magnification) exact, rings
 *   counter-clockwise (reflected placements written in reverse order), so nonzero fill of a set equals the GDSII
 *   meaning "each boundary is filled on its own".
 * - Work and memory are bounded: the flattened polygon / point counts are computed bottom-up first and a layout
 *   beyond `maxPolygons` / `maxPoints` is refused before anything is allocated; instances of cells that flatten to
 *   nothing are never visited; at most `maxLabels` labels are kept (first in traversal order).
 */
import { polygonSetsBbox } from './bbox';
import { LayoutReadError } from './errors';
import type { CellDef, GdsLibrary } from './library';
import { bottomUpOrder, cellTotals, checkMissingCells, chooseTopCell } from './hierarchy';
import { placeAbsolutePath, placeShapes } from './place';
import { compose, IDENTITY, placeInstance, placement, type Placement } from './transform';
import type { FlatLayout, LayoutLabel, PolygonSet } from './types';

export interface FlattenOptions {
  /** Name of the cell to flatten; default: see `chooseTopCell`. */
  topCell?: string;
  /** Refuse layouts that flatten to more polygons than this (default 25 000 000). */
  maxPolygons?: number;
  /** Refuse layouts that flatten to more vertices than this (default 100 000 000, i.e. 800 MB of coordinates). */
  maxPoints?: number;
  /** Keep at most this many labels (default 100 000). */
  maxLabels?: number;
  signal?: AbortSignal;
}

interface Out {
  set: PolygonSet;
  poly: number;
  pt: number;
}

export function flattenLibrary(lib: GdsLibrary, opts: FlattenOptions = {}): FlatLayout {
  checkMissingCells(lib);
  const order = bottomUpOrder(lib);
  const totals = cellTotals(lib, order);
  const top = chooseTopCell(lib, totals, opts.topCell);
  const base = { format: 'gdsii' as const, libraryName: lib.libraryName, dbuUm: lib.dbuUm, userUnitUm: lib.userUnitUm, cellCount: lib.cells.length, warnings: lib.warnings };
  if (top < 0) return { ...base, topCell: '', layers: [], labels: [], bboxDbu: null };
  const topDef = lib.cells[top] as CellDef;
  const maxPolygons = opts.maxPolygons ?? 25_000_000;
  const maxPoints = opts.maxPoints ?? 100_000_000;
  const maxLabels = opts.maxLabels ?? 100_000;
  const tp = totals.polygons[top] as number;
  const tq = totals.points[top] as number;
  if (tp > maxPolygons || tq > maxPoints) {
    throw new LayoutReadError('too-large', `cell "${topDef.name}" flattens to ${tp} polygons with ${tq} vertices, above the limit of ${maxPolygons} polygons / ${maxPoints} vertices`);
  }

  // Exactly-sized outputs, sorted by layer then datatype.
  const topMap = totals.byLayer[top] ?? new Map<number, [number, number]>();
  const keys = [...topMap.keys()].sort((x, y) => x - y);
  const outByKey = new Map<number, Out>();
  const outs: Out[] = keys.map((key) => {
    const [polys, pts] = topMap.get(key) as [number, number];
    const out = { set: { layer: Math.floor(key / 65536), datatype: key % 65536, coords: new Float64Array(2 * pts), offsets: new Uint32Array(polys + 1), count: polys }, poly: 0, pt: 0 };
    outByKey.set(key, out);
    return out;
  });
  // Per cell, the output of each of its shape sets (aligned with cell.shapes).
  const outIndex: (Out | undefined)[][] = lib.cells.map((c) => c.shapes.map((s) => outByKey.get(s.key)));
  const labels: LayoutLabel[] = [];
  const scratch: number[] = [];
  let work = 0;

  const emit = (ci: number, t: Placement) => {
    const cell = lib.cells[ci] as CellDef;
    const targets = outIndex[ci] as (Out | undefined)[];
    const { a, b, c, d, tx, ty } = t;
    for (let si = 0; si < cell.shapes.length; si++) {
      const s = cell.shapes[si];
      const o = targets[si];
      if (!s || !o) continue;
      const np = s.starts.length;
      const npts = s.coords.length >> 1;
      placeShapes(s.coords.data, s.starts.data, np, npts, t, o.set.coords, o.set.offsets, o.poly, o.pt);
      o.poly += np;
      o.pt += npts;
    }
    for (const p of cell.absPaths) {
      const o = outByKey.get(p.key);
      if (!o) continue;
      o.set.offsets[o.poly++] = o.pt;
      o.pt += placeAbsolutePath(p, t, scratch, o.set.coords, o.pt);
    }
    for (const l of cell.labels) {
      if (labels.length >= maxLabels) break;
      labels.push({ layer: l.layer, texttype: l.texttype, text: l.text, xDbu: Math.round(a * l.x + b * l.y + tx), yDbu: Math.round(c * l.x + d * l.y + ty) });
    }
    if (((work += 1) & 0xffff) === 0 && opts.signal?.aborted) throw new LayoutReadError('aborted', 'reading was cancelled');
  };

  // Frame stack: one frame per cell on the current path (depth ≤ cell count, the graph is acyclic).
  const fCell: number[] = [];
  const fRef: number[] = [];
  const fInst: number[] = [];
  const fT: Placement[] = [];
  const fChildT: (Placement | null)[] = [];
  const scratchT: Placement = { ...IDENTITY };
  emit(top, IDENTITY);
  fCell.push(top); fRef.push(0); fInst.push(0); fT.push(IDENTITY); fChildT.push(null);
  while (fCell.length > 0) {
    const f = fCell.length - 1;
    const cell = lib.cells[fCell[f] as number] as CellDef;
    const ri = fRef[f] as number;
    const ref = cell.refs[ri];
    if (!ref) {
      fCell.pop(); fRef.pop(); fInst.pop(); fT.pop(); fChildT.pop();
      continue;
    }
    const child = ref.child;
    const childDef = lib.cells[child] as CellDef;
    const empty = (totals.polygons[child] as number) === 0 && ((totals.labels[child] as number) === 0 || labels.length >= maxLabels);
    const total = ref.cols * ref.rows;
    let inst = fInst[f] as number;
    if (empty || inst >= total) {
      fRef[f] = ri + 1; fInst[f] = 0; fChildT[f] = null;
      continue;
    }
    const p = fT[f] as Placement;
    // All instances of one reference share the linear part; only the origin moves along the lattice.
    let shape = fChildT[f] ?? null;
    if (!shape) {
      shape = compose(p, ref, 0, 0);
      fChildT[f] = shape;
    }
    const leaf = childDef.refs.length === 0;
    if (leaf) Object.assign(scratchT, shape);
    do {
      const i = inst % ref.cols;
      const j = (inst - i) / ref.cols;
      // Leaf instances reuse one scratch placement; frames pushed on the stack need their own.
      const t: Placement = placeInstance(p, shape, ref, i, j, leaf ? scratchT : { ...shape });
      inst++;
      emit(child, t);
      if (!leaf) {
        fInst[f] = inst;
        fCell.push(child); fRef.push(0); fInst.push(0); fT.push(t); fChildT.push(null);
        break;
      }
    } while (inst < total);
    if (leaf) fInst[f] = inst;
  }

  const layers = outs.map((o) => {
    o.set.offsets[o.set.count] = o.pt;
    return o.set;
  });
  return { ...base, topCell: topDef.name, layers, labels, bboxDbu: layoutBbox(layers) };
}

/** Bounding box over all layers, dbu; null when there are no points. */
export function layoutBbox(layers: PolygonSet[]): [number, number, number, number] | null {
  return polygonSetsBbox(layers);
}

export { placement };
