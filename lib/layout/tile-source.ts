/**
 * A layout read tile by tile: the contract between readers that never hold the whole flattened layout in memory
 * (a GDSII file indexed on disk) and the tiled analysis, which asks for one window of it at a time.
 *
 * Rules every source keeps:
 * - `header` is known before any tile is read (from an index pass): units, top cell, per-layer counts, the bbox of
 *   everything flattened — the same values a whole-file read (`readLayoutFile`) would report.
 * - `readTile(box, layers)` returns, in a FlatLayout, every flattened polygon of those layers whose bbox intersects
 *   the closed box `box` (dbu), whole and unclipped, with the same coordinates (same dbu rounding, same
 *   counter-clockwise rings) as the whole-file read. A polygon crossing tile lines comes back for every tile it
 *   touches; the caller decides ownership. Order inside a tile is unspecified. `bboxDbu` of the result is the
 *   bbox of the returned polygons, `labels` may be empty.
 * - It is synchronous (the analysis runs synchronously in a worker thread) and may keep a file handle open:
 *   call `close()` when done.
 */
import type { BboxDbu } from './bbox';
import type { LayoutWarning } from './errors';
import type { FlatLayout } from './types';

export interface LayerCount {
  layer: number;
  datatype: number;
  polygons: number;
  points: number;
}

export interface TileSourceHeader {
  format: FlatLayout['format'];
  libraryName: string;
  dbuUm: number;
  userUnitUm: number;
  topCell: string;
  cellCount: number;
  /** Flattened counts per layer/datatype, sorted by layer then datatype. */
  layers: LayerCount[];
  /** Bounding box of everything flattened (all layers), dbu; null for an empty layout. */
  bboxDbu: BboxDbu | null;
  warnings?: LayoutWarning[];
}

export interface TileSource {
  readonly header: TileSourceHeader;
  readTile(box: BboxDbu, layers: { layer: number; datatype: number }[]): FlatLayout;
  close(): void;
}

/** A source over a layout already in memory (tests, small files): the reference the on-disk sources must match. */
export function inMemoryTileSource(layout: FlatLayout): TileSource {
  const header: TileSourceHeader = {
    format: layout.format,
    libraryName: layout.libraryName,
    dbuUm: layout.dbuUm,
    userUnitUm: layout.userUnitUm,
    topCell: layout.topCell,
    cellCount: layout.cellCount,
    layers: layout.layers.map((s) => ({ layer: s.layer, datatype: s.datatype, polygons: s.count, points: s.offsets[s.count] ?? 0 })),
    bboxDbu: layout.bboxDbu,
    ...(layout.warnings ? { warnings: layout.warnings } : {}),
  };
  return {
    header,
    readTile(box, layers) {
      const want = new Set(layers.map((l) => `${l.layer}/${l.datatype}`));
      const sets = layout.layers.filter((s) => want.has(`${s.layer}/${s.datatype}`)).map((s) => pickInBox(s, box));
      return { ...layout, layers: sets.filter((s) => s.count > 0), labels: [], bboxDbu: boxOfSets(sets) };
    },
    close() {},
  };
}

type PolygonSet = FlatLayout['layers'][number];

function pickInBox(set: PolygonSet, box: BboxDbu): PolygonSet {
  const keep: number[] = [];
  let points = 0;
  for (let p = 0; p < set.count; p++) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let k = set.offsets[p] as number; k < (set.offsets[p + 1] as number); k++) {
      const x = set.coords[2 * k] as number, y = set.coords[2 * k + 1] as number;
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
    if (x1 >= box[0] && x0 <= box[2] && y1 >= box[1] && y0 <= box[3]) {
      keep.push(p);
      points += (set.offsets[p + 1] as number) - (set.offsets[p] as number);
    }
  }
  const coords = new Float64Array(2 * points);
  const offsets = new Uint32Array(keep.length + 1);
  let o = 0;
  keep.forEach((p, n) => {
    const s = set.offsets[p] as number, e = set.offsets[p + 1] as number;
    coords.set(set.coords.subarray(2 * s, 2 * e), 2 * o);
    o += e - s;
    offsets[n + 1] = o;
  });
  return { layer: set.layer, datatype: set.datatype, coords, offsets, count: keep.length };
}

function boxOfSets(sets: PolygonSet[]): BboxDbu | null {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (const s of sets) {
    const n = 2 * (s.offsets[s.count] ?? 0);
    for (let k = 0; k < n; k += 2) {
      const x = s.coords[k] as number, y = s.coords[k + 1] as number;
      if (x < x0) x0 = x;
      if (x > x1) x1 = x;
      if (y < y0) y0 = y;
      if (y > y1) y1 = y;
    }
  }
  return x0 <= x1 ? [x0, y0, x1, y1] : null;
}
