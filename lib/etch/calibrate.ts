/**
 * Calibration: fit process-model parameters to measured depths by Levenberg–Marquardt (ml-levenberg-marquardt).
 *
 * Fitted parameters (any subset containing at least one): openRateUmPerMin, reactionProbability (S),
 * loadingCoefficient (κ). The loading length L is not fitted here: it enters only through the effective densities,
 * which the CSV carries precomputed. Each row is predicted with the base model (ion terms, cyclic steps, max AR kept;
 * stop layer and mask dropped — calibration depths must lie in the etched material) at the row's time, width,
 * kind and density.
 *
 * Uncertainty: at the optimum θ̂, J = ∂(predicted)/∂θ by central differences (one-sided at a bound);
 * covariance = s²(JᵀJ)⁻¹ with s² = SSR/(n − p); standard error = √diag. These are the usual linearised
 * (asymptotic) errors and assume independent, equal-variance measurement noise.
 */
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import type { CalibrationRow } from './calibration-csv';
import { predictDepthUm } from './predict';
import { createArdeEvaluators, type ArdeEvaluator } from './rate';
import type { FeatureKind } from './transmission';
import { processModelSchema, type ProcessModel } from './process-model';

export type FitParameter = 'openRateUmPerMin' | 'reactionProbability' | 'loadingCoefficient';

export type CalibrationOptions = {
  /** Model supplying everything not fitted, and the starting values. */
  baseModel: ProcessModel;
  /** Default ['openRateUmPerMin', 'reactionProbability']. */
  fit?: FitParameter[];
  initial?: Partial<Record<FitParameter, number>>;
  /** Cap on LM iterations (run in chunks of 10 until the sum of squares stops falling); default 200. */
  maxIterations?: number;
  /** Calibration date recorded in the model, YYYY-MM-DD; default today (UTC). */
  date?: string;
  source?: string;
};

export type FittedValue = { value: number; standardError: number | null; atBound: boolean };

export type CalibrationResidual = {
  line: number;
  widthUm: number;
  kind: 'trench' | 'hole';
  density: number;
  timeMin: number;
  measuredUm: number;
  predictedUm: number;
  residualUm: number;
};

export type CalibrationFit = {
  ok: true;
  parameters: Partial<Record<FitParameter, FittedValue>>;
  /** The base model with fitted values and a calibration record (ranges, date, R²). */
  model: ProcessModel;
  residuals: CalibrationResidual[];
  rSquared: number;
  rmsResidualUm: number;
  /** s = √(SSR/(n − p)), µm. */
  residualStandardErrorUm: number;
  /** s²(JᵀJ)⁻¹ in the order of `fit`; null when JᵀJ is singular. */
  covariance: { parameters: FitParameter[]; matrix: number[][] } | null;
  degreesOfFreedom: number;
  iterations: number;
  ranges: { widthUm: [number, number]; aspectRatio: [number, number]; density: [number, number]; kinds: ('trench' | 'hole')[] };
  warnings: string[];
};

export type CalibrationRefusal = { ok: false; message: string };

const BOUNDS: Record<FitParameter, [number, number]> = {
  openRateUmPerMin: [1e-9, Infinity],
  reactionProbability: [1e-6, 1],
  loadingCoefficient: [0, Infinity],
};

function withParameters(base: ProcessModel, fit: FitParameter[], values: number[]): ProcessModel {
  const m: ProcessModel = { ...base, loading: { ...base.loading }, etch: { ...base.etch } };
  delete m.stopLayer;
  delete m.mask;
  delete m.calibration;
  fit.forEach((name, i) => {
    const v = values[i] ?? NaN;
    if (name === 'openRateUmPerMin') m.openRateUmPerMin = v;
    else if (name === 'reactionProbability') m.reactionProbability = v;
    else m.loading.coefficient = v;
  });
  return m;
}

// Integrator tolerance for fitting: far below measurement noise, loose enough to keep LM fast.
const FIT_REL_TOL = 1e-8;

