/**
 * The plan of a tiled analysis: which tiles, how far each reads beyond its core, and the lattice every tile's union
 * uses. Plain JSON (it is sent to worker threads and queue jobs).
 *
 * Exactness rests on three choices made here:
 * - Tile cores are blocks of analysis pixels, so every pixel's coverage is computed by exactly one tile.
 * - Each tile's union runs on the same union lattice as the untiled union (origin = the layout's bbox corner, edge =
 *   the untiled default for this polygon count), over a block of whole lattice cells. A lattice cell's pieces depend
 *   only on the polygons meeting it, so they come out the same as in the untiled union, in the same relative order.
 * - The region a tile reads is its core grown by the margin and snapped outward to lattice lines.
 */
import type { TileSourceHeader } from '../../layout/tile-source';
import type { Box, Grid, Polarity } from '../../geometry/types';
import { AnalysisInputError } from '../errors';
import { dieFrame, layerName } from '../etch-layers';
import type { AnalysisSettings, LayerRef } from '../settings';
import type { FlatLayout } from '../../layout/types';

export interface TilePlan {
  dbuUm: number;
  grid: Grid;
  dieBboxUm: [number, number, number, number];
  /** The untiled union's reference region (the layout's bbox, dbu). */
  regionDbu: Box;
  /** Union lattice edge, dbu (what openRegions would choose for the whole etch layer set). */
  latticeDbu: number;
  latticeNx: number;
  latticeNy: number;
  polarity: Polarity;
  etchLayers: LayerRef[];
  polygonCount: number;
  /** Tile core edge in pixels and µm. */
  tilePx: number;
  tileUm: number;
  ntx: number;
  nty: number;
  /** First-pass margin beyond the core (left, right, top; one dbu below), dbu. */
  marginDbu: number;
  marginReason: string;
}

export interface PlanOptions {
  /** Tile core edge, µm (rounded to whole pixels, at least one). Default: about 16 tiles, at least 64 pixels each. */
  tileUm?: number;
  /** First-pass margin, µm. Default: max(25 µm, 2 pixels). */
  marginUm?: number;
}

/** Openings up to this size are complete in the first pass with the default margin (wider ones are re-read). */
export const DEFAULT_MARGIN_UM = 25;

/** The untiled union's lattice edge for `count` polygons over `region` (mirrors openRegions' default; a test keeps them equal). */
export function defaultLatticeDbu(region: Box, count: number): number {
  const w = region[2] - region[0], h = region[3] - region[1];
  return Math.max(1, Math.ceil(Math.sqrt((w * h * 64) / Math.max(1, count))));
}

/** A FlatLayout carrying only the header (no polygons): what the global stages read of a layout. */
export function headerLayout(h: TileSourceHeader): FlatLayout {
  return {
    format: h.format,
    libraryName: h.libraryName,
    dbuUm: h.dbuUm,
    userUnitUm: h.userUnitUm,
    topCell: h.topCell,
    cellCount: h.cellCount,
    labels: [],
    layers: [],
    bboxDbu: h.bboxDbu,
    ...(h.warnings ? { warnings: h.warnings } : {}),
  };
}

export function planTiles(header: TileSourceHeader, settings: AnalysisSettings, opts: PlanOptions = {}): TilePlan {
  let polygonCount = 0;
  for (const ref of settings.etchLayers) {
    const l = header.layers.find((s) => s.layer === ref.layer && s.datatype === ref.datatype);
    if (!l) {
      const present = header.layers.map(layerName).join(', ') || 'none';
      throw new AnalysisInputError('unknown-layer', `layer ${layerName(ref)} is not in the layout; layers present: ${present}`);
    }
    polygonCount += l.polygons;
  }
  const frame = dieFrame(headerLayout(header), settings);
  const region = header.bboxDbu as Box; // dieFrame threw when it is null
  const { grid } = frame;
  const latticeDbu = defaultLatticeDbu(region, polygonCount);
  const p = grid.pixelUm;
  let tilePx: number;
  if (opts.tileUm !== undefined) {
    if (!(opts.tileUm > 0) || !Number.isFinite(opts.tileUm)) throw new AnalysisInputError('bad-settings', `tile size must be a positive number of µm, got ${opts.tileUm}`);
    tilePx = Math.max(1, Math.round(opts.tileUm / p));
  } else tilePx = Math.max(64, Math.ceil(Math.max(grid.nx, grid.ny) / 4));
  const u = header.dbuUm;
  const marginUm = opts.marginUm ?? Math.max(DEFAULT_MARGIN_UM, 2 * p);
  if (!(marginUm >= 0) || !Number.isFinite(marginUm)) throw new AnalysisInputError('bad-settings', `tile margin must be ≥ 0 µm, got ${opts.marginUm}`);
  // One pixel plus a dbu at least: an edge in the column left of the core adds to the core's first column.
  const marginDbu = Math.max(Math.ceil(marginUm / u), Math.ceil(p / u) + 1);
  const marginReason =
    `${Math.round(marginDbu * u * 1000) / 1000} µm: openings up to this size beyond a tile's core are complete in the first pass; ` +
    'larger ones reach the edge of what was read and are re-read with a doubled margin until complete, so the margin changes speed, never the result. ' +
    'The kernel needs none: effective density, windows and local width run on the stitched coverage raster.';
  return {
    dbuUm: u,
    grid,
    dieBboxUm: frame.dieBboxUm,
    regionDbu: [region[0], region[1], region[2], region[3]],
    latticeDbu,
    latticeNx: Math.max(1, Math.ceil((region[2] - region[0]) / latticeDbu)),
    latticeNy: Math.max(1, Math.ceil((region[3] - region[1]) / latticeDbu)),
    polarity: settings.polarity,
    etchLayers: settings.etchLayers.map((l) => ({ layer: l.layer, datatype: l.datatype })),
    polygonCount,
    tilePx,
    tileUm: tilePx * p,
    ntx: Math.ceil(grid.nx / tilePx),
    nty: Math.ceil(grid.ny / tilePx),
    marginDbu,
    marginReason,
  };
}

