/**
 * Spatial index over a flattened layout for the viewer's polygons-in-view queries: an rbush R-tree of polygon
 * bounding boxes plus a coarse count grid of polygon centres. The grid answers "how many are in this box?" in
 * O(cells) without touching the tree, so a zoomed-out view that would return too many polygons costs nothing;
 * only views under the limit walk the tree.
 */
import RBush from 'rbush';
import type { FlatLayout } from '@/lib/layout/types';
import type { WirePolygons } from './polygon-wire';

type Item = { minX: number; minY: number; maxX: number; maxY: number; l: number; i: number };

export interface PolygonIndex {
  layout: FlatLayout;
  tree: RBush<Item>;
  /** Layout bbox, µm. */
  bboxUm: [number, number, number, number];
  polygonCount: number;
  counts: { nx: number; ny: number; x0: number; y0: number; cell: number; values: Uint32Array };
  /** Largest bbox side of the polygons in the count grid, µm (one may reach half this outside its centre's cell). */
  maxSideUm: number;
  /** Polygons larger than a grid cell (die outlines, fills), counted one by one instead of in the grid. */
  large: Item[];
}

const COUNT_CELLS = 256;

export function buildPolygonIndex(layout: FlatLayout): PolygonIndex {
  const d = layout.dbuUm;
  const items: Item[] = [];
  let maxSide = 0;
  layout.layers.forEach((set, l) => {
    for (let i = 0; i < set.count; i++) {
      let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
      for (let k = set.offsets[i] as number; k < (set.offsets[i + 1] as number); k++) {
        const x = set.coords[2 * k] as number;
        const y = set.coords[2 * k + 1] as number;
        if (x < x0) x0 = x;
        if (x > x1) x1 = x;
        if (y < y0) y0 = y;
        if (y > y1) y1 = y;
      }
      if (!(x0 <= x1)) continue;
      items.push({ minX: x0 * d, minY: y0 * d, maxX: x1 * d, maxY: y1 * d, l, i });
      maxSide = Math.max(maxSide, (x1 - x0) * d, (y1 - y0) * d);
    }
  });
  const tree = new RBush<Item>();
  tree.load(items);
  const bb = layout.bboxDbu ? layout.bboxDbu.map((v) => v * d) : [0, 0, 1, 1];
  const [bx0, by0, bx1, by1] = bb as [number, number, number, number];
  const cell = Math.max(bx1 - bx0, by1 - by0, 1e-6) / COUNT_CELLS;
  const nx = Math.max(1, Math.ceil((bx1 - bx0) / cell) + 1);
  const ny = Math.max(1, Math.ceil((by1 - by0) / cell) + 1);
  const values = new Uint32Array(nx * ny);
  const large: Item[] = [];
  maxSide = 0;
  for (const it of items) {
    const side = Math.max(it.maxX - it.minX, it.maxY - it.minY);
    if (side > cell) {
      large.push(it);
      continue;
    }
    maxSide = Math.max(maxSide, side);
    const i = Math.min(nx - 1, Math.floor(((it.minX + it.maxX) / 2 - bx0) / cell));
    const j = Math.min(ny - 1, Math.floor(((it.minY + it.maxY) / 2 - by0) / cell));
    values[j * nx + i]! += 1;
  }
  return { layout, tree, bboxUm: [bx0, by0, bx1, by1], polygonCount: items.length, counts: { nx, ny, x0: bx0, y0: by0, cell, values }, maxSideUm: maxSide, large };
}

/** Upper estimate of the polygons meeting `box` (µm): centres in the cells the box, grown by the largest polygon half-side, touches. */
export function estimateCount(ix: PolygonIndex, box: [number, number, number, number]): number {
  const { nx, ny, x0, y0, cell, values } = ix.counts;
  const g = ix.maxSideUm / 2;
  const i0 = Math.max(0, Math.floor((box[0] - g - x0) / cell));
  const i1 = Math.min(nx - 1, Math.floor((box[2] + g - x0) / cell));
  const j0 = Math.max(0, Math.floor((box[1] - g - y0) / cell));
  const j1 = Math.min(ny - 1, Math.floor((box[3] + g - y0) / cell));
  let n = 0;
  for (let j = j0; j <= j1; j++) for (let i = i0; i <= i1; i++) n += values[j * nx + i] as number;
  for (const it of ix.large) if (it.minX <= box[2] && it.maxX >= box[0] && it.minY <= box[3] && it.maxY >= box[1]) n++;
  return n;
}

/**
 * Polygons whose bbox meets `box` (µm), at most `max`; when there are more, none are returned and `total` is an
 * estimate (so the caller draws a raster instead).
 */
export function queryPolygons(ix: PolygonIndex, box: [number, number, number, number], max: number): WirePolygons {
  const layers = ix.layout.layers.map((s) => ({ layer: s.layer, datatype: s.datatype }));
  const originX = (box[0] + box[2]) / 2;
  const originY = (box[1] + box[3]) / 2;
  const none = (total: number): WirePolygons => ({ total, layers, originX, originY, polyLayer: new Uint32Array(0), offsets: new Uint32Array(1), coords: new Float32Array(0) });
  const estimate = estimateCount(ix, box);
  if (estimate > max) {
    // The estimate can overshoot near the box edge; confirm with the tree only when it is close to the limit.
    if (estimate > 2 * max) return none(estimate);
  }
  const hits = ix.tree.search({ minX: box[0], minY: box[1], maxX: box[2], maxY: box[3] });
  if (hits.length > max) return none(hits.length);
  hits.sort((a, b) => a.l - b.l || a.i - b.i);
  let pts = 0;
  for (const h of hits) {
    const s = ix.layout.layers[h.l]!;
    pts += (s.offsets[h.i + 1] as number) - (s.offsets[h.i] as number);
  }
  const polyLayer = new Uint32Array(hits.length);
  const offsets = new Uint32Array(hits.length + 1);
  const coords = new Float32Array(2 * pts);
  const d = ix.layout.dbuUm;
  let p = 0;
  hits.forEach((h, r) => {
    const s = ix.layout.layers[h.l]!;
    polyLayer[r] = h.l;
    offsets[r] = p;
    for (let k = s.offsets[h.i] as number; k < (s.offsets[h.i + 1] as number); k++, p++) {
      coords[2 * p] = (s.coords[2 * k] as number) * d - originX;
      coords[2 * p + 1] = (s.coords[2 * k + 1] as number) * d - originY;
    }
  });
  offsets[hits.length] = p;
  return { total: hits.length, layers, originX, originY, polyLayer, offsets, coords };
}