function predictRow(model: ProcessModel, row: CalibrationRow, arde?: Record<FeatureKind, ArdeEvaluator>): number {
  return predictDepthUm(model, { widthUm: row.widthUm, kind: row.kind, effectiveDensity: row.density }, row.timeMin, { relTol: FIT_REL_TOL, arde });
}

/** Row predictor for one parameter set, sharing ARDE evaluators across rows. */
function rowPredictor(model: ProcessModel): (row: CalibrationRow) => number {
  const arde = createArdeEvaluators(model, model.etch.maxAspectRatio);
  return (row) => predictRow(model, row, arde);
}

/** What data is missing for the requested fit, or null when the fit is determined. */
/**
 * Two-sided 95 % Student-t quantiles t(0.975, ν) for ν = 1…9 degrees of freedom (any statistics table, e.g. NIST/
 * SEMATECH e-Handbook of Statistical Methods, table 1.3.6.7.2). From ν = 10 on the quantile is within 15 % of the
 * normal 1.96 that the depth bands use, and no warning is given.
 */
const T975: Readonly<Record<number, number>> = { 1: 12.71, 2: 4.303, 3: 3.182, 4: 2.776, 5: 2.571, 6: 2.447, 7: 2.365, 8: 2.306, 9: 2.262 };

export function underdeterminedReason(rows: CalibrationRow[], fit: FitParameter[]): string | null {
  const n = rows.length;
  const p = fit.length;
  if (p === 0) return 'nothing to fit: choose at least one parameter';
  if (n <= p) return `need more measurements than fitted parameters (${n} rows for ${p} parameters; at least ${p + 1} rows)`;
  const widths = new Set(rows.map((r) => `${r.kind}:${r.widthUm}`));
  if (fit.includes('reactionProbability') && widths.size < 2) {
    return 'need at least two distinct widths to separate open rate from reaction probability';
  }
  if (fit.includes('loadingCoefficient')) {
    const d = rows.map((r) => r.density);
    if (Math.max(...d) - Math.min(...d) < 0.05) return 'need measurements at different local densities (spread ≥ 0.05) to fit the loading coefficient';
  }
  if (rows.every((r) => r.depthUm === 0)) return 'all measured depths are 0';
  return null;
}

function invertSymmetric(a: number[][]): number[][] | null {
  const n = a.length;
  const m = a.map((row, i) => [...row, ...Array.from({ length: n }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r]?.[c] ?? 0) > Math.abs(m[piv]?.[c] ?? 0)) piv = r;
    const pr = m[piv];
    const cr = m[c];
    if (!pr || !cr) return null;
    m[c] = pr;
    m[piv] = cr;
    const row = m[c] ?? [];
    const d = row[c] ?? 0;
    const scale = Math.max(...(a[c] ?? [1]).map(Math.abs), 1e-300);
    if (Math.abs(d) <= 1e-13 * scale) return null;
    for (let k = 0; k < 2 * n; k++) row[k] = (row[k] ?? 0) / d;
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const rr = m[r] ?? [];
      const f = rr[c] ?? 0;
      for (let k = 0; k < 2 * n; k++) rr[k] = (rr[k] ?? 0) - f * (row[k] ?? 0);
    }
  }
  return m.map((row) => row.slice(n));
}

const range = (v: number[]): [number, number] => [Math.min(...v), Math.max(...v)];

/**
 * Fit model parameters to measured rows.
 * @returns the fit, or { ok: false, message } naming the missing data when the fit is underdetermined.
 */
