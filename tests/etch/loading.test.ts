import { describe, expect, it } from 'vitest';
import { globalLoadingFactor, loadingFactor, localLoadingFactor } from '@/lib/etch';

describe('globalLoadingFactor — Mogab form', () => {
  // domain.md 3.6: Mogab, J. Electrochem. Soc. 124, 1262 (1977) [symbols from memory]; with Φ·A_full = 1,
  // R/R₀ = 1, 0.909091, 0.8, 0.666667, 0.5 at A/A_full = 0, 0.1, 0.25, 0.5, 1.
  const rows: [number, number][] = [[0, 1], [0.1, 0.909091], [0.25, 0.8], [0.5, 0.666667], [1, 0.5]];
  for (const [a, v] of rows) it(`A/A_full = ${a} → ${v}`, () => expect(globalLoadingFactor(a, 1)).toBeCloseTo(v, 6));
  it('1/R is linear in exposed area', () => {
    // Mogab form [from memory]: 1/R = (1 + Φ·A)/R₀.
    const inv = [0, 0.2, 0.4, 0.6].map((a) => 1 / globalLoadingFactor(a, 0.7));
    const d = inv.slice(1).map((v, i) => v - (inv[i] ?? NaN));
    for (const x of d) expect(x).toBeCloseTo(0.14, 12);
  });
});

describe('localLoadingFactor and the combined form', () => {
  it('reciprocal local form R_open/(1 + κρ) and the combined 1/(1 + Φ·A + κρ)', () => {
    // domain.md 3.6 [M form]: R = R₀/(1 + Φ_g·A + Φ_l·ρ_eff).
    expect(localLoadingFactor(0.5, 0.4)).toBeCloseTo(1 / 1.2, 12);
    expect(loadingFactor({ coefficient: 0.4, globalCoefficient: 1, form: 'reciprocal' }, 0.5, 0.25)).toBeCloseTo(1 / 1.45, 12);
    expect(localLoadingFactor(0.7, 0)).toBe(1);
  });
  it('linear form R₀(1 − αρ) agrees with the reciprocal form to first order', () => {
    // domain.md 3.6: "or linearised R₀[1 − α·ρ_eff]".
    expect(localLoadingFactor(0.01, 0.3, 'linear')).toBeCloseTo(localLoadingFactor(0.01, 0.3), 4);
    expect(localLoadingFactor(0.5, 0.3, 'linear')).toBeCloseTo(0.85, 12);
  });
});
