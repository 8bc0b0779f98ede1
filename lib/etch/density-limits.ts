/**
 * Density limits: for one process model, feature kind and a range of opening widths, the band of local effective
 * density ρ_eff in which an opening still ends within target ± tolerance at the recipe time, and the depth over a
 * grid of densities (a width × density process window).
 *
 * Loading only slows the etch (R = R_open · ARDE(AR) · L(ρ) with L falling in ρ, lib/etch/loading.ts), and a slower
 * rate can only give a shallower depth at the same time, so depth at fixed time falls with density: the upper limit
 * is found by bisection on ρ, and so is the lower one of a timed etch without a stop layer (openings in sparse areas
 * overshoot). With a stop layer there is no lower limit (the stop catches fast openings; over-etch is reported by the
 * width rules and the analysis).
 */
import { predictFeature, ETCH_CAUTION } from './predict';
import { createArdeEvaluators } from './rate';
import type { ProcessModel } from './process-model';
import type { FeatureKind } from './transmission';

export type DensityLimitsOptions = {
  kind: FeatureKind;
  /** Widths, µm; default 8 log-spaced widths from 1 µm to 100 µm. */
  widthsUm?: number[];
  /** Densities of the depth grid, 0..1; default 0, 0.1, …, 1. */
  densities?: number[];
  /** Exposed fraction of the wafer (global loading); default 0. */
  exposedFraction?: number;
};

export type DensityLimitRow = {
  widthUm: number;
  /** Predicted depth at each density of `densities`, µm. */
  depthsUm: number[];
  /** Largest ρ_eff in [0, 1] at which the depth is ≥ target − tolerance; null when even ρ = 0 is short. */
  maxDensity: number | null;
  /** Smallest ρ_eff in [0, 1] at which the depth is ≤ target + tolerance (timed etch without stop layer), 0 when
   * no density overshoots; null when even ρ = 1 overshoots. Always 0 with a stop layer. */
  minDensity: number | null;
};

export type DensityLimits = {
  modelName: string | null;
  modelVersion: string | null;
  calibrationDate: string | null;
  kind: FeatureKind;
  timeMin: number;
  targetDepthUm: number;
  toleranceUm: number;
  exposedFraction: number;
  /** The calibrated density range of the model, when it has one: limits outside it are extrapolated. */
  calibratedDensity: [number, number] | null;
  densities: number[];
  rows: DensityLimitRow[];
  caution: string;
};

function defaultWidths(): number[] {
  const out: number[] = [];
  for (let i = 0; i < 8; i++) out.push(Number(Math.pow(100, i / 7).toPrecision(3)));
  return out;
}

const defaultDensities = () => Array.from({ length: 11 }, (_, i) => i / 10);

/**
 * Bisection for the boundary of a predicate that holds on [0, ρ*] (`holdsLow`) or on [ρ*, 1] (not `holdsLow`);
 * 50 halvings bring the bracket below 1e-15.
 */
function boundary(holds: (rho: number) => boolean, holdsLow: boolean): number {
  let lo = 0;
  let hi = 1;
  for (let i = 0; i < 50; i++) {
    const mid = 0.5 * (lo + hi);
    if (holds(mid) === holdsLow) lo = mid;
    else hi = mid;
  }
  return holdsLow ? lo : hi;
}

/** The density band and depth grid per width. */
export function densityLimits(model: ProcessModel, options: DensityLimitsOptions): DensityLimits {
  const widths = (options.widthsUm ?? defaultWidths()).slice().sort((a, b) => a - b);
  const densities = (options.densities ?? defaultDensities()).slice().sort((a, b) => a - b);
  const exposedFraction = options.exposedFraction ?? 0;
  const arde = createArdeEvaluators(model, model.etch.maxAspectRatio);
  const { targetDepthUm, toleranceUm } = model.etch;
  const need = targetDepthUm - toleranceUm;
  const ceiling = targetDepthUm + toleranceUm;
  const rows = widths.map((widthUm): DensityLimitRow => {
    const depth = (rho: number) => predictFeature(model, { widthUm, kind: options.kind, effectiveDensity: rho, exposedFraction }, { arde }).depthUm;
    const deepEnough = (rho: number) => depth(rho) >= need;
    const notTooDeep = (rho: number) => depth(rho) <= ceiling;
    const maxDensity = !deepEnough(0) ? null : deepEnough(1) ? 1 : boundary(deepEnough, true);
    const minDensity = model.stopLayer || notTooDeep(0) ? 0 : !notTooDeep(1) ? null : boundary(notTooDeep, false);
    return { widthUm, depthsUm: densities.map(depth), maxDensity, minDensity };
  });
  return {
    modelName: model.name ?? null,
    modelVersion: model.version ?? null,
    calibrationDate: model.calibration?.date ?? null,
    kind: options.kind,
    timeMin: model.etch.timeMin,
    targetDepthUm,
    toleranceUm,
    exposedFraction,
    calibratedDensity: model.calibration ? [model.calibration.density[0], model.calibration.density[1]] : null,
    densities,
    rows,
    caution:
      `${ETCH_CAUTION} Limits are on the kernel-weighted effective density around an opening, not on a rule window's density; check them against the fab's loading data before writing them into a rule deck.` +
      (model.loading.globalCoefficient > 0 && exposedFraction === 0 ? ' Global (wafer-level) loading is left out here (exposed fraction 0): a more open wafer etches slower and narrows every band.' : ''),
  };
}

const r4 = (v: number) => Number(v.toPrecision(4));

/** CSV export: '#' comment lines with the model, conditions and caution, then one row per width. */
export function densityLimitsToCsv(limits: DensityLimits): string {
  const lines = [
    `# model: ${limits.modelName ?? '(unnamed)'} version ${limits.modelVersion ?? '-'} calibrated ${limits.calibrationDate ?? 'never'}`,
    `# kind ${limits.kind}; time ${limits.timeMin} min; target ${limits.targetDepthUm} ± ${limits.toleranceUm} µm; exposed fraction ${limits.exposedFraction}`,
    `# min_density / max_density: effective density band in which the depth stays within target ± tolerance (empty: none in 0–1)`,
    `# ${limits.caution}`,
    ['width_um', 'min_density', 'max_density', ...limits.densities.map((d) => `depth_um_at_${r4(d)}`)].join(','),
  ];
  const cell = (v: number | null) => (v === null ? '' : String(r4(v)));
  for (const r of limits.rows) lines.push([r4(r.widthUm), cell(r.minDensity), cell(r.maxDensity), ...r.depthsUm.map(cell)].join(','));
  return lines.join('\n') + '\n';
}
