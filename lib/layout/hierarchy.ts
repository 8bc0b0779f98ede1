/**
 * Checks and statistics over the cell graph before flattening: missing cells, reference cycles (iterative DFS,
 * never recursion), bottom-up flattened counts per cell and layer (to size output buffers exactly and refuse
 * oversized layouts before allocating), and the top-cell choice.
 */
import { LayoutReadError } from './errors';
import type { CellDef, GdsLibrary } from './library';

export interface CellTotals {
  /** Flattened polygon count of each cell (float: may exceed 2^32 before the limit check). */
  polygons: Float64Array;
  points: Float64Array;
  labels: Float64Array;
  /** Per cell: layer key → [polygons, points] after flattening. */
  byLayer: Map<number, [number, number]>[];
}

export function checkMissingCells(lib: GdsLibrary): void {
  for (const cell of lib.cells) {
    if (!cell.defined) {
      throw new LayoutReadError('missing-cell', `cell "${cell.name}" is referenced (SNAME at byte ${cell.firstRefOffset}) but never defined`, { offset: cell.firstRefOffset });
    }
  }
}

/** Cells in post-order (children before parents). Throws on a reference cycle, naming the cells in it. */
export function bottomUpOrder(lib: GdsLibrary): number[] {
  const n = lib.cells.length;
  const colour = new Uint8Array(n); // 0 new, 1 on stack, 2 done
  const order: number[] = [];
  const stackCell: number[] = [];
  const stackRef: number[] = [];
  for (let root = 0; root < n; root++) {
    if (colour[root] !== 0) continue;
    stackCell.push(root);
    stackRef.push(0);
    colour[root] = 1;
    while (stackCell.length > 0) {
      const top = stackCell.length - 1;
      const c = stackCell[top] as number;
      const refs = (lib.cells[c] as CellDef).refs;
      const r = stackRef[top] as number;
      if (r >= refs.length) {
        colour[c] = 2;
        order.push(c);
        stackCell.pop();
        stackRef.pop();
        continue;
      }
      stackRef[top] = r + 1;
      const ref = refs[r];
      if (!ref) continue;
      const child = ref.child;
      if (colour[child] === 1) {
        const from = stackCell.indexOf(child);
        const names = stackCell.slice(from).map((i) => (lib.cells[i] as CellDef).name);
        names.push((lib.cells[child] as CellDef).name);
        throw new LayoutReadError('reference-cycle', `reference cycle: ${names.map((s) => `"${s}"`).join(' → ')} (a cell may not contain itself; reference at byte ${ref.offset})`, { offset: ref.offset });
      }
      if (colour[child] === 0) {
        colour[child] = 1;
        stackCell.push(child);
        stackRef.push(0);
      }
    }
  }
  return order;
}

/** A cell's own polygons per layer key as [key, polygons, points] (absolute-width paths excluded). */
export type OwnCounts = (cell: CellDef, index: number) => Iterable<readonly [number, number, number]>;

function* shapesCounts(cell: CellDef): Iterable<readonly [number, number, number]> {
  for (const s of cell.shapes) yield [s.key, s.starts.length, s.coords.length / 2];
}

/** `own` replaces the count of the cells' stored shapes (the GDSII index stores none, only counts). */
export function cellTotals(lib: GdsLibrary, order: number[], own: OwnCounts = shapesCounts): CellTotals {
  const n = lib.cells.length;
  const t: CellTotals = { polygons: new Float64Array(n), points: new Float64Array(n), labels: new Float64Array(n), byLayer: [] };
  for (const c of order) {
    const cell = lib.cells[c] as CellDef;
    const m = new Map<number, [number, number]>();
    const add = (key: number, polys: number, pts: number) => {
      const e = m.get(key);
      if (e) { e[0] += polys; e[1] += pts; } else m.set(key, [polys, pts]);
    };
    for (const [key, polys, pts] of own(cell, c)) add(key, polys, pts);
    for (const p of cell.absPaths) add(p.key, 1, p.points);
    let labels = cell.labels.length;
    for (const ref of cell.refs) {
      const k = ref.cols * ref.rows;
      const childMap = t.byLayer[ref.child];
      if (childMap) for (const [key, [polys, pts]] of childMap) add(key, k * polys, k * pts);
      labels += k * (t.labels[ref.child] ?? 0);
    }
    let polys = 0;
    let pts = 0;
    for (const [p, q] of m.values()) { polys += p; pts += q; }
    t.polygons[c] = polys;
    t.points[c] = pts;
    t.labels[c] = labels;
    t.byLayer[c] = m;
  }
  return t;
}

/**
 * The top cell: `requested` if given; otherwise the cell no other cell references; when several, the one with the
 * most flattened polygons (ties: more elements, then name order). -1 for a library without cells.
 */
export function chooseTopCell(lib: GdsLibrary, totals: CellTotals, requested?: string): number {
  if (requested !== undefined) {
    const idx = lib.cellIndex.get(requested);
    if (idx === undefined || !(lib.cells[idx] as CellDef).defined) {
      const names = lib.cells.slice(0, 10).map((c) => c.name).join(', ');
      throw new LayoutReadError('no-top-cell', `top cell "${requested}" is not in the library (cells: ${names}${lib.cells.length > 10 ? ', …' : ''})`);
    }
    return idx;
  }
  const referenced = new Uint8Array(lib.cells.length);
  for (const cell of lib.cells) for (const ref of cell.refs) referenced[ref.child] = 1;
  let best = -1;
  for (let i = 0; i < lib.cells.length; i++) {
    if (referenced[i]) continue;
    if (best < 0) { best = i; continue; }
    const a = lib.cells[i] as CellDef;
    const b = lib.cells[best] as CellDef;
    const pa = totals.polygons[i] as number;
    const pb = totals.polygons[best] as number;
    if (pa > pb || (pa === pb && (a.elementCount > b.elementCount || (a.elementCount === b.elementCount && a.name < b.name)))) best = i;
  }
  return best;
}
