/**
 * Curves for the calibration plots, computed from a model (pure; runs in the browser): predicted depth against width
 * and against density with the depth-uncertainty band, the ARDE curve R(AR)/R(0) and the local loading curve, each
 * with a band of ±DEPTH_BAND_K standard deviations from the calibration covariance (first-order propagation, as in
 * lib/etch/uncertainty.ts). Without a covariance the band collapses onto the curve.
 */
import { ardeFactor, createDepthUncertainty, DEPTH_BAND_K, localLoadingFactor, modelCovariance, predictFeature, type ProcessModel } from '@/lib/etch';

export type CurvePoint = { x: number; y: number; band: [number, number] };

/** n log-spaced values from a to b. */
export function logSpace(a: number, b: number, n: number): number[] {
  return Array.from({ length: n }, (_, i) => a * Math.pow(b / a, n > 1 ? i / (n - 1) : 0));
}
export function linSpace(a: number, b: number, n: number): number[] {
  return Array.from({ length: n }, (_, i) => a + ((b - a) * i) / Math.max(1, n - 1));
}

const withTime = (m: ProcessModel, timeMin: number): ProcessModel => ({ ...m, etch: { ...m.etch, timeMin } });

/** Depth at `timeMin` against width (x = width µm). */
export function depthVsWidth(model: ProcessModel, kind: 'trench' | 'hole', timeMin: number, density: number, widthsUm: number[]): CurvePoint[] {
  const m = withTime(model, timeMin);
  const unc = createDepthUncertainty(m);
  return widthsUm.map((w) => {
    const input = { widthUm: w, kind, effectiveDensity: density };
    const y = predictFeature(m, input).depthUm;
    const s = unc ? DEPTH_BAND_K * unc.sigmaUm(input) : 0;
    return { x: w, y, band: [y - s, y + s] };
  });
}

/** Depth at `timeMin` against effective density (x = density 0..1). */
export function depthVsDensity(model: ProcessModel, kind: 'trench' | 'hole', timeMin: number, widthUm: number, densities: number[]): CurvePoint[] {
  const m = withTime(model, timeMin);
  const unc = createDepthUncertainty(m);
  return densities.map((d) => {
    const input = { widthUm, kind, effectiveDensity: d };
    const y = predictFeature(m, input).depthUm;
    const s = unc ? DEPTH_BAND_K * unc.sigmaUm(input) : 0;
    return { x: d, y, band: [y - s, y + s] };
  });
}

function sigmaOf(model: ProcessModel, name: 'reactionProbability' | 'loadingCoefficient'): number {
  const cov = modelCovariance(model);
  const i = cov?.parameters.indexOf(name) ?? -1;
  return cov && i >= 0 ? Math.sqrt(cov.matrix[i]?.[i] ?? 0) : 0;
}

/** ARDE factor R(AR)/R(0) against aspect ratio; only S among the fitted parameters moves it. */
export function ardeCurve(model: ProcessModel, kind: 'trench' | 'hole', aspectRatios: number[]): CurvePoint[] {
  const sS = sigmaOf(model, 'reactionProbability');
  const S = model.reactionProbability;
  const h = Math.max(S * 1e-3, 1e-9);
  const up = Math.min(1, S + h);
  const down = Math.max(1e-9, S - h);
  return aspectRatios.map((ar) => {
    const y = ardeFactor(model, kind, ar);
    const g = sS > 0 ? (ardeFactor({ ...model, reactionProbability: up }, kind, ar) - ardeFactor({ ...model, reactionProbability: down }, kind, ar)) / (up - down) : 0;
    const s = DEPTH_BAND_K * Math.abs(g) * sS;
    return { x: ar, y, band: [y - s, y + s] };
  });
}

/** Local loading factor R/R_open against effective density; only κ moves it. */
export function loadingCurve(model: ProcessModel, densities: number[]): CurvePoint[] {
  const sK = sigmaOf(model, 'loadingCoefficient');
  const k = model.loading.coefficient;
  return densities.map((d) => {
    const y = localLoadingFactor(d, k, model.loading.form);
    const g = model.loading.form === 'linear' ? -d : -d / (1 + k * d) ** 2;
    const s = DEPTH_BAND_K * Math.abs(g) * sK;
    return { x: d, y, band: [y - s, y + s] };
  });
}
