/**
 * Per-feature risk score and the pixel maps painted from per-feature results (aspect ratio, predicted depth, risk).
 *
 * Risk (dimensionless) = the largest of these ratios, each equal to 1 exactly at its flag's limit:
 *   depth:     (target − tolerance) / depth                       > 1 ⇔ under-target-depth
 *   over-etch: (target + overEtch) / (target + stop budget)        > 1 ⇔ over-etch-budget   (only with a budget)
 *   AR:        (target / width) / max aspect ratio                 > 1 ⇔ aspect-ratio-above-limit
 *   width:     rule minimum width / width                          > 1 ⇔ width-below-minimum (only with a rule)
 * capped at RISK_CAP so one stalled opening does not flatten the colour scale. Density-window flags are not in it
 * (they have their own maps).
 *
 * Painting: a pixel with any open area takes the value of the smallest-area feature whose bounding box contains
 * it (features painted largest first); other pixels are NaN ("no opening"). Exact for separate rectangles and holes;
 * where bounding boxes of different openings overlap (L-shapes, frames around holes) the smaller opening wins.
 * The depth-uncertainty map (σ of the predicted depth from the calibration, µm) is painted the same way, only when
 * the model carries a calibration covariance (otherwise null).
 */
import type { Grid } from '../geometry';
import { NULL_DEPTH_SIGMA, type FeatureResultTable } from './feature-results';
import { requiredAspectRatio } from './flags';
import type { FeatureResult } from './predict-features';
import type { ResolvedLimits } from './settings';

export const RISK_CAP = 10;

export function featureRisk(f: Pick<FeatureResult, 'depthUm' | 'overEtchUm' | 'widthUm'>, limits: ResolvedLimits): number {
  const t = limits.targetDepthUm;
  let r = f.depthUm > 0 ? (t - limits.toleranceUm) / f.depthUm : RISK_CAP;
  if (limits.stopOverEtchBudgetUm !== null) r = Math.max(r, (t + f.overEtchUm) / (t + limits.stopOverEtchBudgetUm));
  r = Math.max(r, requiredAspectRatio(t, f.widthUm) / limits.maxAspectRatio);
  if (limits.minWidthUm !== null) r = Math.max(r, f.widthUm > 0 ? limits.minWidthUm / f.widthUm : RISK_CAP);
  return Math.min(RISK_CAP, Math.max(0, r));
}

export interface FeatureMaps {
  aspectRatio: Float32Array;
  predictedDepth: Float32Array;
  risk: Float32Array;
  /** σ of the predicted depth, µm; null when no opening has one (uncalibrated model). */
  depthSigma: Float32Array | null;
}

/** What the painter reads per opening, as columns (row k = opening k). */
export interface PaintColumns {
  count: number;
  x0Um: ArrayLike<number>;
  y0Um: ArrayLike<number>;
  x1Um: ArrayLike<number>;
  y1Um: ArrayLike<number>;
  areaUm2: ArrayLike<number>;
  aspectRatio: ArrayLike<number>;
  depthUm: ArrayLike<number>;
  /** σ per opening (NaN where it has none), or null when no opening has one. */
  depthSigmaUm: ArrayLike<number> | null;
}

/** `paintFeatureColumns` over `FeatureResult` objects. */
export function paintFeatureMaps(results: FeatureResult[], risks: Float64Array, coverage: Float32Array, grid: Grid): FeatureMaps {
  const n = results.length;
  const c = { count: n, x0Um: new Float64Array(n), y0Um: new Float64Array(n), x1Um: new Float64Array(n), y1Um: new Float64Array(n), areaUm2: new Float64Array(n), aspectRatio: new Float64Array(n), depthUm: new Float64Array(n), depthSigmaUm: new Float64Array(n) };
  let anySigma = false;
  for (let k = 0; k < n; k++) {
    const f = results[k] as FeatureResult;
    [c.x0Um[k], c.y0Um[k], c.x1Um[k], c.y1Um[k]] = f.bboxUm;
    c.areaUm2[k] = f.areaUm2;
    c.aspectRatio[k] = f.aspectRatio;
    c.depthUm[k] = f.depthUm;
    c.depthSigmaUm[k] = f.depthSigmaUm ?? Number.NaN;
    if (f.depthSigmaUm !== null) anySigma = true;
  }
  return paintFeatureColumns({ ...c, depthSigmaUm: anySigma ? c.depthSigmaUm : null }, risks, coverage, grid);
}

/** The painter's columns of a result table (no copies). */
export function paintColumnsOf(t: FeatureResultTable): PaintColumns {
  let anySigma = false;
  for (let k = 0; k < t.count && !anySigma; k++) if (!((t.nulls[k] as number) & NULL_DEPTH_SIGMA)) anySigma = true;
  const f = t.features;
  return { count: t.count, x0Um: f.x0Um, y0Um: f.y0Um, x1Um: f.x1Um, y1Um: f.y1Um, areaUm2: f.areaUm2, aspectRatio: t.aspectRatio, depthUm: t.depthUm, depthSigmaUm: anySigma ? t.depthSigmaUm : null };
}

