import { describe, expect, it } from 'vitest';
import {
  bottomNeutralFluxRatio,
  diskToDiskViewFactor,
  diskViewFactor,
  holeIonCentreFraction,
  holeIonMeanFraction,
  ionEnhancedRatio,
  stripViewFactor,
  trenchIonCentreFraction,
  trenchIonMeanFraction,
  holeTransmission,
  slotTransmission,
} from '@/lib/etch';

const rel = (a: number, b: number) => Math.abs(a / b - 1);
const deg = (d: number) => ({ kind: 'gaussian' as const, sigmaRad: (d * Math.PI) / 180 });

describe('bottomNeutralFluxRatio(K, S) — Coburn & Winters', () => {
  // domain.md 3.3: Coburn & Winters, Appl. Phys. Lett. 55, 2730 (1989) [citation from memory]; K values [C];
  // the formula values are exact arithmetic on K.
  const rows: { name: string; K: number; ar: number; kind: 'hole' | 'trench'; v: [number, number, number, number] }[] = [
    { name: 'hole L/R=2', K: 0.514231, ar: 1, kind: 'hole', v: [0.514231, 0.679197, 0.913688, 0.990642] },
    { name: 'hole L/R=10', K: 0.190942, ar: 5, kind: 'hole', v: [0.190942, 0.320658, 0.702386, 0.959351] },
    { name: 'hole L/R=20', K: 0.109321, ar: 10, kind: 'hole', v: [0.109321, 0.197095, 0.551043, 0.924664] },
    { name: 'slot h/w=5', K: 0.356409, ar: 5, kind: 'trench', v: [0.356409, 0.525519, 0.847044, 0.982263] },
    { name: 'slot h/w=10', K: 0.240557, ar: 10, kind: 'trench', v: [0.240557, 0.387821, 0.760051, 0.969396] },
  ];
  const S = [1, 0.5, 0.1, 0.01];
  for (const r of rows) {
    it(`${r.name}: table values at S = 1, 0.5, 0.1, 0.01 (from the tabulated K, 1e-5; from our K, 0.5 %)`, () => {
      const ourK = r.kind === 'hole' ? holeTransmission(r.ar) : slotTransmission(r.ar);
      S.forEach((s, i) => {
        expect(rel(bottomNeutralFluxRatio(r.K, s), r.v[i] ?? NaN)).toBeLessThan(1e-5); // domain.md 3.3 [C]
        expect(rel(bottomNeutralFluxRatio(ourK, s), r.v[i] ?? NaN)).toBeLessThan(0.005); // domain.md 3.3 [C]
      });
    });
  }
  it('limits: S → 0 gives 1 (no lag), S = 1 gives K', () => {
    // domain.md 3.3 limits of the Coburn–Winters form [citation from memory].
    for (const K of [0.9, 0.3, 0.02]) {
      expect(bottomNeutralFluxRatio(K, 1e-12)).toBeCloseTo(1, 10);
      expect(bottomNeutralFluxRatio(K, 1)).toBeCloseTo(K, 14);
    }
  });
  it('rejects K or S out of range', () => {
    expect(() => bottomNeutralFluxRatio(0, 0.5)).toThrow(/transmission/);
    expect(() => bottomNeutralFluxRatio(0.5, 1.5)).toThrow(/reaction probability/);
  });
});

describe('view factors — isotropic limit of the direct flux', () => {
  // Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, view-factor tables; Siegel & Howell [P] (domain.md 3.4).
  const ARS = [0.5, 1, 2, 5, 10, 40];
  const STRIP = [0.618034, 0.414214, 0.236068, 0.0990195, 0.0498756, 0.012498];
  const DISK = [0.381966, 0.171573, 0.0557281, 0.00980486, 0.00248758, 0.000156201];
  ARS.forEach((ar, i) => {
    it(`AR ${ar}: strip ${STRIP[i]}, disk ${DISK[i]}`, () => {
      expect(rel(stripViewFactor(ar), STRIP[i] ?? NaN)).toBeLessThan(1e-5); // [P] Incropera & DeWitt parallel strips
      expect(rel(diskViewFactor(ar), DISK[i] ?? NaN)).toBeLessThan(1e-5); // [P] Incropera & DeWitt coaxial disks
    });
    it(`AR ${ar}: bottom-averaged direct flux of a cosine-law source equals the view factor (quadrature vs closed form)`, () => {
      // [P] domain.md 3.4: line-of-sight fraction averaged over the bottom = view factor bottom → opening.
      expect(rel(trenchIonMeanFraction(ar, { kind: 'cosine' }), STRIP[i] ?? NaN)).toBeLessThan(1e-4);
      expect(rel(holeIonMeanFraction(ar, { kind: 'cosine' }), DISK[i] ?? NaN)).toBeLessThan(1e-4);
    });
  });
  it('Siegel & Howell unequal-disk example: r1 = 0.1, r2 = 0.2, gap 0.5 → F = 0.1339', () => {
    // [P] Siegel & Howell, Thermal Radiation Heat Transfer, worked example (domain.md 3.4).
    expect(diskToDiskViewFactor(0.1, 0.2, 0.5)).toBeCloseTo(0.1339, 4);
  });
  it('the general unequal-disk form reduces to the equal-disk form', () => {
    // [P] same handbook formulas; algebraic identity.
    for (const ar of [0.3, 3, 30]) expect(rel(diskToDiskViewFactor(1, 1, 2 * ar), diskViewFactor(ar))).toBeLessThan(1e-9);
  });
});

