/**
 * Local etch rate at the bottom of an opening, and the ARDE factor R(AR)/R(0).
 *
 * Neutral-transport-limited (no `ion` block): R/R_open = Γ_bottom/Γ_top = K/(K + S(1 − K)) (Coburn & Winters).
 * Ion-enhanced (with `ion`): the series ("rate-limiting supply") form reviewed in Gottscho, Jurgensen & Vitkavage,
 * JVST B 10, 2133 (1992) [citation and form from memory]:
 *   R = 1 / (1/(k_n Γ_n) + 1/(k_i Γ_i)).
 * Normalised to the open field with r = k_n Γ_n,top / (k_i Γ_i,top) (`neutralToIonSupplyRatio`):
 *   R/R_open = (1 + r) / (1/Φ_n + r/Φ_i),  Φ_n = neutral ratio, Φ_i = direct ion ratio (ion-flux.ts).
 * r → 0 gives Φ_n (neutral-limited), r → ∞ gives Φ_i (ion-limited).
 */
import { bottomNeutralFluxRatio } from './neutral-flux';
import { ionFluxRatio, type IonAngularDistribution } from './ion-flux';
import { transmission, type FeatureKind } from './transmission';
import { evalTable, monotoneTable } from './interpolate';
import type { ProcessModel } from './process-model';

/** The subset of a process model that sets the ARDE factor (lets calibration vary parameters cheaply). */
export type ArdeParameters = Pick<ProcessModel, 'reactionProbability' | 'ion'>;

/** Ion-enhanced combination of normalised neutral and ion ratios (see module doc). */
export function ionEnhancedRatio(neutralRatio: number, ionRatio: number, neutralToIonSupplyRatio: number): number {
  const r = neutralToIonSupplyRatio;
  if (neutralRatio <= 0 || ionRatio <= 0) return 0;
  return (1 + r) / (1 / neutralRatio + r / ionRatio);
}

/**
 * ARDE factor R(AR)/R(0) for a feature kind at aspect ratio AR (depth/width; hole: depth/diameter), excluding loading.
 * @example ardeFactor({ reactionProbability: 1 }, 'hole', 1) // 0.514231 (= K at L/R = 2)
 */
export function ardeFactor(p: ArdeParameters, kind: FeatureKind, aspectRatio: number): number {
  const neutral = bottomNeutralFluxRatio(transmission(kind, aspectRatio), p.reactionProbability);
  if (!p.ion) return neutral;
  const dist: IonAngularDistribution = { kind: 'gaussian', sigmaRad: (p.ion.angularSigmaDeg * Math.PI) / 180 };
  const ion = ionFluxRatio(kind, aspectRatio, dist, p.ion.fluxSite);
  return ionEnhancedRatio(neutral, ion, p.ion.neutralToIonSupplyRatio);
}

/** R(AR)/R(0) as a function of aspect ratio for one feature kind (loading excluded). */
export type ArdeEvaluator = (aspectRatio: number) => number;

/**
 * Build ARDE evaluators for both kinds. With `ion.fluxSite = 'bottom-mean'` the bottom-averaged ion fraction is a
 * 1-D/2-D quadrature per call, so it is tabulated once here (10 points per decade of AR from 1e-3 to
 * `maxAspectRatio`, monotone cubic in ln AR; below 1e-3 the fraction is taken as 1) — measured error < 1e-3 in
 * tests/etch/depth.test.ts. Otherwise the evaluators call ardeFactor directly. Build once per model and reuse
 * across features (widthRules and the analysis pipeline do).
 */
export function createArdeEvaluators(p: ArdeParameters, maxAspectRatio: number): Record<FeatureKind, ArdeEvaluator> {
  const ion = p.ion;
  if (!ion || ion.fluxSite !== 'bottom-mean') {
    return { trench: (ar) => ardeFactor(p, 'trench', ar), hole: (ar) => ardeFactor(p, 'hole', ar) };
  }
  const dist: IonAngularDistribution = { kind: 'gaussian', sigmaRad: (ion.angularSigmaDeg * Math.PI) / 180 };
  const x0 = Math.log(1e-3);
  const x1 = Math.log(Math.max(maxAspectRatio * 1.05, 2e-3));
  const perDecade = 10;
  const count = Math.max(3, Math.ceil(((x1 - x0) / Math.LN10) * perDecade) + 1);
  const dx = (x1 - x0) / (count - 1);
  const build = (kind: FeatureKind): ArdeEvaluator => {
    const lnIon: number[] = [];
    for (let i = 0; i < count; i++) lnIon.push(Math.log(Math.max(1e-300, ionFluxRatio(kind, Math.exp(x0 + i * dx), dist, 'bottom-mean'))));
    const table = monotoneTable(x0, dx, lnIon);
    return (ar) => {
      const neutral = bottomNeutralFluxRatio(transmission(kind, ar), p.reactionProbability);
      const lnAr = Math.log(ar);
      const ionRatio = ar <= 1e-3 ? 1 : Math.exp(evalTable(table, Math.min(lnAr, x1)));
      return ionEnhancedRatio(neutral, ionRatio, ion.neutralToIonSupplyRatio);
    };
  };
  let trench: ArdeEvaluator | undefined;
  let hole: ArdeEvaluator | undefined;
  // Built lazily: a layout with only trenches never pays for the hole table.
  return {
    trench: (ar) => (trench ??= build('trench'))(ar),
    hole: (ar) => (hole ??= build('hole'))(ar),
  };
}
