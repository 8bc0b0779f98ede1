import { describe, expect, it } from 'vitest';
import { predictFeature, runCycles, scallopDepthUm } from '@/lib/etch';
import { testModel } from './helpers';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('cyclic mode', () => {
  it('many small cycles converge to the continuous model (depth and time to target)', () => {
    // Consistency: h_{k+1} = h_k + d(h_k) is explicit Euler on dh/dt = R(h); error ∝ cycle length.
    const cont = testModel({ reactionProbability: 0.2 });
    const c = predictFeature(cont, { widthUm: 2, kind: 'trench' });
    const errs = [4, 0.4, 0.04].map((cycleS) => {
      const cyc = testModel({ reactionProbability: 0.2, mode: 'cyclic', cyclic: { etchStepS: cycleS * 0.75, passivationStepS: cycleS * 0.25 } });
      const p = predictFeature(cyc, { widthUm: 2, kind: 'trench' });
      return { depth: rel(p.depthUm, c.depthUm), time: rel(p.timeToTargetMin ?? NaN, c.timeToTargetMin ?? NaN) };
    });
    expect(errs[2]?.depth).toBeLessThan(2e-4);
    expect(errs[2]?.time).toBeLessThan(2e-4);
    // First-order convergence: ten times shorter cycles, about ten times smaller error.
    expect((errs[0]?.depth ?? 0) / (errs[1]?.depth ?? 1)).toBeGreaterThan(5);
  });
  it('constant per-cycle depth: cycles to target = ceil(target/d), crossing time inside the etch step', () => {
    // Exact arithmetic: d = 0.4 µm, target 2.2 µm → 6 cycles; crossing at 5 cycles + passivation + 0.5·etch.
    const r = runCycles(() => 0.4, { etchStepS: 6, passivationStepS: 4 }, { timeMin: 2, targetDepthUm: 2.2, limitDepthUm: 100, minPerCycleUm: 0 });
    expect(r.cyclesToTarget).toBe(6);
    expect(r.timeToTargetMin).toBeCloseTo((5 * 10 + 4 + 3) / 60, 12);
    expect(r.cyclesInRecipe).toBe(12);
    expect(r.depthUm).toBeCloseTo(4.8, 12);
    expect(r.firstCycleDepthUm).toBeCloseTo(0.4, 12);
  });
  it('a partial last cycle etches only after its passivation step', () => {
    // 12 full cycles (120 s) + 6 s: 4 s passivation, then 2 of 6 s etch → +1/3 of a cycle's depth.
    const r = runCycles(() => 0.3, { etchStepS: 6, passivationStepS: 4 }, { timeMin: 126 / 60, targetDepthUm: 1, limitDepthUm: 100, minPerCycleUm: 0 });
    expect(r.depthUm).toBeCloseTo(12 * 0.3 + 0.1, 12);
  });
  it('scallop estimate: isotropic arc gives (1 − √3/2)·d; shallower undercut gives a smaller scallop', () => {
    // Sagitta of a circular arc of radius ℓ over chord d (geometry, exact); the model itself is an estimate.
    expect(scallopDepthUm(1, 1)).toBeCloseTo(1 - Math.sqrt(3) / 2, 12);
    expect(scallopDepthUm(1, 0.5)).toBeCloseTo(0.5, 12);
    expect(scallopDepthUm(1, 0.3)).toBeCloseTo(0.3, 12);
    expect(scallopDepthUm(1, 2)).toBeLessThan(scallopDepthUm(1, 1));
  });
  it('predictFeature in cyclic mode reports cycles and shrinking scallops with depth (ARDE shrinks the per-cycle depth)', () => {
    const m = testModel({ mode: 'cyclic', cyclic: { etchStepS: 5, passivationStepS: 2 } });
    const p = predictFeature(m, { widthUm: 1.5, kind: 'hole' });
    expect(p.cyclic).not.toBeNull();
    expect(p.cyclic?.cyclesInRecipe).toBe(Math.floor(600 / 7));
    expect(p.cyclic?.firstCycleDepthUm).toBeCloseTo((2 * 7) / 60, 12);
    expect(p.cyclic?.lastCycleDepthUm ?? 1).toBeLessThan(p.cyclic?.firstCycleDepthUm ?? 0);
    expect(p.cyclic?.scallopBottomUm ?? 1).toBeLessThan(p.cyclic?.scallopTopUm ?? 0);
  });
});
