/**
 * Loading: the etch rate falls as more of the etched material is exposed.
 * - Global (Mogab, J. Electrochem. Soc. 124, 1262, 1977 [form from memory]): R = R₀/(1 + Φ·A) — 1/R is linear in
 *   the etched area A. Here A is the exposed fraction of the wafer (0–1) and Φ = `globalCoefficient` is the
 *   coefficient per unit exposed fraction (Φ·A_full with A_full = whole wafer open).
 * - Local microloading: R = R_open/(1 + κ·ρ_eff), ρ_eff = effective (kernel-smoothed) pattern density (0–1) from
 *   the geometry engine; 'linear' form R_open(1 − κ·ρ_eff) for small effects.
 * Combined (domain.md 3.6): R = R₀/(1 + Φ·A + κ·ρ_eff).
 */
export type LoadingForm = 'reciprocal' | 'linear';

/**
 * Global loading factor R/R₀ = 1/(1 + Φ·A).
 * @example globalLoadingFactor(0.5, 1) // 0.666667
 */
export function globalLoadingFactor(exposedFraction: number, globalCoefficient: number): number {
  return 1 / (1 + globalCoefficient * exposedFraction);
}

/**
 * Local microloading factor R/R_open: 1/(1 + κρ) ('reciprocal', default) or 1 − κρ ('linear', floored at 0).
 * @example localLoadingFactor(0.5, 0.4) // 0.833333
 */
export function localLoadingFactor(effectiveDensity: number, coefficient: number, form: LoadingForm = 'reciprocal'): number {
  if (form === 'linear') return Math.max(0, 1 - coefficient * effectiveDensity);
  return 1 / (1 + coefficient * effectiveDensity);
}

/** Combined global + local factor. Reciprocal form adds the terms in the denominator (domain.md 3.6). */
export function loadingFactor(
  p: { coefficient: number; globalCoefficient: number; form: LoadingForm },
  effectiveDensity: number,
  exposedFraction: number,
): number {
  if (p.form === 'linear') return Math.max(0, 1 - p.coefficient * effectiveDensity - p.globalCoefficient * exposedFraction);
  return 1 / (1 + p.coefficient * effectiveDensity + p.globalCoefficient * exposedFraction);
}