export function fitCalibration(rows: CalibrationRow[], options: CalibrationOptions): CalibrationFit | CalibrationRefusal {
  const fit = options.fit ?? ['openRateUmPerMin', 'reactionProbability'];
  if (new Set(fit).size !== fit.length) return { ok: false, message: 'a parameter is listed twice in fit' };
  const reason = underdeterminedReason(rows, fit);
  if (reason) return { ok: false, message: `cannot calibrate: ${reason}` };
  const base = options.baseModel;
  const start = fit.map((name) => {
    const given = options.initial?.[name];
    if (given !== undefined) return given;
    if (name === 'openRateUmPerMin') return base.openRateUmPerMin;
    if (name === 'reactionProbability') return Math.min(0.9, Math.max(0.01, base.reactionProbability));
    return Math.max(0.05, base.loading.coefficient);
  });
  // Fit in scaled units (value / start) so one finite-difference step suits every parameter.
  const scale = start.map((v) => (v > 0 ? v : 1));
  const unscale = (q: ArrayLike<number>) => fit.map((_, i) => (q[i] ?? NaN) * (scale[i] ?? 1));
  const n = rows.length;
  const p = fit.length;
  // The library's finite differences may step past a bound: clamp before evaluating.
  const clamp = (v: number[]) => v.map((x, i) => Math.min(Math.max(x, BOUNDS[fit[i] ?? 'openRateUmPerMin'][0]), BOUNDS[fit[i] ?? 'openRateUmPerMin'][1]));
  const model = (q: number[]) => {
    const predict = rowPredictor(withParameters(base, fit, clamp(unscale(q))));
    return (x: number) => {
      const row = rows[x];
      return row ? predict(row) : NaN;
    };
  };
  // The library always runs maxIterations and keeps the best point; run it in chunks and stop once a chunk no
  // longer lowers the sum of squares (relative 1e-10), to avoid thousands of wasted model evaluations.
  const data = { x: rows.map((_, i) => i), y: rows.map((r) => r.depthUm) };
  const maxIterations = options.maxIterations ?? 200;
  let q = start.map(() => 1);
  let ssrBest = Infinity;
  let iterations = 0;
  let damping = 1e-2;
  while (iterations < maxIterations) {
    const chunk = Math.min(10, maxIterations - iterations);
    const r = levenbergMarquardt(data, model, {
      initialValues: q,
      minValues: fit.map((name, i) => (BOUNDS[name][0] ?? 0) / (scale[i] ?? 1)),
      maxValues: fit.map((name, i) => (BOUNDS[name][1] ?? Infinity) / (scale[i] ?? 1)),
      damping,
      gradientDifference: 1e-5,
      centralDifference: true,
      maxIterations: chunk,
      errorTolerance: 1e-14,
    });
    iterations += chunk;
    const improved = r.parameterError < ssrBest;
    const small = Number.isFinite(ssrBest) && ssrBest - r.parameterError <= 1e-10 * ssrBest;
    if (improved) {
      q = r.parameterValues;
      ssrBest = r.parameterError;
    }
    if (small) break;
    damping = 1e-3;
  }
  const result = { parameterValues: q, iterations };
  const values = clamp(unscale(result.parameterValues));
  const best = rowPredictor(withParameters(base, fit, values));
  const predicted = rows.map((r) => best(r));
  const residuals = rows.map((r, i) => ({
    line: r.line,
    widthUm: r.widthUm,
    kind: r.kind,
    density: r.density,
    timeMin: r.timeMin,
    measuredUm: r.depthUm,
    predictedUm: predicted[i] ?? NaN,
    residualUm: r.depthUm - (predicted[i] ?? NaN),
  }));
  const ssr = residuals.reduce((s, r) => s + r.residualUm ** 2, 0);
  const mean = rows.reduce((s, r) => s + r.depthUm, 0) / n;
  const sst = rows.reduce((s, r) => s + (r.depthUm - mean) ** 2, 0);
  const dof = n - p;
  const s2 = ssr / dof;
  const warnings: string[] = [];

  // Jacobian at the optimum in natural units.
  const atBound = fit.map((name, i) => {
    const v = values[i] ?? 0;
    const [lo, hi] = BOUNDS[name];
    return v <= lo * (1 + 1e-6) || v >= hi * (1 - 1e-6);
  });
  const jac = rows.map(() => new Array<number>(p).fill(0));
  fit.forEach((name, j) => {
    const v = values[j] ?? 0;
    const step = Math.max(Math.abs(v), 1e-6) * 1e-4;
    const [lo, hi] = BOUNDS[name];
    const up = Math.min(v + step, hi);
    const down = Math.max(v - step, lo);
    const pUp = rowPredictor(withParameters(base, fit, values.map((x, k) => (k === j ? up : x))));
    const pDown = rowPredictor(withParameters(base, fit, values.map((x, k) => (k === j ? down : x))));
    rows.forEach((r, i) => {
      const row = jac[i];
      if (row) row[j] = (pUp(r) - pDown(r)) / (up - down);
    });
  });
  const jtj = fit.map((_, a) => fit.map((__, b) => jac.reduce((s, row) => s + (row[a] ?? 0) * (row[b] ?? 0), 0)));
  const inv = invertSymmetric(jtj);
  if (!inv) warnings.push('the fitted parameters are not separable with these data (singular JᵀJ): standard errors unavailable');
  const parameters: Partial<Record<FitParameter, FittedValue>> = {};
  fit.forEach((name, i) => {
    const variance = inv ? (inv[i]?.[i] ?? NaN) * s2 : NaN;
    const se = Number.isFinite(variance) && variance >= 0 ? Math.sqrt(variance) : null;
    parameters[name] = { value: values[i] ?? NaN, standardError: atBound[i] ? null : se, atBound: atBound[i] ?? false };
    if (atBound[i]) warnings.push(`${name} ended at its bound (${values[i]}): its standard error is not meaningful`);
  });

  const ranges = {
    widthUm: range(rows.map((r) => r.widthUm)),
    aspectRatio: range(rows.map((r) => r.depthUm / r.widthUm)),
    density: range(rows.map((r) => r.density)),
    kinds: [...new Set(rows.map((r) => r.kind))].sort(),
  };
  const rSquared = sst > 0 ? 1 - ssr / sst : NaN;
  const rmsResidualUm = Math.sqrt(ssr / n);
  // Parameters at a bound have no meaningful linearised error: leave them out of the covariance.
  const free = fit.map((_, i) => i).filter((i) => !atBound[i]);
  // (A bound parameter is held fixed, so the free block is inverted on its own.)
  const invFree = free.length === 0 ? null : free.length === p ? inv : invertSymmetric(free.map((a) => free.map((b) => jtj[a]?.[b] ?? 0)));
  const covariance =
    invFree && Number.isFinite(s2) && free.every((_, k) => Number.isFinite(invFree[k]?.[k] ?? NaN))
      ? { parameters: free.map((i) => fit[i] as FitParameter), matrix: free.map((_, a) => free.map((__, b) => (invFree[a]?.[b] ?? NaN) * s2)) }
      : null;
  const record = {
    date: options.date ?? new Date().toISOString().slice(0, 10),
    ...(options.source ? { source: options.source } : {}),
    widthUm: ranges.widthUm,
    aspectRatio: ranges.aspectRatio,
    density: ranges.density,
    kinds: ranges.kinds,
    pointCount: n,
    ...(Number.isFinite(rSquared) ? { rSquared } : {}),
    rmsResidualUm,
    ...(Number.isFinite(s2) ? { residualStandardErrorUm: Math.sqrt(s2) } : {}),
    ...(covariance ? { covariance } : {}),
    parameters: Object.fromEntries(Object.entries(parameters).map(([k, v]) => [k, { value: v.value, standardError: v.standardError }])),
  };
  const fittedModel = processModelSchema.parse({ ...base, ...withParameters(base, fit, values), stopLayer: base.stopLayer, mask: base.mask, calibration: record });
  const t95 = T975[dof];
  if (t95 !== undefined) {
    warnings.push(
      `only ${n} measurements for ${p} fitted parameter${p === 1 ? '' : 's'} (${dof} degree${dof === 1 ? '' : 's'} of freedom): the standard errors rest on very few points, and a 95 % interval is ${t95}× the standard error, not 1.96×; measure more structures before publishing`,
    );
  }
  if (!(rSquared > 0.9)) warnings.push(`R² = ${rSquared.toFixed(3)}: the model explains the data poorly; check the data or fit more parameters`);
  return {
    ok: true,
    parameters,
    model: fittedModel,
    residuals,
    rSquared,
    rmsResidualUm,
    residualStandardErrorUm: Math.sqrt(s2),
    covariance,
    degreesOfFreedom: dof,
    iterations: result.iterations,
    ranges,
    warnings,
  };
}
