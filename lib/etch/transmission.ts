/**
 * Transmission probability K of an etched opening: the chance that a neutral entering the top opening (uniform,
 * cosine-law directions) reaches the bottom plane, with diffuse, non-sticking walls. Aspect ratio AR = depth/width
 * (hole: depth/diameter — note tables indexed by L/R use L/R = 2·AR).
 *
 * - Hole (cylinder, Clausing's problem): Berman's closed form (J. Appl. Phys. 36, 3356, 1965 [from memory]),
 *   published max error 0.07 %; measured here against the domain.md 3.1 table: see tests/etch/transmission.test.ts.
 * - Long slot (2-D trench): shipped table of ln K from a Nyström solution of the slot integral equation
 *   (slot-transmission-solver.ts), monotone cubic interpolation in ln AR; interpolation error ≤ 5e-5 relative,
 *   AR 0.001–205. Beyond 205 the large-AR form K = (ln AR + c)/AR with c matched at the table end.
 */
import { evalTable, monotoneTable } from './interpolate';
import { SLOT_LN_K, SLOT_LN_K_DX, SLOT_LN_K_X0 } from './slot-transmission-table';

function checkAspectRatio(aspectRatio: number): void {
  if (!(aspectRatio >= 0) || !Number.isFinite(aspectRatio)) {
    throw new RangeError(`aspect ratio must be a finite number ≥ 0, got ${aspectRatio}`);
  }
}

/**
 * Berman's closed form for the Clausing factor of a cylinder of length L in units of its radius.
 * For L/R < 1e-3 the formula cancels badly; there K = 1 − L/2 + L²/4 (its series) is used.
 * @example clausingFactorBerman(2) // 0.5142 (domain.md 3.1: 0.514231)
 */
export function clausingFactorBerman(lengthOverRadius: number): number {
  const L = lengthOverRadius;
  checkAspectRatio(L);
  if (L < 1e-3) return 1 - L / 2 + (L * L) / 4;
  const q = Math.sqrt(L * L + 4);
  const num = (8 - L * L) * q + L * L * L - 16;
  const den = 72 * L * q - 288 * Math.log(L + q) + 288 * Math.LN2;
  return 1 + (L * L) / 4 - (L / 4) * q - (num * num) / den;
}

/**
 * Transmission probability of a cylindrical hole, AR = depth/diameter (so L/R = 2·AR).
 * @example holeTransmission(1) // ≈ 0.5142 (L/R = 2)
 */
export function holeTransmission(aspectRatio: number): number {
  checkAspectRatio(aspectRatio);
  return clausingFactorBerman(2 * aspectRatio);
}

const slotTable = monotoneTable(SLOT_LN_K_X0, SLOT_LN_K_DX, SLOT_LN_K);
const SLOT_AR_MIN = Math.exp(SLOT_LN_K_X0);
const SLOT_LAST = SLOT_LN_K.length - 1;
const SLOT_AR_MAX = Math.exp(SLOT_LN_K_X0 + SLOT_LAST * SLOT_LN_K_DX);
// c in K ≈ (ln AR + c)/AR, matched at the table end so the extension is continuous.
const SLOT_ASYMPTOTE_C = Math.exp(SLOT_LN_K[SLOT_LAST] ?? 0) * SLOT_AR_MAX - Math.log(SLOT_AR_MAX);

/**
 * Transmission probability of a long slot (trench much longer than wide), AR = depth/width.
 * @example slotTransmission(5) // ≈ 0.356409
 */
export function slotTransmission(aspectRatio: number): number {
  checkAspectRatio(aspectRatio);
  if (aspectRatio === 0) return 1;
  if (aspectRatio < SLOT_AR_MIN) return Math.exp(((SLOT_LN_K[0] ?? 0) * aspectRatio) / SLOT_AR_MIN);
  if (aspectRatio > SLOT_AR_MAX) return (Math.log(aspectRatio) + SLOT_ASYMPTOTE_C) / aspectRatio;
  return Math.exp(evalTable(slotTable, Math.log(aspectRatio)));
}

/** Feature kinds the etch model distinguishes: long trenches (2-D slot) and round/square holes (cylinder). */
export type FeatureKind = 'trench' | 'hole';

/** K for a feature kind: trench → slot, hole → cylinder. */
export function transmission(kind: FeatureKind, aspectRatio: number): number {
  return kind === 'hole' ? holeTransmission(aspectRatio) : slotTransmission(aspectRatio);
}
