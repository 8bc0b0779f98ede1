/**
 * Union area of a polygon set and the per-layer summary `inspect` prints. One union in the project: the tiled
 * exact union of open-regions.ts (fast paths for isolated polygons, clipper on overlapping clusters), summed.
 * Exact for axis-parallel geometry; where slanted edges of overlapping polygons cross, clipper rounds the crossing
 * to the dbu grid, as any integer union does.
 */
import { polygonSetsBbox } from '../layout/bbox';
import type { FlatLayout, PolygonSet } from '../layout/types';
import { openArea, openRegions } from './open-regions';

/** Nonzero-union area of `set` in dbu² (overlaps counted once). `tileDbu` overrides the automatic tile size. */
export function unionArea(set: PolygonSet, opts: { tileDbu?: number } = {}): { areaDbu2: number } {
  if (set.count === 0) return { areaDbu2: 0 };
  return { areaDbu2: openArea(openRegions(set, 1, { polarity: 'clear', tileDbu: opts.tileDbu })) };
}

export interface LayerSummaryRow {
  layer: number;
  datatype: number;
  polygons: number;
  areaUm2: number;
  /** [x0, y0, x1, y1] µm; null for an empty set. */
  bboxUm: [number, number, number, number] | null;
}

/** Per layer/datatype: flattened polygon count, union area (µm²) and bounding box (µm). */
export function layerSummary(layout: FlatLayout): LayerSummaryRow[] {
  const s = layout.dbuUm;
  return layout.layers.map((set) => {
    const box = polygonSetsBbox([set]);
    return {
      layer: set.layer,
      datatype: set.datatype,
      polygons: set.count,
      areaUm2: unionArea(set).areaDbu2 * s * s,
      bboxUm: box ? [box[0] * s, box[1] * s, box[2] * s, box[3] * s] : null,
    };
  });
}
