import { describe, expect, it } from 'vitest';
import { predictFeature, widthRules, widthRulesToCsv, widthRulesToJson } from '@/lib/etch';
import { testModel } from './helpers';

describe('widthRules', () => {
  const model = testModel({ name: 'rules test', version: 'r1', reactionProbability: 0.25 });
  const rules = widthRules(model, { kind: 'trench', widthsUm: [8, 0.5, 1, 2, 4, 16], effectiveDensity: 0.2 });

  it('tabulates each width (sorted) with the same numbers as predictFeature', () => {
    expect(rules.rows.map((r) => r.widthUm)).toEqual([0.5, 1, 2, 4, 8, 16]);
    for (const r of rules.rows) {
      const p = predictFeature(model, { widthUm: r.widthUm, kind: 'trench', effectiveDensity: 0.2 });
      expect(r.depthUm).toBe(p.depthUm);
      expect(r.aspectRatio).toBe(p.aspectRatio);
      expect(r.marginUm).toBe(p.marginUm);
      expect(r.pass).toBe(r.status === 'pass');
    }
  });
  it('depth grows with width (ARDE), so pass/fail switches once from short', () => {
    const d = rules.rows.map((r) => r.depthUm);
    for (let i = 1; i < d.length; i++) expect(d[i]).toBeGreaterThan(d[i - 1] ?? Infinity);
    expect(rules.rows[0]?.status).toBe('short');
  });
  it('the minimum width reaches exactly target − tolerance at the recipe time', () => {
    expect(rules.minimumWidthUm).not.toBeNull();
    const w = rules.minimumWidthUm ?? NaN;
    expect(predictFeature(model, { widthUm: w, kind: 'trench', effectiveDensity: 0.2 }).depthUm).toBeCloseTo(model.etch.targetDepthUm - model.etch.toleranceUm, 6);
    expect(predictFeature(model, { widthUm: w * 0.99, kind: 'trench', effectiveDensity: 0.2 }).reachesTarget).toBe(false);
  });
  it('minimum width is null when no width reaches the target in time', () => {
    const slow = testModel({ openRateUmPerMin: 0.5 });
    expect(widthRules(slow, { kind: 'hole' }).minimumWidthUm).toBeNull();
  });
  it('timed etch without a stop layer marks too-deep wide openings; with a stop layer they pass', () => {
    const timed = widthRules(testModel({ reactionProbability: 0.25, etch: { timeMin: 10, targetDepthUm: 12, toleranceUm: 1, maxAspectRatio: 50 } }), { kind: 'trench', widthsUm: [50] });
    expect(timed.rows[0]?.status).toBe('deep');
    const stopped = widthRules(
      testModel({ reactionProbability: 0.25, etch: { timeMin: 10, targetDepthUm: 12, toleranceUm: 1, maxAspectRatio: 50 }, stopLayer: { depthUm: 12, selectivity: 100 } }),
      { kind: 'trench', widthsUm: [50] },
    );
    expect(stopped.rows[0]?.status).toBe('pass');
    expect(stopped.rows[0]?.overEtchUm).toBeGreaterThan(0);
  });
  it('exports CSV with a commented header (model, conditions, caution) and one row per width', () => {
    const csv = widthRulesToCsv(rules);
    const lines = csv.trim().split('\n');
    expect(lines[0]).toBe('# model: rules test version r1 calibrated never');
    expect(lines.some((l) => /^# Estimates from simplified/.test(l))).toBe(true);
    const header = lines.find((l) => !l.startsWith('#'));
    expect(header).toBe('width_um,depth_um,aspect_ratio,margin_um,status,time_to_target_min,over_etch_um,warnings');
    expect(lines.filter((l) => !l.startsWith('#'))).toHaveLength(1 + rules.rows.length);
  });
  it('exports JSON that round-trips', () => {
    const json = widthRulesToJson(rules);
    expect(JSON.parse(JSON.stringify(json))).toEqual(json);
    expect(json.rows).toHaveLength(6);
    expect(json.caution).toMatch(/process of record/);
  });
});
