/**
 * The width-rule and density-limit tables of a model version for a chosen target depth: lib/etch/width-rules.ts and
 * density-limits.ts with the target (and optionally the tolerance) replaced. Pure.
 */
import { densityLimits, widthRules, type DensityLimits, type ProcessModel, type WidthRules } from '@/lib/etch';

export type WidthTableRequest = { kind: 'trench' | 'hole'; targetDepthUm?: number; toleranceUm?: number; density?: number; widthsUm?: number[] };

export type WidthTableError = { field: 'targetDepthUm' | 'toleranceUm'; message: string };

/** The model with the requested target (and tolerance), or a field error when they do not fit together. */
export function modelWithTarget(model: ProcessModel, req: { targetDepthUm?: number; toleranceUm?: number }): ProcessModel | WidthTableError {
  const target = req.targetDepthUm ?? model.etch.targetDepthUm;
  const tolerance = req.toleranceUm ?? Math.min(model.etch.toleranceUm, target / 2);
  if (!(tolerance < target)) return { field: 'toleranceUm', message: `the tolerance (${tolerance} µm) must be smaller than the target depth (${target} µm)` };
  const m: ProcessModel = { ...model, etch: { ...model.etch, targetDepthUm: target, toleranceUm: tolerance } };
  if (m.stopLayer && m.stopLayer.depthUm < target) return { field: 'targetDepthUm', message: `the target (${target} µm) lies below the stop layer at ${m.stopLayer.depthUm} µm: no opening can reach it` };
  return m;
}

/** The table, or a field error when the target and tolerance do not fit together. */
export function widthTable(model: ProcessModel, req: WidthTableRequest): WidthRules | WidthTableError {
  const m = modelWithTarget(model, req);
  if ('field' in m) return m;
  return widthRules(m, { kind: req.kind, effectiveDensity: req.density, ...(req.widthsUm ? { widthsUm: req.widthsUm } : {}) });
}

/** The density-limit table for a chosen target, or the same field errors as the width table. */
export function densityTable(model: ProcessModel, req: { kind: 'trench' | 'hole'; targetDepthUm?: number; toleranceUm?: number; widthsUm?: number[] }): DensityLimits | WidthTableError {
  const m = modelWithTarget(model, req);
  if ('field' in m) return m;
  return densityLimits(m, { kind: req.kind, ...(req.widthsUm ? { widthsUm: req.widthsUm } : {}) });
}

export function isWidthTableError<T extends object>(x: T | WidthTableError): x is WidthTableError {
  return 'field' in x && 'message' in x && !('rows' in x);
}
