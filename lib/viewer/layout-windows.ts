/**
 * What the canvas viewer's polygons-in-view queries read, per layout revision. A layout up to the whole-read size
 * (lib/layout/whole-read-limit.ts) is flattened once into an R-tree (polygon-index.ts). A larger GDSII file is
 * never flattened whole: it is indexed on disk (gdsii-tile-source.ts) and each view reads only its window, with
 * the view's polygon cap passed down so a zoomed-out view stops reading as soon as it holds more than the viewer
 * draws (it then shows the coverage raster, as for any crowded view). Both answer the same polygons for a box: those
 * whose bounding box meets it (µm, closed), on every layer.
 */
import { LayoutReadError } from '@/lib/layout/errors';
import { openGdsiiTileSource, type GdsiiTileSource } from '@/lib/layout/gdsii-tile-source';
import { readLayoutFile } from '@/lib/layout/read';
import { readsThroughIndex } from '@/lib/layout/whole-read-limit';
import { buildPolygonIndex, queryPolygons } from './polygon-index';
import type { WirePolygons } from './polygon-wire';

export interface WindowReader {
  readonly via: 'whole' | 'index';
  query(box: [number, number, number, number], max: number): WirePolygons;
  close(): void;
}

export async function openWindowReader(path: string, topCell: string | null, wholeReadBytes: number): Promise<WindowReader> {
  const top = topCell ? { topCell } : {};
  if (readsThroughIndex(path, wholeReadBytes)) {
    const source = openGdsiiTileSource(path, top);
    return { via: 'index', query: (box, max) => queryTileSource(source, box, max), close: () => source.close() };
  }
  const ix = buildPolygonIndex(await readLayoutFile(path, top));
  return { via: 'whole', query: (box, max) => queryPolygons(ix, box, max), close: () => undefined };
}

/**
 * Polygons whose bbox meets `box` (µm), at most `max`, read from the on-disk source; more than `max` → none, with
 * total = max + 1 (a lower bound: reading stopped there).
 */
export function queryTileSource(source: GdsiiTileSource, box: [number, number, number, number], max: number): WirePolygons {
  const h = source.header;
  const d = h.dbuUm;
  const layers = h.layers.map((l) => ({ layer: l.layer, datatype: l.datatype }));
  const originX = (box[0] + box[2]) / 2;
  const originY = (box[1] + box[3]) / 2;
  const none = (total: number): WirePolygons => ({ total, layers, originX, originY, polyLayer: new Uint32Array(0), offsets: new Uint32Array(1), coords: new Float32Array(0) });
  // Outward to whole dbu (one more on each side for the float µm → dbu division), then the exact µm test below.
  const boxDbu: [number, number, number, number] = [Math.floor(box[0] / d) - 1, Math.floor(box[1] / d) - 1, Math.ceil(box[2] / d) + 1, Math.ceil(box[3] / d) + 1];
  let tile;
  try {
    // A few extra for polygons within a dbu of the box that the µm test drops.
    tile = source.readTile(boxDbu, layers, { maxPolygons: max + 1024 });
  } catch (err) {
    if (err instanceof LayoutReadError && err.code === 'too-large') return none(max + 1);
    throw err;
  }
  const keep: { l: number; s: number; e: number }[] = [];
  let pts = 0;
  for (const set of tile.layers) {
    const l = layers.findIndex((x) => x.layer === set.layer && x.datatype === set.datatype);
    for (let i = 0; i < set.count; i++) {
      const s = set.offsets[i] as number, e = set.offsets[i + 1] as number;
      let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
      for (let k = s; k < e; k++) {
        const x = set.coords[2 * k] as number, y = set.coords[2 * k + 1] as number;
        if (x < x0) x0 = x;
        if (x > x1) x1 = x;
        if (y < y0) y0 = y;
        if (y > y1) y1 = y;
      }
      if (!(x0 <= x1) || x0 * d > box[2] || x1 * d < box[0] || y0 * d > box[3] || y1 * d < box[1]) continue;
      keep.push({ l, s, e });
      pts += e - s;
    }
  }
  if (keep.length > max) return none(keep.length);
  const polyLayer = new Uint32Array(keep.length);
  const offsets = new Uint32Array(keep.length + 1);
  const coords = new Float32Array(2 * pts);
  const setOf = new Map(tile.layers.map((s) => [layers.findIndex((x) => x.layer === s.layer && x.datatype === s.datatype), s]));
  let p = 0;
  keep.forEach((h, r) => {
    const set = setOf.get(h.l)!;
    polyLayer[r] = h.l;
    offsets[r] = p;
    for (let k = h.s; k < h.e; k++, p++) {
      coords[2 * p] = (set.coords[2 * k] as number) * d - originX;
      coords[2 * p + 1] = (set.coords[2 * k + 1] as number) * d - originY;
    }
  });
  offsets[keep.length] = p;
  return { total: keep.length, layers, originX, originY, polyLayer, offsets, coords };
}
