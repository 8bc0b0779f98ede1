import { beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, setDbForTesting, type Db } from '@/db/client';
import { DEMO_TEAM, seedDemo } from '@/lib/data/demo';
import { isApiError } from '@/lib/http/errors';
import { applyRuleSet } from '@/lib/models/rule-set-schema';
import { createRuleSet, listRuleSets, updateRuleSet } from '@/lib/models/rule-sets';
import { seedDemoModels } from '@/lib/models/seed';
import { createDraftFrom, diffVersions, getVersion, listPublishedChoices, listTeamModels, publishVersion, resolvePublishedVersion, updateDraft } from '@/lib/models/versions';
import { parseAnalysisSettings } from '@/lib/pipeline/settings';

let db: Db;
beforeAll(async () => {
  db = openDatabase(':memory:');
  setDbForTesting(db);
  await seedDemo(db);
  expect(seedDemoModels(db).seeded).toBe(true);
});

const codeOf = (fn: () => unknown) => {
  try {
    fn();
  } catch (e) {
    return isApiError(e) ? e.code : String(e);
  }
  return 'no error';
};

describe('process models in the database', () => {
  it('seeds the samples as published v1 and a calibrated, published v2 of the deep-trench model', () => {
    const models = listTeamModels(db, DEMO_TEAM.id);
    expect(models.map((m) => m.key).sort()).toEqual(['cyclic-via', 'deep-trench-continuous', 'minimal-neutral-limited']);
    const trench = models.find((m) => m.key === 'deep-trench-continuous');
    expect(trench?.versions.map((v) => [v.number, v.status])).toEqual([[2, 'published'], [1, 'published']]);
    const v2 = getVersion(db, trench?.versions[0]?.id ?? '');
    expect(v2.document.version).toBe('v2');
    expect(v2.document.calibration?.covariance?.parameters).toEqual(['openRateUmPerMin', 'reactionProbability']);
    expect(v2.calibration?.rows).toHaveLength(140);
    expect(models.find((m) => m.key === 'cyclic-via')?.featureKind).toBe('hole');
    // A second call does nothing.
    expect(seedDemoModels(db).seeded).toBe(false);
  });
  it('a published version cannot change; a draft from it can, and publishing freezes it', () => {
    const trench = listTeamModels(db, DEMO_TEAM.id).find((m) => m.key === 'deep-trench-continuous');
    const v2 = trench?.versions[0]?.id ?? '';
    expect(codeOf(() => updateDraft(db, { versionId: v2, body: { note: 'x' } }))).toBe('conflict');
    const draft = createDraftFrom(db, { versionId: v2, userId: null });
    expect(draft.number).toBe(3);
    expect(draft.status).toBe('draft');
    expect(draft.basedOnVersionId).toBe(v2);
    const doc = { ...draft.document, openRateUmPerMin: 4.2, etch: { ...draft.document.etch, timeMin: 25 } };
    updateDraft(db, { versionId: draft.id, body: { document: doc as unknown as Record<string, unknown> } });
    // Invalid documents are refused with per-field errors.
    try {
      updateDraft(db, { versionId: draft.id, body: { document: { ...doc, reactionProbability: 2 } as unknown as Record<string, unknown> } });
      throw new Error('accepted');
    } catch (e) {
      expect(isApiError(e) && e.fieldErrors?.['document.reactionProbability']?.[0]).toBe('reactionProbability (S) must be in (0, 1]');
    }
    // Drafts are not offered to analyses.
    expect(codeOf(() => resolvePublishedVersion(db, DEMO_TEAM.id, draft.id))).toBe('unprocessable');
    const d = diffVersions(db, v2, draft.id);
    expect(d.changes.map((c) => [c.path, c.before, c.after])).toEqual([
      ['openRateUmPerMin', v2 ? getVersion(db, v2).document.openRateUmPerMin : null, 4.2],
      ['etch.timeMin', 20, 25],
    ]);
    publishVersion(db, { versionId: draft.id, userId: null });
    expect(codeOf(() => publishVersion(db, { versionId: draft.id, userId: null }))).toBe('conflict');
    expect(resolvePublishedVersion(db, DEMO_TEAM.id, 'deep-trench-continuous')?.versionId).toBe(draft.id);
    expect(resolvePublishedVersion(db, DEMO_TEAM.id, v2)?.label).toBe('v2');
    expect(resolvePublishedVersion(db, 'other-team', v2)).toBeNull();
    expect(listPublishedChoices(db, DEMO_TEAM.id).filter((c) => c.latest).length).toBe(3);
  });
});

describe('rule sets', () => {
  it('the demo team has a default rule set that turns on density checks', () => {
    const [demo] = listRuleSets(db, DEMO_TEAM.id);
    expect(demo?.isDefault).toBe(true);
    const settings = parseAnalysisSettings(applyRuleSet({ etchLayers: [{ layer: 1, datatype: 0 }], limits: { targetDepthUm: 50 } }, demo!.rules));
    expect(settings.ok && settings.settings.limits).toMatchObject({ minDensity: 0.05, maxDensity: 0.6, maxGradient: 0.3, minWidthUm: 2.5, targetDepthUm: 50 });
  });
  it('validates rules by field, keeps one default and refuses duplicate names', () => {
    try {
      createRuleSet(db, { teamId: DEMO_TEAM.id, userId: null, body: { name: 'Bad', description: '', isDefault: false, rules: { limits: { minDensity: 2 }, densityWindows: [{ windowUm: 50, stepUm: 100 }] } } });
      throw new Error('accepted');
    } catch (e) {
      expect(isApiError(e) && Object.keys(e.fieldErrors ?? {}).sort()).toEqual(['rules.densityWindows.0.stepUm', 'rules.limits.minDensity']);
    }
    const b = createRuleSet(db, { teamId: DEMO_TEAM.id, userId: null, body: { name: 'Strict', description: '', isDefault: true, rules: { limits: { maxDensity: 0.4 } } } });
    expect(listRuleSets(db, DEMO_TEAM.id).filter((r) => r.isDefault).map((r) => r.id)).toEqual([b.id]);
    expect(codeOf(() => createRuleSet(db, { teamId: DEMO_TEAM.id, userId: null, body: { name: 'Strict', description: '', isDefault: false, rules: {} } }))).toBe('conflict');
    updateRuleSet(db, { id: b.id, userId: null, body: { archived: true } });
    expect(listRuleSets(db, DEMO_TEAM.id).map((r) => r.name)).toEqual(['Larkspur deep-etch rules (demo)']);
  });
});
