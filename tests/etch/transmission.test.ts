import { describe, expect, it } from 'vitest';
import { clausingFactorBerman, holeTransmission, slotTransmission } from '@/lib/etch';
import { solveSlotTransmission } from '@/lib/etch/slot-transmission-solver';
import { SLOT_INTERPOLATION_MAX_ERROR } from '@/lib/etch/slot-transmission-table';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

// domain.md 3.1, Clausing cylinder, indexed by L/R. [C] computed by two independent numerical methods that agree
// (integral equation + Monte Carlo).
const HOLE_TABLE: [number, number][] = [
  [0.1, 0.952399], [0.2, 0.909215], [0.5, 0.801271], [1, 0.671984], [2, 0.514231], [4, 0.356573],
  [5, 0.310525], [10, 0.190942], [20, 0.109321], [50, 0.0484765], [100, 0.0252764],
];
// domain.md 3.2, long 2-D slot, indexed by h/w. [C] integral equation + Monte Carlo.
const SLOT_TABLE: [number, number][] = [
  [0.5, 0.804724], [1, 0.684381], [2, 0.542058], [5, 0.356409], [10, 0.240557], [20, 0.153888], [50, 0.08003],
];

describe('holeTransmission(AR)', () => {
  for (const [lr, k] of HOLE_TABLE) {
    it(`matches the Clausing table at L/R = ${lr} (AR = ${lr / 2}) within 0.5 %`, () => {
      // [C] domain.md 3.1 table; AR = depth/diameter, so L/R = 2·AR (the table-index trap).
      expect(rel(holeTransmission(lr / 2), k)).toBeLessThan(0.005);
    });
  }
  it('measured max error of Berman’s form over the table is below its published 0.07 %', () => {
    // Berman, J. Appl. Phys. 36, 3356 (1965) [from memory]: max error 0.07 % for L/R 0.01–400 (domain.md 3.1).
    const max = Math.max(...HOLE_TABLE.map(([lr, k]) => rel(clausingFactorBerman(lr), k)));
    expect(max).toBeLessThan(0.0007);
  });
  it('is not indexed by L/R = AR (the table-index trap would be > 10 % off at AR 1)', () => {
    // [C] domain.md 3.1: at L/R = 2, K = 0.514231; at L/R = 1, K = 0.671984.
    expect(rel(holeTransmission(1), 0.514231)).toBeLessThan(0.005);
    expect(rel(holeTransmission(1), 0.671984)).toBeGreaterThan(0.1);
  });
  it('is 1 at AR 0, decreasing, and continuous at the small-L series switch', () => {
    // Limits: no tube transmits everything (definition of K); common practice, no source for the switch point.
    expect(holeTransmission(0)).toBe(1);
    expect(rel(clausingFactorBerman(0.000999), clausingFactorBerman(0.001001))).toBeLessThan(1e-5);
    let prev = 1;
    for (let ar = 0.01; ar <= 200; ar *= 1.3) {
      const k = holeTransmission(ar);
      expect(k).toBeLessThan(prev);
      prev = k;
    }
  });
  it('rejects a negative aspect ratio', () => {
    expect(() => holeTransmission(-1)).toThrow(/aspect ratio/);
  });
});

describe('slotTransmission(AR)', () => {
  for (const [ar, k] of SLOT_TABLE) {
    it(`matches the slot table at h/w = ${ar} within 0.5 %`, () => {
      // [C] domain.md 3.2 table (integral equation + Monte Carlo).
      expect(rel(slotTransmission(ar), k)).toBeLessThan(0.005);
    });
  }
  it('measured max error over the table is below 1e-5 (shipped Nyström table)', () => {
    // [C] domain.md 3.2 values are given to 6 digits; our table reproduces them to rounding.
    const max = Math.max(...SLOT_TABLE.map(([ar, k]) => rel(slotTransmission(ar), k)));
    expect(max).toBeLessThan(1e-5);
  });
  it('the shipped table agrees with a fresh Nyström solve at off-grid points (interpolation error)', () => {
    // Internal consistency of tabulation; the solver itself is checked against the [C] table just below.
    for (const ar of [0.05, 0.37, 3.3, 17, 77, 100]) {
      expect(rel(slotTransmission(ar), solveSlotTransmission(ar))).toBeLessThan(Math.max(SLOT_INTERPOLATION_MAX_ERROR * 1.5, 1e-6));
    }
  });
  it('the Nyström solver reproduces the slot table to 2e-6 (independent of the shipped table)', () => {
    // [C] domain.md 3.2.
    for (const [ar, k] of SLOT_TABLE.filter(([a]) => a <= 20)) expect(rel(solveSlotTransmission(ar), k)).toBeLessThan(2e-6);
  });
  it('follows (w/h)[ln(h/w) + 0.1] within 0.6 % for 10 ≤ h/w ≤ 200, and the extension past the table is continuous', () => {
    // domain.md 3.2 [C]: large-h/w form within 0.6 % for 10 ≤ h/w ≤ 200.
    for (const ar of [10, 20, 50, 100, 200]) expect(rel(slotTransmission(ar), (Math.log(ar) + 0.1) / ar)).toBeLessThan(0.006);
    expect(rel(slotTransmission(205.3), slotTransmission(205.5))).toBeLessThan(2e-3);
    expect(slotTransmission(1000)).toBeGreaterThan(0);
    expect(slotTransmission(1000)).toBeLessThan(slotTransmission(500));
  });
  it('is 1 at AR 0, decreasing, and above the hole of the same AR (trenches etch faster than holes)', () => {
    // Kiihamäki & Franssila, JVST A 17, 2280 (1999) [P, qualitative]: long trenches etch faster than holes of the same width.
    expect(slotTransmission(0)).toBe(1);
    let prev = 1;
    for (let ar = 1e-4; ar <= 500; ar *= 1.25) {
      const k = slotTransmission(ar);
      expect(k).toBeLessThan(prev);
      expect(k).toBeGreaterThan(holeTransmission(ar));
      prev = k;
    }
  });
  it('is not the hole formula (no 1/AR law for slots)', () => {
    // domain.md 3.2 [C]: hole formulas are a poor stand-in for trenches.
    expect(rel(holeTransmission(5), 0.356409)).toBeGreaterThan(0.3);
  });
});
