import { readFileSync, readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseProcessModel, formatModelIssues } from '@/lib/etch';

const valid = {
  openRateUmPerMin: 3,
  reactionProbability: 0.2,
  loading: { coefficient: 0.3, lengthUm: 1200 },
  etch: { timeMin: 15, targetDepthUm: 40, toleranceUm: 2, maxAspectRatio: 30 },
  mode: 'continuous',
};
const issuesOf = (doc: unknown) => {
  const r = parseProcessModel(doc);
  if (r.ok) throw new Error('expected issues');
  return r.issues;
};
const paths = (doc: unknown) => issuesOf(doc).map((i) => i.path);

describe('parseProcessModel', () => {
  it('accepts the minimal model and fills the documented defaults', () => {
    const r = parseProcessModel(valid);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.model.schemaVersion).toBe(1);
    expect(r.model.loading.globalCoefficient).toBe(0);
    expect(r.model.loading.form).toBe('reciprocal');
    expect(r.model.etch.stopRateFraction).toBe(0.01);
  });
  it('every sample model parses and says it holds invented demo values', () => {
    const dir = new URL('../../samples/models/', import.meta.url);
    const files = readdirSync(dir).filter((f) => f.endsWith('.json'));
    expect(files.length).toBeGreaterThanOrEqual(3);
    const modes = new Set<string>();
    for (const f of files) {
      const doc = JSON.parse(readFileSync(new URL(f, dir), 'utf8')) as { description?: string };
      const r = parseProcessModel(doc);
      expect(r.ok, `${f}: ${r.ok ? '' : formatModelIssues(r.issues)}`).toBe(true);
      if (r.ok) modes.add(r.model.mode);
      expect(doc.description).toMatch(/Invented demo values — not a real recipe/);
    }
    expect([...modes].sort()).toEqual(['continuous', 'cyclic']);
  });
  it('names each bad field: negative rate, S outside (0, 1], tolerance ≥ target, bad mode', () => {
    const issues = issuesOf({ ...valid, openRateUmPerMin: -1, reactionProbability: 0, etch: { ...valid.etch, toleranceUm: 40 }, mode: 'pulsed' });
    const byPath = Object.fromEntries(issues.map((i) => [i.path, i.message]));
    expect(byPath.openRateUmPerMin).toMatch(/> 0 µm\/min/);
    expect(byPath.reactionProbability).toMatch(/\(0, 1\]/);
    expect(byPath.mode).toMatch(/continuous.*cyclic/);
    // The cross-field check runs only once the fields themselves are well typed.
    expect(paths({ ...valid, etch: { ...valid.etch, toleranceUm: 40 } })).toEqual(['etch.toleranceUm']);
    expect(paths({ ...valid, reactionProbability: 1.2 })).toEqual(['reactionProbability']);
    expect(parseProcessModel({ ...valid, reactionProbability: 1 }).ok).toBe(true);
  });
  it('reports missing required fields and blocks by path', () => {
    expect(paths({})).toEqual(['openRateUmPerMin', 'reactionProbability', 'loading', 'etch', 'mode']);
    expect(paths({ ...valid, etch: { timeMin: 10 } })).toEqual(['etch.targetDepthUm', 'etch.toleranceUm', 'etch.maxAspectRatio']);
    expect(paths([1, 2])).toEqual(['(root)']);
    expect(paths({ ...valid, loading: { coefficient: 'high', lengthUm: 0 } })).toEqual(['loading.coefficient', 'loading.lengthUm']);
  });
  it('rejects unknown fields by name (e.g. a missing units suffix)', () => {
    const issues = issuesOf({ ...valid, etch: { ...valid.etch, time: 12 } });
    expect(issues).toEqual([{ path: 'etch.time', message: 'unknown field (check spelling and units suffix)' }]);
  });
  it('checks mode ↔ cyclic block, stop layer above the target, linear loading ≥ 1, ranges and dates', () => {
    expect(paths({ ...valid, mode: 'cyclic' })).toEqual(['cyclic']);
    expect(paths({ ...valid, cyclic: { etchStepS: 5, passivationStepS: 2 } })).toEqual(['cyclic']);
    expect(paths({ ...valid, mode: 'cyclic', cyclic: { etchStepS: 0, passivationStepS: -1 } })).toEqual(['cyclic.etchStepS', 'cyclic.passivationStepS']);
    expect(paths({ ...valid, stopLayer: { depthUm: 30, selectivity: 100 } })).toEqual(['stopLayer.depthUm']);
    expect(paths({ ...valid, loading: { coefficient: 0.8, lengthUm: 100, globalCoefficient: 0.3, form: 'linear' } })).toEqual(['loading.coefficient']);
    expect(paths({ ...valid, ion: { angularSigmaDeg: 60, neutralToIonSupplyRatio: -1 } })).toEqual(['ion.angularSigmaDeg', 'ion.neutralToIonSupplyRatio']);
    expect(paths({ ...valid, calibration: { date: '2026-02-30x', widthUm: [5, 1], aspectRatio: [0, 3], density: [0, 1] } })).toEqual(['calibration.date', 'calibration.widthUm']);
    expect(paths({ ...valid, schemaVersion: 2 })).toEqual(['schemaVersion']);
  });
  it('formats issues on one line', () => {
    const line = formatModelIssues(issuesOf({ ...valid, openRateUmPerMin: -1, mode: 'cyclic' }));
    expect(line.includes('\n')).toBe(false);
    expect(line).toMatch(/^openRateUmPerMin: .*; cyclic: /);
  });
});
