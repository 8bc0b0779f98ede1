/**
 * Shared shapes of the geometry engine. Frames: layout coordinates, +x right, +y up. Polygon input is in integer
 * database units (dbu, `dbuUm` micrometres each); every result is in micrometres unless a name says otherwise.
 */

/**
 * A raster frame: pixel (i, j) covers [x0 + i·p, x0 + (i+1)·p] × [y0 + j·p, y0 + (j+1)·p] (µm). Arrays over a
 * grid are row-major, index j·nx + i, with j growing along +y (row 0 is the bottom row).
 */
export interface Grid {
  x0Um: number;
  y0Um: number;
  pixelUm: number;
  nx: number;
  ny: number;
}

/**
 * Mask tone. 'clear': the drawn shapes are the openings (etched). 'dark': the complement of the drawn shapes
 * inside the reference region is open.
 */
export type Polarity = 'clear' | 'dark';

/** Axis-aligned box [x0, y0, x1, y1]. */
export type Box = [number, number, number, number];

export interface WindowCell {
  i: number;
  j: number;
  /** Lower-left corner of the window, µm. */
  xUm: number;
  yUm: number;
}

/** Window density as rule manuals define it; see `windowDensity`. */
export interface WindowDensity {
  windowUm: number;
  stepUm: number;
  /** Lower-left corner of window (0, 0), µm. */
  originUm: [number, number];
  nx: number;
  ny: number;
  /** Open fraction per window, row-major j·nx + i, j along +y. NaN for a clipped window with no area. */
  values: Float64Array;
  min: number;
  max: number;
  /** Mean of the window values (not the global density). */
  mean: number;
  /** Open area / reference area over the whole reference region (the grid extent). */
  globalDensity: number;
  minAt: WindowCell;
  maxAt: WindowCell;
  /** Largest |difference| between two windows sharing an edge (4-neighbours); a and b name them. */
  maxGradient: { value: number; a: { i: number; j: number }; b: { i: number; j: number } };
  method: { origin: string; denominator: string; edgePolicy: string };
  edge: 'full' | 'clipped';
}

export type FeatureKind = 'round-hole' | 'square-hole' | 'trench' | 'open-field' | 'irregular';

/** One connected opening (after union), in µm. */
export interface Feature {
  id: number;
  kind: FeatureKind;
  centroidUm: [number, number];
  bboxUm: Box;
  areaUm2: number;
  perimeterUm: number;
  /** Width that governs the etch (see widths.ts): trench width of a line, diameter of a hole, narrower arm of an L. */
  minWidthUm: number;
  /** Diameter of the largest inscribed disk. */
  maxWidthUm: number;
  /** max(area / minWidth, longest bbox side): the centre-line length of a trench. */
  lengthUm: number;
  /** Lattice step used for the widths (0 when they were computed analytically), µm. */
  widthStepUm: number;
  /** True when the widths are exact (rectangles, or Manhattan shapes on their own vertex lattice). */
  widthExact: boolean;
  /** Number of tile pieces the feature was stitched from. */
  pieces: number;
}
