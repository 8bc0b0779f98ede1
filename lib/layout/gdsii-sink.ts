/** Where the GDSII parser's validated polygons go: kept in their cells (the whole-file reader) or elsewhere (the index). */
import { appendRing, shapesFor, type CellDef, type CellShapes } from './library';

/**
 * Receives each polygon element once validated: `xy[0..n)` is the ring (interleaved, closing point dropped) of a
 * BOUNDARY/BOX or the outline of a positive-width PATH, in the cell's frame; `offset` is the element's first byte.
 */
export interface ElementSink {
  ring(cell: CellDef, layer: number, datatype: number, xy: ArrayLike<number>, n: number, offset: number): void;
  /** Whether TEXT labels are kept in `cell.labels` (the index drops them: a tile has no labels). */
  readonly keepLabels: boolean;
}

/** The default sink: polygons kept in the cell, counter-clockwise (see library.ts). */
export class CellShapesSink implements ElementSink {
  readonly keepLabels = true;
  private lastShapes: CellShapes | null = null;
  private lastCell: CellDef | null = null;

  ring(cell: CellDef, layer: number, datatype: number, xy: ArrayLike<number>, n: number): void {
    // Consecutive elements on one layer skip the map lookup.
    const last = this.lastShapes;
    const shapes = last && this.lastCell === cell && last.layer === layer && last.datatype === datatype ? last : (this.lastShapes = shapesFor(cell, layer, datatype));
    this.lastCell = cell;
    appendRing(shapes, xy, 0, n);
  }
}
