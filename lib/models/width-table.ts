/**
 * The width-rule table of a model version for a chosen target depth: lib/etch/width-rules.ts with the target (and
 * optionally the tolerance) replaced, plus the version's identity for the exported files. Pure.
 */
import { widthRules, type ProcessModel, type WidthRules } from '@/lib/etch';

export type WidthTableRequest = { kind: 'trench' | 'hole'; targetDepthUm?: number; toleranceUm?: number; density?: number; widthsUm?: number[] };

export type WidthTableError = { field: 'targetDepthUm' | 'toleranceUm'; message: string };

/** The table, or a field error when the target and tolerance do not fit together. */
export function widthTable(model: ProcessModel, req: WidthTableRequest): WidthRules | WidthTableError {
  const target = req.targetDepthUm ?? model.etch.targetDepthUm;
  const tolerance = req.toleranceUm ?? Math.min(model.etch.toleranceUm, target / 2);
  if (!(tolerance < target)) return { field: 'toleranceUm', message: `the tolerance (${tolerance} µm) must be smaller than the target depth (${target} µm)` };
  const m: ProcessModel = { ...model, etch: { ...model.etch, targetDepthUm: target, toleranceUm: tolerance } };
  if (m.stopLayer && m.stopLayer.depthUm < target) return { field: 'targetDepthUm', message: `the target (${target} µm) lies below the stop layer at ${m.stopLayer.depthUm} µm: no opening can reach it` };
  return widthRules(m, { kind: req.kind, effectiveDensity: req.density, ...(req.widthsUm ? { widthsUm: req.widthsUm } : {}) });
}

export function isWidthTableError(x: WidthRules | WidthTableError): x is WidthTableError {
  return 'field' in x && 'message' in x && !('rows' in x);
}
