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

export function paintFeatureMaps(results: FeatureResult[], risks: Float64Array, coverage: Float32Array, grid: Grid): FeatureMaps {
  const n = grid.nx * grid.ny;
  const aspectRatio = new Float32Array(n).fill(Number.NaN);
  const predictedDepth = new Float32Array(n).fill(Number.NaN);
  const risk = new Float32Array(n).fill(Number.NaN);
  const depthSigma = results.some((f) => f.depthSigmaUm !== null) ? new Float32Array(n).fill(Number.NaN) : null;
  const order = results.map((_, k) => k).sort((a, b) => (results[b] as FeatureResult).areaUm2 - (results[a] as FeatureResult).areaUm2);
  const { x0Um, y0Um, pixelUm, nx, ny } = grid;
  for (const k of order) {
    const f = results[k] as FeatureResult;
    const [bx0, by0, bx1, by1] = f.bboxUm;
    const i0 = Math.max(0, Math.floor((bx0 - x0Um) / pixelUm));
    const i1 = Math.min(nx - 1, Math.ceil((bx1 - x0Um) / pixelUm) - 1);
    const j0 = Math.max(0, Math.floor((by0 - y0Um) / pixelUm));
    const j1 = Math.min(ny - 1, Math.ceil((by1 - y0Um) / pixelUm) - 1);
    const r = risks[k] as number;
    const sigma = f.depthSigmaUm ?? Number.NaN;
    for (let j = j0; j <= j1; j++) {
      for (let i = i0; i <= i1; i++) {
        const p = j * nx + i;
        if (!((coverage[p] as number) > 0)) continue;
        aspectRatio[p] = f.aspectRatio;
        predictedDepth[p] = f.depthUm;
        risk[p] = r;
        if (depthSigma) depthSigma[p] = sigma;
      }
    }
  }
  return { aspectRatio, predictedDepth, risk, depthSigma };
}
