/**
 * Tile size for a tiled analysis from the analysis memory budget (TRENCHANT_ANALYSIS_MEMORY_MB, settings.ts): the
 * largest square tile whose read region (core + margin on each side) is expected to hold no more polygons than one
 * tile job may keep in memory. Pure arithmetic on the header counts, so it is testable without a layout.
 *
 * What the budget pays for while tiles run: the stitched coverage differences (8 bytes per pixel, held until the
 * global stages) and, per worker, one tile job — its flattened polygons, exact union pieces and openings, about
 * TILE_BYTES_PER_POLYGON bytes per polygon read (the README's Performance table: peak per tile worker 0.16 GB for
 * ≈ 62 k polygons read on mixed.gds, ≈ 2.6 kB each, and ≤ 0.95 GB for ≈ 625 k on the 10 M-polygon run, ≈ 1.5 kB;
 * rounded up). Density is taken as DENSITY_PEAK times the layout's mean, so a denser corner still fits. The global
 * stages afterwards are bounded by the pixel budget for the maps; per-opening results grow with the openings.
 */
import type { TilePlan } from './plan';

/** Peak bytes one tile job holds per polygon it reads (estimate from measurement, with headroom). */
export const TILE_BYTES_PER_POLYGON = 3_000;
/** Densest tile assumed, relative to the mean polygon density of the die. */
export const DENSITY_PEAK = 4;
/** Smallest tile edge in pixels (smaller tiles spend most of their read on the margin). */
export const MIN_TILE_PX = 16;
/** At most this many tiles along one side (beyond that the budget is too small to be useful: tiles grow instead). */
export const MAX_TILES_PER_SIDE = 256;
const MiB = 1024 * 1024;

export interface TileBudget {
  tileUm: number;
  /** Why this size, in one line (kept with the analysis). */
  reason: string;
}

/**
 * `plan`: the plan with default tiles (planTiles without tileUm), for its grid, margin, die and polygon count.
 * `workers`: tile jobs held in memory at once (threads, or 1 inline).
 */
export function tileSizeForBudget(plan: Pick<TilePlan, 'grid' | 'dieBboxUm' | 'polygonCount' | 'marginDbu' | 'dbuUm'>, memoryMb: number, workers: number): TileBudget {
  const { grid } = plan;
  const p = grid.pixelUm;
  const wholePx = Math.max(grid.nx, grid.ny);
  const minPx = Math.min(wholePx, Math.max(MIN_TILE_PX, Math.ceil(wholePx / MAX_TILES_PER_SIDE)));
  const stitchBytes = 8 * grid.nx * grid.ny;
  const perWorker = Math.max(16 * MiB, (memoryMb * MiB - stitchBytes) / Math.max(1, workers));
  const [x0, y0, x1, y1] = plan.dieBboxUm;
  const area = Math.max(1e-9, (x1 - x0) * (y1 - y0));
  const density = (plan.polygonCount / area) * DENSITY_PEAK; // polygons per µm² in the densest tile assumed
  const maxPolygons = perWorker / TILE_BYTES_PER_POLYGON;
  const marginUm = plan.marginDbu * plan.dbuUm;
  let px: number;
  if (density <= 0) px = wholePx;
  else {
    const readEdge = Math.sqrt(maxPolygons / density);
    px = Math.floor((readEdge - 2 * marginUm) / p);
  }
  px = Math.min(wholePx, Math.max(minPx, px));
  const mb = (n: number) => `${Math.round(n / MiB)} MiB`;
  const reason =
    `tiles of ${px} pixels (${round(px * p)} µm): ${mb(perWorker)} per tile job (${memoryMb} MB analysis budget, ${mb(stitchBytes)} for the stitched coverage, ` +
    `${Math.max(1, workers)} job(s) at once) at about ${TILE_BYTES_PER_POLYGON} bytes per polygon read, ${DENSITY_PEAK}× the mean density of ${round(plan.polygonCount / area)} polygons/µm²`;
  return { tileUm: px * p, reason };
}

const round = (v: number) => (v >= 100 ? Math.round(v) : Math.round(v * 1000) / 1000);
