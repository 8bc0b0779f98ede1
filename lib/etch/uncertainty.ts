/**
 * Depth uncertainty from the calibration: the fitted parameters' covariance Σ (model.calibration.covariance,
 * s²(JᵀJ)⁻¹ from calibrate.ts) propagated to predicted depth to first order (the "delta method"):
 *   σ_depth² = gᵀ Σ g,   g_j = ∂depth/∂θ_j   (central differences, relative step 1e-3, one-sided at a bound).
 * This is the uncertainty of the model's mean prediction from the finite calibration data only; it leaves out
 * wafer-to-wafer and site scatter (about the fit's residual standard error) and any error of the model's form.
 * A depth held at a stop layer or at the maximum aspect ratio has zero derivative, hence σ = 0 there.
 */
import { createFeaturePredictor, type FeaturePredictor } from './fast-predict';
import type { FeatureInput } from './predict';
import type { ProcessModel } from './process-model';

/** Half-width of the band shown around predictions, in standard deviations (≈ 95 % for a normal error). */
export const DEPTH_BAND_K = 1.96;

export type UncertainParameter = 'openRateUmPerMin' | 'reactionProbability' | 'loadingCoefficient';

function valueOf(model: ProcessModel, p: UncertainParameter): number {
  return p === 'openRateUmPerMin' ? model.openRateUmPerMin : p === 'reactionProbability' ? model.reactionProbability : model.loading.coefficient;
}

function withValue(model: ProcessModel, p: UncertainParameter, v: number): ProcessModel {
  if (p === 'openRateUmPerMin') return { ...model, openRateUmPerMin: v };
  if (p === 'reactionProbability') return { ...model, reactionProbability: v };
  return { ...model, loading: { ...model.loading, coefficient: v } };
}

const UPPER: Record<UncertainParameter, number> = { openRateUmPerMin: Infinity, reactionProbability: 1, loadingCoefficient: Infinity };

/** The covariance recorded with the model, checked to be usable (finite, non-negative diagonal); null otherwise. */
export function modelCovariance(model: ProcessModel): { parameters: UncertainParameter[]; matrix: number[][] } | null {
  const c = model.calibration?.covariance;
  if (!c) return null;
  const ok = c.matrix.every((row, i) => row.every(Number.isFinite) && (row[i] ?? -1) >= 0);
  return ok ? { parameters: c.parameters, matrix: c.matrix } : null;
}

export type DepthUncertainty = {
  /** Standard deviation of the predicted depth, µm. */
  sigmaUm(input: FeatureInput): number;
  /** The fitted parameters whose covariance is propagated. */
  parameters: UncertainParameter[];
};

/**
 * Depth-uncertainty evaluator for one model, or null when the model carries no usable covariance (uncalibrated,
 * or a calibration without one). Builds two fast predictors per fitted parameter once; each call then costs
 * 2p predictions.
 */
export function createDepthUncertainty(model: ProcessModel): DepthUncertainty | null {
  const cov = modelCovariance(model);
  if (!cov) return null;
  const steps = cov.parameters.map((p) => {
    const v = valueOf(model, p);
    const h = Math.max(Math.abs(v) * 1e-3, 1e-9);
    const up = Math.min(v + h, UPPER[p]);
    const down = Math.max(v - h, p === 'loadingCoefficient' ? 0 : v * 0.5);
    return { up: createFeaturePredictor(withValue(model, p, up)), down: createFeaturePredictor(withValue(model, p, down)), span: up - down };
  });
  return {
    parameters: cov.parameters,
    sigmaUm(input: FeatureInput): number {
      const g = steps.map((s: { up: FeaturePredictor; down: FeaturePredictor; span: number }) => (s.up(input).depthUm - s.down(input).depthUm) / s.span);
      let v = 0;
      for (let a = 0; a < g.length; a++) for (let b = 0; b < g.length; b++) v += (g[a] as number) * (cov.matrix[a]?.[b] ?? 0) * (g[b] as number);
      return Math.sqrt(Math.max(0, v));
    },
  };
}
