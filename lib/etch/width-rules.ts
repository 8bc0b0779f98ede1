/**
 * Width rules: for one process model, feature kind and local density, the predicted depth of a range of opening
 * widths at the recipe time, and the minimum width that reaches the target within it. Depth at fixed time grows
 * with width (less ARDE), so the minimum width is found by bisection on ln(width).
 */
import { predictFeature, ETCH_CAUTION, type FeaturePrediction } from './predict';
import { createArdeEvaluators } from './rate';
import type { ProcessModel } from './process-model';
import type { FeatureKind } from './transmission';
import { createDepthUncertainty, DEPTH_BAND_K } from './uncertainty';

export type WidthRulesOptions = {
  kind: FeatureKind;
  /** Widths to tabulate, µm; default 12 log-spaced widths from 0.5 µm to 100 µm. */
  widthsUm?: number[];
  effectiveDensity?: number;
  exposedFraction?: number;
  /** Search interval for the minimum width, µm; default [0.01, 10000]. */
  searchRangeUm?: [number, number];
};

export type WidthRuleRow = {
  widthUm: number;
  depthUm: number;
  aspectRatio: number;
  marginUm: number;
  pass: boolean;
  /** 'short' = below target − tolerance; 'deep' = timed etch deeper than target + tolerance (no stop layer). */
  status: 'pass' | 'short' | 'deep';
  timeToTargetMin: number | null;
  overEtchUm: number;
  /** Standard deviation of the predicted depth from the calibration's parameter covariance, µm; null without one. */
  depthSigmaUm: number | null;
  warnings: string[];
};

export type WidthRules = {
  modelName: string | null;
  modelVersion: string | null;
  calibrationDate: string | null;
  kind: FeatureKind;
  effectiveDensity: number | null;
  timeMin: number;
  targetDepthUm: number;
  toleranceUm: number;
  rows: WidthRuleRow[];
  /** Smallest width whose depth at the recipe time is ≥ target − tolerance; null if none in the search range. */
  minimumWidthUm: number | null;
  /** Rows carry depthSigmaUm; bands are ± this many σ. Null for a model without a calibration covariance. */
  uncertaintyBandK: number | null;
  caution: string;
};

function defaultWidths(): number[] {
  const out: number[] = [];
  for (let i = 0; i < 12; i++) out.push(Number((0.5 * Math.pow(200, i / 11)).toPrecision(3)));
  return out;
}

function rowOf(model: ProcessModel, p: FeaturePrediction, depthSigmaUm: number | null): WidthRuleRow {
  const tol = model.etch.toleranceUm;
  const short = p.depthUm < model.etch.targetDepthUm - tol;
  const deep = !model.stopLayer && p.depthUm > model.etch.targetDepthUm + tol;
  return {
    widthUm: p.widthUm,
    depthUm: p.depthUm,
    aspectRatio: p.aspectRatio,
    marginUm: p.marginUm,
    pass: !short && !deep,
    status: short ? 'short' : deep ? 'deep' : 'pass',
    timeToTargetMin: p.timeToTargetMin,
    overEtchUm: p.overEtchUm,
    depthSigmaUm,
    warnings: p.warnings,
  };
}

/** Build the width-rule table and the minimum width reaching the target. */
export function widthRules(model: ProcessModel, options: WidthRulesOptions): WidthRules {
  const widths = (options.widthsUm ?? defaultWidths()).slice().sort((a, b) => a - b);
  const arde = createArdeEvaluators(model, model.etch.maxAspectRatio);
  const at = (widthUm: number) =>
    predictFeature(model, { widthUm, kind: options.kind, effectiveDensity: options.effectiveDensity, exposedFraction: options.exposedFraction }, { arde });
  const unc = createDepthUncertainty(model);
  const rows = widths.map((w) =>
    rowOf(model, at(w), unc ? unc.sigmaUm({ widthUm: w, kind: options.kind, effectiveDensity: options.effectiveDensity, exposedFraction: options.exposedFraction }) : null),
  );
  const need = model.etch.targetDepthUm - model.etch.toleranceUm;
  const [lo0, hi0] = options.searchRangeUm ?? [0.01, 10000];
  let minimumWidthUm: number | null = null;
  if (at(hi0).depthUm >= need) {
    if (at(lo0).depthUm >= need) minimumWidthUm = lo0;
    else {
      let lo = Math.log(lo0);
      let hi = Math.log(hi0);
      for (let i = 0; i < 60 && hi - lo > 1e-9; i++) {
        const mid = 0.5 * (lo + hi);
        if (at(Math.exp(mid)).depthUm >= need) hi = mid;
        else lo = mid;
      }
      minimumWidthUm = Math.exp(hi);
    }
  }
  return {
    modelName: model.name ?? null,
    modelVersion: model.version ?? null,
    calibrationDate: model.calibration?.date ?? null,
    kind: options.kind,
    effectiveDensity: options.effectiveDensity ?? null,
    timeMin: model.etch.timeMin,
    targetDepthUm: model.etch.targetDepthUm,
    toleranceUm: model.etch.toleranceUm,
    rows,
    minimumWidthUm,
    uncertaintyBandK: unc ? DEPTH_BAND_K : null,
    caution: ETCH_CAUTION,
  };
}

const r4 = (v: number) => Number(v.toPrecision(4));
const csvCell = (v: string) => (/[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);

/** CSV export: '#' comment lines with the model, conditions and caution, then one row per width. */
export function widthRulesToCsv(rules: WidthRules): string {
  const lines = [
    `# model: ${rules.modelName ?? '(unnamed)'} version ${rules.modelVersion ?? '-'} calibrated ${rules.calibrationDate ?? 'never'}`,
    `# kind ${rules.kind}; density ${rules.effectiveDensity ?? 'not given'}; time ${rules.timeMin} min; target ${rules.targetDepthUm} ± ${rules.toleranceUm} µm`,
    `# minimum width reaching target: ${rules.minimumWidthUm === null ? 'none' : r4(rules.minimumWidthUm) + ' µm'}`,
    ...(rules.uncertaintyBandK !== null ? [`# depth_sigma_um: standard deviation of the predicted depth from the calibration's parameter covariance (not wafer scatter)`] : []),
    `# ${rules.caution}`,
    'width_um,depth_um,aspect_ratio,margin_um,status,time_to_target_min,over_etch_um,' + (rules.uncertaintyBandK !== null ? 'depth_sigma_um,' : '') + 'warnings',
  ];
  for (const r of rules.rows) {
    const sigma = rules.uncertaintyBandK !== null ? [r.depthSigmaUm === null ? '' : r4(r.depthSigmaUm)] : [];
    lines.push(
      [r4(r.widthUm), r4(r.depthUm), r4(r.aspectRatio), r4(r.marginUm), r.status, r.timeToTargetMin === null ? '' : r4(r.timeToTargetMin), r4(r.overEtchUm), ...sigma, csvCell(r.warnings.join('; '))].join(','),
    );
  }
  return lines.join('\n') + '\n';
}

/** JSON export (plain object, ready for JSON.stringify). */
export function widthRulesToJson(rules: WidthRules): WidthRules {
  return JSON.parse(JSON.stringify(rules)) as WidthRules;
}