/** Pixel columns [i0, i1) and rows [j0, j1) of tile t (row-major over ntx × nty). */
export function tileCore(plan: TilePlan, t: number): { i0: number; j0: number; i1: number; j1: number; ti: number; tj: number } {
  const ti = t % plan.ntx, tj = Math.floor(t / plan.ntx);
  const { tilePx, grid } = plan;
  return { ti, tj, i0: ti * tilePx, j0: tj * tilePx, i1: Math.min(grid.nx, (ti + 1) * tilePx), j1: Math.min(grid.ny, (tj + 1) * tilePx) };
}

/** The µm line between tile columns ti−1 and ti (one expression for both neighbours, so ownership partitions the plane). */
const lineX = (plan: TilePlan, ti: number) => plan.grid.x0Um + ti * plan.tilePx * plan.grid.pixelUm;
const lineY = (plan: TilePlan, tj: number) => plan.grid.y0Um + tj * plan.tilePx * plan.grid.pixelUm;

/** Whether tile t owns the point (µm): half-open core box, the outer tiles open towards infinity. */
export function ownsPoint(plan: TilePlan, t: number, xUm: number, yUm: number): boolean {
  const ti = t % plan.ntx, tj = Math.floor(t / plan.ntx);
  if (ti > 0 && xUm < lineX(plan, ti)) return false;
  if (ti < plan.ntx - 1 && xUm >= lineX(plan, ti + 1)) return false;
  if (tj > 0 && yUm < lineY(plan, tj)) return false;
  if (tj < plan.nty - 1 && yUm >= lineY(plan, tj + 1)) return false;
  return true;
}

/** The µm line below tile t's core (−∞ for the bottom row, which owns everything below). */
export function coreBottomUm(plan: TilePlan, t: number): number {
  const tj = Math.floor(t / plan.ntx);
  return tj > 0 ? lineY(plan, tj) : -Infinity;
}

/**
 * The box (dbu) tile t reads with `marginDbu`: its core grown by the margin left, right and up and by one dbu down
 * (an opening owned by the tile lies above its lowest vertex, which is in the core), snapped outward to the union
 * lattice and clipped to the layout's bbox.
 */
export function tileRegion(plan: TilePlan, t: number, marginDbu: number): Box {
  const ti = t % plan.ntx, tj = Math.floor(t / plan.ntx);
  const u = plan.dbuUm;
  const x0 = Math.floor(lineX(plan, ti) / u) - marginDbu;
  const y0 = Math.floor(lineY(plan, tj) / u) - 1;
  const x1 = Math.ceil(lineX(plan, ti + 1) / u) + marginDbu;
  const y1 = Math.ceil(lineY(plan, tj + 1) / u) + marginDbu;
  return snapOut(plan, [x0, y0, x1, y1]);
}

/** A box grown by the margin on every side, snapped outward to the lattice (re-reads around a wide opening). */
export function boxRegion(plan: TilePlan, box: Box, marginDbu: number): Box {
  return snapOut(plan, [box[0] - marginDbu, box[1] - marginDbu, box[2] + marginDbu, box[3] + marginDbu]);
}

function snapOut(plan: TilePlan, b: Box): Box {
  const G = plan.regionDbu, L = plan.latticeDbu;
  const down = (v: number, lo: number) => Math.max(lo, lo + Math.floor((v - lo) / L) * L);
  const up = (v: number, lo: number, hi: number) => Math.min(hi, lo + Math.ceil((v - lo) / L) * L);
  return [down(b[0], G[0]), down(b[1], G[1]), up(b[2], G[0], G[2]), up(b[3], G[1], G[3])];
}

/** Whether a region is the whole layout bbox (then nothing outside it can extend an opening). */
export function isWholeRegion(plan: TilePlan, r: Box): boolean {
  const G = plan.regionDbu;
  return r[0] <= G[0] && r[1] <= G[1] && r[2] >= G[2] && r[3] >= G[3];
}
