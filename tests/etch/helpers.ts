import { parseProcessModel, type ProcessModel, type ProcessModelInput } from '@/lib/etch';

/** Minimal valid model (required fields only), overridable. Invented test values. */
export function testModel(over: Partial<ProcessModelInput> = {}): ProcessModel {
  const base: ProcessModelInput = {
    openRateUmPerMin: 2,
    reactionProbability: 0.3,
    loading: { coefficient: 0, lengthUm: 1000 },
    etch: { timeMin: 10, targetDepthUm: 15, toleranceUm: 1, maxAspectRatio: 50, stopRateFraction: 0 },
    mode: 'continuous',
    ...over,
  };
  const r = parseProcessModel(base);
  if (!r.ok) throw new Error(JSON.stringify(r.issues));
  return r.model;
}