export function paintFeatureColumns(c: PaintColumns, risks: Float64Array, coverage: Float32Array, grid: Grid): FeatureMaps {
  const n = grid.nx * grid.ny;
  const count = c.count;
  // One owner map instead of four value maps painted per feature: each covered pixel keeps the index of the
  // smallest-area feature whose bbox contains it, ties to the later feature — the same winner as painting in a
  // stable largest-area-first order, without sorting a million openings.
  const owner = new Int32Array(n).fill(-1);
  const areas = c.areaUm2;
  const { x0Um, y0Um, pixelUm, nx, ny } = grid;
  for (let k = 0; k < count; k++) {
    const area = areas[k] as number;
    const i0 = Math.max(0, Math.floor(((c.x0Um[k] as number) - x0Um) / pixelUm));
    const i1 = Math.min(nx - 1, Math.ceil(((c.x1Um[k] as number) - x0Um) / pixelUm) - 1);
    const j0 = Math.max(0, Math.floor(((c.y0Um[k] as number) - y0Um) / pixelUm));
    const j1 = Math.min(ny - 1, Math.ceil(((c.y1Um[k] as number) - y0Um) / pixelUm) - 1);
    for (let j = j0; j <= j1; j++) {
      const row = j * nx;
      for (let i = i0; i <= i1; i++) {
        const p = row + i;
        if (!((coverage[p] as number) > 0)) continue;
        const o = owner[p] as number;
        if (o < 0 || !(area > (areas[o] as number))) owner[p] = k;
      }
    }
  }
  const aspectRatio = new Float32Array(n).fill(Number.NaN);
  const predictedDepth = new Float32Array(n).fill(Number.NaN);
  const risk = new Float32Array(n).fill(Number.NaN);
  const sigmaIn = c.depthSigmaUm;
  const depthSigma = sigmaIn ? new Float32Array(n).fill(Number.NaN) : null;
  // Values rounded to float32 once per opening, as the maps store them.
  const ar = new Float32Array(count), depth = new Float32Array(count), risk32 = new Float32Array(count);
  const sigma = sigmaIn ? new Float32Array(count) : null;
  for (let k = 0; k < count; k++) {
    ar[k] = c.aspectRatio[k] as number;
    depth[k] = c.depthUm[k] as number;
    risk32[k] = risks[k] as number;
    if (sigma) sigma[k] = (sigmaIn as ArrayLike<number>)[k] as number;
  }
  for (let p = 0; p < n; p++) {
    const o = owner[p] as number;
    if (o < 0) continue;
    aspectRatio[p] = ar[o] as number;
    predictedDepth[p] = depth[o] as number;
    risk[p] = risk32[o] as number;
    if (depthSigma) depthSigma[p] = (sigma as Float32Array)[o] as number;
  }
  return { aspectRatio, predictedDepth, risk, depthSigma };
}

/**
 * paintFeatureColumns over rows given a chunk at a time, in row order: each covered pixel keeps the area and
 * float32 values of its current winner (the same rule: a later row wins unless its area is larger), so the maps
 * equal paintFeatureColumns over all rows without keeping any row. Memory: a few values per pixel.
 */
export class StreamPainter {
  private readonly ownerArea: Float64Array;
  private readonly owned: Uint8Array;
  private readonly maps: FeatureMaps & { depthSigma: Float32Array };
  private anySigma = false;
  constructor(
    private readonly coverage: Float32Array,
    private readonly grid: Grid,
  ) {
    const n = grid.nx * grid.ny;
    this.ownerArea = new Float64Array(n);
    this.owned = new Uint8Array(n);
    const nan = () => new Float32Array(n).fill(Number.NaN);
    this.maps = { aspectRatio: nan(), predictedDepth: nan(), risk: nan(), depthSigma: nan() };
  }

  add(t: FeatureResultTable, risks: Float64Array): void {
    const f = t.features, { coverage, ownerArea, owned } = this;
    const { x0Um, y0Um, pixelUm, nx, ny } = this.grid;
    const { aspectRatio, predictedDepth, risk, depthSigma } = this.maps;
    for (let k = 0; k < t.count; k++) {
      if (!((t.nulls[k] as number) & NULL_DEPTH_SIGMA)) this.anySigma = true;
      const area = f.areaUm2[k] as number;
      const i0 = Math.max(0, Math.floor(((f.x0Um[k] as number) - x0Um) / pixelUm));
      const i1 = Math.min(nx - 1, Math.ceil(((f.x1Um[k] as number) - x0Um) / pixelUm) - 1);
      const j0 = Math.max(0, Math.floor(((f.y0Um[k] as number) - y0Um) / pixelUm));
      const j1 = Math.min(ny - 1, Math.ceil(((f.y1Um[k] as number) - y0Um) / pixelUm) - 1);
      for (let j = j0; j <= j1; j++) {
        const row = j * nx;
        for (let i = i0; i <= i1; i++) {
          const p = row + i;
          if (!((coverage[p] as number) > 0)) continue;
          if (owned[p] && area > (ownerArea[p] as number)) continue;
          owned[p] = 1;
          ownerArea[p] = area;
          aspectRatio[p] = t.aspectRatio[k] as number;
          predictedDepth[p] = t.depthUm[k] as number;
          risk[p] = risks[k] as number;
          depthSigma[p] = t.depthSigmaUm[k] as number;
        }
      }
    }
  }

  finish(): FeatureMaps {
    return { ...this.maps, depthSigma: this.anySigma ? this.maps.depthSigma : null };
  }
}
