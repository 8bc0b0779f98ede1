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
