/**
 * Bounding boxes of each cell's flattened subtree, computed bottom-up from the GDSII index (no geometry read):
 *
 * - `sub`: per cell and layer, a conservative box in the cell's own frame, used to skip instances that cannot meet
 *   a tile. A cell with an absolute-magnification/angle reference below it has none (`null`): where its children
 *   land depends on the transform above it, so its instances are never culled as a whole (their children are).
 * - `pad`: how far absolute-width PATH outlines reach beyond their centre lines (flattened dbu, unaffected by
 *   magnification), added when culling.
 * - `exact`: the bbox of the flattened subtree before snapping, exact to the bit, when every placement below is
 *   exact in floating point (Manhattan, no absolute flags, integer origins and lattice steps, unit magnification —
 *   or integer magnification over integer extremes — and half-integer own extremes). Snapping (Math.round) and
 *   these placements are monotone, so the flattened bbox of an exact cell placed exactly is the snapped placed
 *   bbox: the header's bbox without reading any geometry. Other cells are walked.
 */
import type { GdsiiIndex, IndexedCell } from './gdsii-index';
import { MITER_LIMIT } from './path-outline';
import { placement, type Placement } from './transform';

export interface CellBounds {
  sub: (Map<number, Float64Array> | null)[];
  pad: Float64Array;
  exact: (Float64Array | null)[];
  /** Whether `exact[c]` is valid (a cell that flattens to nothing is exact with a null box). */
  exactOk: Uint8Array;
}

type Box = Float64Array;

const emptyBox = (): Box => Float64Array.of(Infinity, Infinity, -Infinity, -Infinity);

function grow(into: Box, x0: number, y0: number, x1: number, y1: number): void {
  if (x0 < (into[0] as number)) into[0] = x0;
  if (y0 < (into[1] as number)) into[1] = y0;
  if (x1 > (into[2] as number)) into[2] = x1;
  if (y1 > (into[3] as number)) into[3] = y1;
}

interface RefLike {
  x: number; y: number; reflect: boolean; mag: number; angleDeg: number; cols: number; rows: number;
  colDx: number; colDy: number; rowDx: number; rowDy: number;
}

/** Box `b` of a child placed by every instance of `ref`, grown into `into` (bbox of the placed corners). */
function growPlaced(into: Box, b: Box, ref: RefLike, L: Placement): void {
  let px0 = Infinity, py0 = Infinity, px1 = -Infinity, py1 = -Infinity;
  for (const [x, y] of [[b[0], b[1]], [b[2], b[1]], [b[0], b[3]], [b[2], b[3]]] as [number, number][]) {
    const X = L.a * x + L.b * y, Y = L.c * x + L.d * y;
    if (X < px0) px0 = X;
    if (X > px1) px1 = X;
    if (Y < py0) py0 = Y;
    if (Y > py1) py1 = Y;
  }
  const ci = ref.cols - 1, rj = ref.rows - 1;
  for (const [i, j] of [[0, 0], [ci, 0], [0, rj], [ci, rj]] as [number, number][]) {
    const ox = ref.x + i * ref.colDx + j * ref.rowDx;
    const oy = ref.y + i * ref.colDy + j * ref.rowDy;
    grow(into, ox + px0, oy + py0, ox + px1, oy + py1);
  }
}

const halfInt = (v: number) => Number.isInteger(2 * v);

function exactRef(r: RefLike & { absMag: boolean; absAngle: boolean }, childBox: Box | null): boolean {
  if (r.absMag || r.absAngle || r.angleDeg % 90 !== 0) return false;
  if (![r.x, r.y, r.colDx, r.colDy, r.rowDx, r.rowDy].every(Number.isInteger)) return false;
  if (r.mag === 1) return true;
  return Number.isInteger(r.mag) && (childBox === null || childBox.every(Number.isInteger));
}

export function cellBounds(index: GdsiiIndex): CellBounds {
  const n = index.cells.length;
  const out: CellBounds = { sub: new Array(n).fill(null), pad: new Float64Array(n), exact: new Array(n).fill(null), exactOk: new Uint8Array(n) };
  for (const c of index.order) {
    const cell = index.cells[c] as IndexedCell;
    const def = cell.def;
    let pad = 0;
    for (const p of def.absPaths) {
      const ext = p.pathtype === 2 ? p.halfWidth : p.pathtype === 4 ? Math.max(Math.abs(p.bgnExt), Math.abs(p.endExt)) : 0;
      pad = Math.max(pad, MITER_LIMIT * p.halfWidth, p.halfWidth + Math.max(ext, p.halfWidth));
    }
    for (const r of def.refs) pad = Math.max(pad, out.pad[r.child] as number);
    out.pad[c] = pad > 0 ? pad + 1 : 0;

    // Culling boxes.
    const free = def.refs.some((r) => r.absMag || r.absAngle || out.sub[r.child] === null);
    if (!free) {
      const m = new Map<number, Box>();
      const at = (key: number) => {
        let b = m.get(key);
        if (!b) m.set(key, (b = emptyBox()));
        return b;
      };
      for (const l of cell.lists) grow(at(l.key), l.exact[0] as number, l.exact[1] as number, l.exact[2] as number, l.exact[3] as number);
      for (const p of def.absPaths) {
        const b = at(p.key);
        for (let k = 0; k < p.centre.length; k += 2) grow(b, p.centre[k] as number, p.centre[k + 1] as number, p.centre[k] as number, p.centre[k + 1] as number);
      }
      for (const r of def.refs) {
        const child = out.sub[r.child] as Map<number, Box>;
        if (child.size === 0) continue;
        const L = placement(r.reflect, r.mag, r.angleDeg, 0, 0);
        for (const [key, b] of child) growPlaced(at(key), b, r, L);
      }
      out.sub[c] = m;
    }

    // Exact flattened bbox.
    let ok = def.absPaths.length === 0;
    const F = emptyBox();
    for (const l of cell.lists) {
      if (!(l.exact as unknown as number[]).every(halfInt)) ok = false;
      grow(F, l.exact[0] as number, l.exact[1] as number, l.exact[2] as number, l.exact[3] as number);
    }
    for (const r of def.refs) {
      if (!ok) break;
      const cb = out.exact[r.child] ?? null;
      if (!out.exactOk[r.child] || !exactRef(r, cb)) ok = false;
      else if (cb) growPlaced(F, cb, r, placement(r.reflect, r.mag, r.angleDeg, 0, 0));
    }
    out.exactOk[c] = ok ? 1 : 0;
    out.exact[c] = ok && (F[0] as number) <= (F[2] as number) ? F : null;
  }
  return out;
}

/** Whether placing an exact cell with box `F` by `t` keeps it exact (see the module comment). */
export function exactPlacement(t: Placement, F: Box | null): boolean {
  if (t.angleDeg % 90 !== 0 || !Number.isInteger(t.tx) || !Number.isInteger(t.ty)) return false;
  if (![t.a, t.b, t.c, t.d].every(Number.isInteger)) return false;
  return t.mag === 1 || (Number.isInteger(t.mag) && (F === null || F.every(Number.isInteger)));
}

/** Snapped bbox of exact box `F` placed by exact transform `t`, grown into `into`. */
export function growSnapped(into: Box, F: Box, t: Placement): void {
  for (const [x, y] of [[F[0], F[1]], [F[2], F[3]]] as [number, number][]) {
    const X = Math.round(t.a * x + t.b * y + t.tx), Y = Math.round(t.c * x + t.d * y + t.ty);
    grow(into, X, Y, X, Y);
  }
}
