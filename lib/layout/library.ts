/**
 * In-memory hierarchy read from a GDSII stream, before flattening. Coordinates are integer database units (dbu) in
 * the cell's own frame. Polygons are stored per layer/datatype as flat arrays, rings counter-clockwise (positive
 * signed area, y up) without the repeated closing point, so that a nonzero-fill union of a set equals the GDSII
 * meaning "every boundary is filled on its own".
 */
import type { LayoutWarning } from './errors';
import { GrowF64, GrowU32 } from './grow-buffer';

/** All polygons of one layer/datatype inside one cell. `starts[i]` = first point of polygon i. */
export interface CellShapes {
  key: number;
  layer: number;
  datatype: number;
  coords: GrowF64;
  starts: GrowU32;
}

/** SREF (cols = rows = 1) or AREF placement, as written in the parent cell. */
export interface CellRef {
  child: number;
  /** Origin (P1) in the parent's frame, dbu. */
  x: number;
  y: number;
  reflect: boolean;
  mag: number;
  angleDeg: number;
  absMag: boolean;
  absAngle: boolean;
  cols: number;
  rows: number;
  /** Lattice steps in the parent's frame: (P2 − P1)/cols and (P3 − P1)/rows. Zero for SREF. */
  colDx: number;
  colDy: number;
  rowDx: number;
  rowDy: number;
  /** Byte offset of the SREF/AREF record, for messages. */
  offset: number;
}

/** PATH with negative WIDTH: its width is not scaled by magnification, so its outline is built after transforming. */
export interface AbsolutePath {
  key: number;
  layer: number;
  datatype: number;
  centre: Float64Array;
  halfWidth: number;
  pathtype: number;
  bgnExt: number;
  endExt: number;
  /** Outline point count (independent of the transform). */
  points: number;
}

export interface CellLabel {
  layer: number;
  texttype: number;
  text: string;
  x: number;
  y: number;
}

export interface CellDef {
  name: string;
  defined: boolean;
  /** Byte offset of the first SNAME naming this cell (for "missing cell" messages); -1 if never referenced. */
  firstRefOffset: number;
  shapes: CellShapes[];
  shapeByKey: Map<number, CellShapes>;
  refs: CellRef[];
  absPaths: AbsolutePath[];
  labels: CellLabel[];
  elementCount: number;
}

export interface GdsLibrary {
  libraryName: string;
  dbuUm: number;
  userUnitUm: number;
  cells: CellDef[];
  cellIndex: Map<string, number>;
  /** Repairs made while parsing (see LayoutWarning). */
  warnings: LayoutWarning[];
}

export function layerKey(layer: number, datatype: number): number {
  return layer * 65536 + datatype;
}

export function newCell(name: string): CellDef {
  return { name, defined: false, firstRefOffset: -1, shapes: [], shapeByKey: new Map(), refs: [], absPaths: [], labels: [], elementCount: 0 };
}

export function shapesFor(cell: CellDef, layer: number, datatype: number): CellShapes {
  const key = layerKey(layer, datatype);
  let s = cell.shapeByKey.get(key);
  if (!s) {
    s = { key, layer, datatype, coords: new GrowF64(64), starts: new GrowU32(8) };
    cell.shapeByKey.set(key, s);
    cell.shapes.push(s);
  }
  return s;
}

/** Twice the signed area of ring `xy[from..to)` (interleaved, implicitly closed); positive when counter-clockwise. */
export function ringArea2(xy: ArrayLike<number>, from: number, to: number): number {
  let s = 0;
  const n = to - from;
  if (n < 6) return 0;
  const x0 = xy[from] as number;
  const y0 = xy[from + 1] as number;
  for (let i = from + 2; i + 3 < to; i += 2) {
    const x1 = (xy[i] as number) - x0;
    const y1 = (xy[i + 1] as number) - y0;
    const x2 = (xy[i + 2] as number) - x0;
    const y2 = (xy[i + 3] as number) - y0;
    s += x1 * y2 - x2 * y1;
  }
  return s;
}

/**
 * Append ring `xy[from..to)` to `shapes` as one polygon, counter-clockwise. Returns the point count appended.
 */
export function appendRing(shapes: CellShapes, xy: ArrayLike<number>, from: number, to: number): number {
  const n = (to - from) >> 1;
  shapes.starts.push(shapes.coords.length >> 1);
  const d = shapes.coords.reserve(to - from);
  let k = shapes.coords.length;
  if (ringArea2(xy, from, to) >= 0) {
    for (let i = from; i < to; i++) d[k++] = xy[i] as number;
  } else {
    for (let i = to - 2; i >= from; i -= 2) {
      d[k++] = xy[i] as number;
      d[k++] = xy[i + 1] as number;
    }
  }
  shapes.coords.length = k;
  return n;
}
