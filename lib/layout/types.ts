/**
 * Shared shapes of a flattened layout. Every reader (GDSII, CSV) produces a `FlatLayout`; the geometry engine,
 * the etch pipeline and the CLI consume it. Pure data: no Node, DOM or database types here.
 *
 * Frame: layout coordinates, +x right, +y up, in integer database units (dbu) stored in float64 (exact up to 2^53).
 * One dbu is `dbuUm` micrometres. Rings are stored without repeating the first point and are counter-clockwise
 * (readers normalise them, also under reflection), so each polygon is filled on its own as GDSII intends and a
 * nonzero union of the set is the drawn area. Holes come as keyhole rings, never as opposite-orientation rings.
 */
import type { LayoutWarning } from './errors';

/** All polygons of one layer/datatype, as flat typed arrays (no per-point objects). */
export interface PolygonSet {
  layer: number;
  datatype: number;
  /** Interleaved x,y in dbu: point k is (coords[2k], coords[2k+1]). */
  coords: Float64Array;
  /** Point offsets, length count+1: polygon i owns points [offsets[i], offsets[i+1]). */
  offsets: Uint32Array;
  /** Number of polygons. */
  count: number;
}

/** A text label kept from the layout (GDSII TEXT), placed in the flattened frame. */
export interface LayoutLabel {
  layer: number;
  texttype: number;
  text: string;
  xDbu: number;
  yDbu: number;
}

export type LayoutFormat = 'gdsii' | 'csv';

export interface FlatLayout {
  format: LayoutFormat;
  /** Library name (GDSII LIBNAME) or the CSV file's declared name, if any. */
  libraryName: string;
  /** Size of one database unit in micrometres (GDSII UNITS second real × 1e6). */
  dbuUm: number;
  /** Size of the user unit in micrometres (GDSII UNITS: dbu in metres / dbu in user units × 1e6). */
  userUnitUm: number;
  topCell: string;
  cellCount: number;
  /** One entry per layer/datatype present after flattening, sorted by layer then datatype. */
  layers: PolygonSet[];
  labels: LayoutLabel[];
  /** Bounding box of everything flattened, in dbu: [x0, y0, x1, y1]; null for an empty layout. */
  bboxDbu: [number, number, number, number] | null;
  /** Problems the reader repaired (each names its byte offset or line); absent or empty when none. */
  warnings?: LayoutWarning[];
}
