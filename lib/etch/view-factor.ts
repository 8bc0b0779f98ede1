/**
 * Line-of-sight (direct) view factors from the bottom of an opening to its top opening — the isotropic (cosine-law)
 * limit of the direct flux reaching the bottom. Closed forms from the radiation view-factor tables (Incropera &
 * DeWitt, Fundamentals of Heat and Mass Transfer; Siegel & Howell, Thermal Radiation Heat Transfer).
 * AR = depth/width for a trench (two parallel strips), depth/diameter for a hole (two coaxial equal disks).
 */

/**
 * Parallel strips of equal width w at gap h (2-D): F = √(1 + (h/w)²) − h/w.
 * @example stripViewFactor(1) // 0.414214
 */
export function stripViewFactor(aspectRatio: number): number {
  return Math.sqrt(1 + aspectRatio * aspectRatio) - aspectRatio;
}

/**
 * Coaxial parallel disks of radii r₁, r₂ at gap L (general form): R_i = r_i/L, X = 1 + (1 + R₂²)/R₁²,
 * F₁₂ = ½[X − √(X² − 4(R₂/R₁)²)].
 * @example diskToDiskViewFactor(0.1, 0.2, 0.5) // 0.1339 (Siegel & Howell example)
 */
export function diskToDiskViewFactor(radius1: number, radius2: number, gap: number): number {
  const R1 = radius1 / gap;
  const R2 = radius2 / gap;
  const X = 1 + (1 + R2 * R2) / (R1 * R1);
  return 0.5 * (X - Math.sqrt(X * X - 4 * (R2 / R1) ** 2));
}

/**
 * Equal coaxial disks (hole bottom → hole opening), AR = L/(2r): S = 2 + (L/r)², F = ½[S − √(S² − 4)].
 * @example diskViewFactor(1) // 0.171573
 */
export function diskViewFactor(aspectRatio: number): number {
  const lr = 2 * aspectRatio;
  const s = 2 + lr * lr;
  // ½[S − √(S²−4)] = 2/(S + √(S²−4)): the second form avoids cancellation at large AR.
  return 2 / (s + Math.sqrt(s * s - 4));
}
