import { describe, expect, it } from 'vitest';
import { parseProcessModel } from '@/lib/etch';
import { listBuiltinModels } from '@/lib/jobs/models';
import { paramsOf } from '@/lib/viewer/whatif';
import { changedParams, derivedModel, whatIfSaveBody } from '@/lib/viewer/whatif-save';

const origin = { analysisId: 'a-1', modelName: 'Kestrel oxide etch', modelVersion: '2' };

describe('what-if saved as a new analysis: the derived model document', () => {
  const builtins = listBuiltinModels();
  it('has built-in models to derive from', () => expect(builtins.length).toBeGreaterThan(0));
  for (const b of builtins) {
    it(`${b.id}: carries the changed values, stays a valid model, and records where it came from`, () => {
      const base = paramsOf(b.model);
      const p = { ...base, timeMin: base.timeMin * 1.25, loadingCoefficient: base.loadingCoefficient + 0.5 };
      const { model, changes } = derivedModel(b.model, p, origin);
      const parsed = parseProcessModel(model);
      expect(parsed.ok).toBe(true);
      expect(model.etch.timeMin).toBeCloseTo(base.timeMin * 1.25, 12);
      expect(model.loading.coefficient).toBeCloseTo(base.loadingCoefficient + 0.5, 12);
      // Unchanged parameters and everything else stay as they were.
      expect(model.openRateUmPerMin).toBe(b.model.openRateUmPerMin);
      expect(model.etch.targetDepthUm).toBe(b.model.etch.targetDepthUm);
      expect(model.loading.lengthUm).toBe(b.model.loading.lengthUm);
      expect(changes.map((c) => c.path).sort()).toEqual(['etch.timeMin', 'loading.coefficient']);
      expect(model.version).toBe('2+what-if');
      expect(model.description).toContain('derived from Kestrel oxide etch version 2 (analysis a-1)');
      expect(model.description).toContain('etch.timeMin');
      expect(model.description).toContain('loading.coefficient');
      expect(model.description).not.toContain('openRateUmPerMin');
    });
  }
  it('no change is refused (nothing new to run)', () => {
    const m = builtins[0]!.model;
    expect(changedParams(m, paramsOf(m))).toEqual([]);
    expect(() => derivedModel(m, paramsOf(m), origin)).toThrow(/nothing new/);
  });
  it('the request body rejects out-of-range parameters with the field named', () => {
    const ok = { timeMin: 1, openRateUmPerMin: 1, reactionProbability: 0.5, loadingCoefficient: 0 };
    expect(whatIfSaveBody.safeParse({ params: ok }).success).toBe(true);
    const bad = whatIfSaveBody.safeParse({ params: { ...ok, reactionProbability: 1.5 } });
    expect(bad.success).toBe(false);
    expect(JSON.stringify(bad.error?.issues)).toContain('reactionProbability');
    expect(whatIfSaveBody.safeParse({ params: { ...ok, timeMin: -1 } }).success).toBe(false);
  });
});
