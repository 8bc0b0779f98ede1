/**
 * Picking the etch layers out of a flattened layout and setting up the analysis grid over the die.
 * Die extent = bounding box of everything in the layout (all layers), in µm: it is the density denominator's
 * region and the default window origin.
 */
import type { FlatLayout, PolygonSet } from '../layout/types';
import { AnalysisInputError } from './errors';
import { choosePixelUm, type AnalysisSettings, type LayerRef } from './settings';

export const layerName = (l: { layer: number; datatype: number }): string => `${l.layer}/${l.datatype}`;

/**
 * The union (as one nonzero-fill set) of the requested layers. Throws AnalysisInputError('unknown-layer') naming
 * the missing layer and listing the layers present.
 */
export function selectEtchLayers(layout: FlatLayout, refs: LayerRef[]): PolygonSet {
  const sets: PolygonSet[] = [];
  for (const ref of refs) {
    const set = layout.layers.find((s) => s.layer === ref.layer && s.datatype === ref.datatype);
    if (!set) {
      const present = layout.layers.map(layerName).join(', ') || 'none';
      throw new AnalysisInputError('unknown-layer', `layer ${layerName(ref)} is not in the layout; layers present: ${present}`);
    }
    sets.push(set);
  }
  if (sets.length === 1) return sets[0] as PolygonSet;
  return mergePolygonSets(sets);
}

/** Concatenate polygon sets (nonzero fill makes the result their union). Layer/datatype are the first set's. */
export function mergePolygonSets(sets: PolygonSet[]): PolygonSet {
  const first = sets[0];
  if (!first) throw new RangeError('mergePolygonSets needs at least one set');
  let points = 0;
  let count = 0;
  for (const s of sets) {
    points += s.coords.length / 2;
    count += s.count;
  }
  const coords = new Float64Array(points * 2);
  const offsets = new Uint32Array(count + 1);
  let p = 0;
  let c = 0;
  for (const s of sets) {
    coords.set(s.coords, p * 2);
    for (let k = 0; k < s.count; k++) offsets[c + k + 1] = p + (s.offsets[k + 1] as number);
    p += s.coords.length / 2;
    c += s.count;
  }
  return { layer: first.layer, datatype: first.datatype, coords, offsets, count };
}

export interface DieFrame {
  /** [x0, y0, x1, y1] in µm. */
  dieBboxUm: [number, number, number, number];
  dieAreaUm2: number;
  grid: { x0Um: number; y0Um: number; pixelUm: number; nx: number; ny: number };
}

/**
 * Grid over the die: origin at the die's lower-left corner, square pixels, nx·ny ≤ settings.pixel.maxPixels.
 * The last column/row may reach past the die by less than one pixel.
 */
export function dieFrame(layout: FlatLayout, settings: AnalysisSettings): DieFrame {
  if (!layout.bboxDbu) throw new AnalysisInputError('empty-layout', 'the layout has no shapes');
  const [bx0, by0, bx1, by1] = layout.bboxDbu.map((v) => v * layout.dbuUm) as [number, number, number, number];
  const w = bx1 - bx0;
  const h = by1 - by0;
  if (!(w > 0 && h > 0)) throw new AnalysisInputError('empty-layout', `the layout's extent is ${w} × ${h} µm (no area)`);
  const { maxPixels, sizeUm } = settings.pixel;
  const pixelUm = sizeUm === 'auto' ? choosePixelUm(w, h, settings.densityWindows, maxPixels) : sizeUm;
  const nx = Math.max(1, Math.ceil(w / pixelUm - 1e-9));
  const ny = Math.max(1, Math.ceil(h / pixelUm - 1e-9));
  if (nx * ny > maxPixels) {
    const needed = choosePixelUm(w, h, settings.densityWindows, maxPixels);
    throw new AnalysisInputError(
      'too-many-pixels',
      `pixel size ${pixelUm} µm gives ${nx}×${ny} = ${nx * ny} pixels over the ${w} × ${h} µm die, above the budget of ${maxPixels}; use ≥ ${needed} µm or raise pixel.maxPixels`,
    );
  }
  return { dieBboxUm: [bx0, by0, bx1, by1], dieAreaUm2: w * h, grid: { x0Um: bx0, y0Um: by0, pixelUm, nx, ny } };
}
