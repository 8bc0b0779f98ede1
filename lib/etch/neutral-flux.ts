/**
 * Reactive neutral flux reaching the bottom of an opening, Coburn & Winters, Appl. Phys. Lett. 55, 2730 (1989)
 * [citation from memory]: a balance of the flux entering, the flux consumed at the bottom with reaction probability
 * S, and the unreacted flux re-emitted and escaping with the opening's transmission K gives
 *   Γ_bottom / Γ_top = K / (K + S(1 − K)).
 * Limits: S → 0 gives 1 (no lag); S = 1 gives K.
 */

/**
 * Ratio of the reactive neutral flux at the bottom to the flux on the open field, dimensionless.
 * @param transmission K in (0, 1]
 * @param reactionProbability S in [0, 1]
 * @example bottomNeutralFluxRatio(0.514231, 0.5) // 0.679197
 */
export function bottomNeutralFluxRatio(transmission: number, reactionProbability: number): number {
  const K = transmission;
  const S = reactionProbability;
  if (!(K > 0 && K <= 1)) throw new RangeError(`transmission must be in (0, 1], got ${K}`);
  if (!(S >= 0 && S <= 1)) throw new RangeError(`reaction probability must be in [0, 1], got ${S}`);
  return K / (K + S * (1 - K));
}