describe('ion direct flux at the bottom centre — Gaussian projected-angle σ', () => {
  // domain.md 3.5 check values: geometry, checked there by quadrature and Monte Carlo [C].
  const T2: [number, number][] = [[5, 0.9957], [10, 0.84763], [20, 0.52604], [40, 0.27972]];
  const T5: [number, number][] = [[2, 0.995], [5, 0.7466], [10, 0.433], [20, 0.22544], [40, 0.11389]];
  const H2: [number, number][] = [[5, 0.98323], [10, 0.64151], [20, 0.2264]];
  for (const [ar, v] of T2) it(`trench σ = 2°, h/w ${ar} → ${v}`, () => expect(trenchIonCentreFraction(ar, deg(2))).toBeCloseTo(v, 4)); // [C] domain.md 3.5
  for (const [ar, v] of T5) it(`trench σ = 5°, h/w ${ar} → ${v}`, () => expect(trenchIonCentreFraction(ar, deg(5))).toBeCloseTo(v, 4)); // [C] domain.md 3.5
  for (const [ar, v] of H2) {
    it(`hole cosⁿ with n = 1/σ² (σ = 2°, n ≈ 821), h/D ${ar} → ${v}`, () => {
      // [C] domain.md 3.5 (its "n = 821" is 1/σ² = 820.7 rounded; the values use the unrounded n).
      expect(holeIonCentreFraction(ar, deg(2))).toBeCloseTo(v, 4);
    });
  }
  it('isotropic hole centre value is the point-to-disk view factor sin²θa = 1/(1 + 4AR²)', () => {
    // [P] Incropera & DeWitt: differential area to coaxial parallel disk, F = r²/(r² + L²).
    for (const ar of [0.5, 2, 10]) expect(holeIonCentreFraction(ar, { kind: 'cosine' })).toBeCloseTo(1 / (1 + 4 * ar * ar), 12);
  });
  it('bottom mean ≤ centre value for a narrow distribution, and → 1 as AR → 0', () => {
    // Geometry: edges of the bottom see less of the opening than the centre. Common practice, no source.
    for (const ar of [1, 5, 20]) {
      expect(trenchIonMeanFraction(ar, deg(3))).toBeLessThanOrEqual(trenchIonCentreFraction(ar, deg(3)) + 1e-12);
      expect(holeIonMeanFraction(ar, deg(3))).toBeLessThanOrEqual(holeIonCentreFraction(ar, deg(3)) + 1e-12);
    }
    expect(trenchIonCentreFraction(0, deg(3))).toBe(1);
    expect(trenchIonMeanFraction(1e-3, deg(3))).toBeGreaterThan(0.99);
  });
});

describe('ionEnhancedRatio — series (rate-limiting supply) synergy form', () => {
  // Form reviewed by Gottscho, Jurgensen & Vitkavage, JVST B 10, 2133 (1992) [citation and form from memory].
  it('r → 0 gives the neutral ratio, r → ∞ the ion ratio, and 1 at the open field', () => {
    expect(ionEnhancedRatio(0.4, 0.7, 0)).toBeCloseTo(0.4, 12);
    expect(ionEnhancedRatio(0.4, 0.7, 1e12)).toBeCloseTo(0.7, 9);
    expect(ionEnhancedRatio(1, 1, 3)).toBeCloseTo(1, 12);
  });
  it('equals 1/(1/(a·Φn) + 1/(b·Φi)) normalised by its open value', () => {
    const a = 2.5;
    const b = 4;
    const raw = (pn: number, pi: number) => 1 / (1 / (a * pn) + 1 / (b * pi));
    expect(ionEnhancedRatio(0.3, 0.6, a / b)).toBeCloseTo(raw(0.3, 0.6) / raw(1, 1), 12);
  });
});
