/**
 * Demo seed for process models and rule sets: the built-in sample models (samples/models/*.json, invented values)
 * become published v1 of the demo team's models, the deep-trench model gets a v2 calibrated from the invented
 * measurement set samples/calibration/demo-trench-lag.csv, and the demo rule set becomes the team's default.
 * Runs only when the demo team exists and has no model yet.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { count, eq } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { processModels, ruleSets, teams } from '@/db/schema';
import { DEMO_TEAM, DEMO_USERS } from '@/lib/data/demo';
import { fitCalibration, parseCalibrationCsv } from '@/lib/etch';
import { listBuiltinModels } from '@/lib/jobs/models';
import { DEMO_RULE_SET } from './rule-set-schema';
import { createRuleSet } from './rule-sets';
import type { StoredCalibration } from './schemas';
import { createDraftFrom, createModel, publishVersion, updateDraft } from './versions';

export const DEMO_CALIBRATION_FILE = 'demo-trench-lag.csv';
const DEMO_CALIBRATED_KEY = 'deep-trench-continuous';

export function demoCalibrationPath(): string {
  return path.join(/*turbopackIgnore: true*/ process.cwd(), 'samples', 'calibration', DEMO_CALIBRATION_FILE);
}

export function seedDemoModels(db: Db): { seeded: boolean } {
  if (!db.select({ id: teams.id }).from(teams).where(eq(teams.id, DEMO_TEAM.id)).get()) return { seeded: false };
  if ((db.select({ n: count() }).from(processModels).where(eq(processModels.teamId, DEMO_TEAM.id)).get()?.n ?? 0) > 0) return { seeded: false };
  const engineer = DEMO_USERS.find((u) => u.role === 'process_engineer')?.id ?? null;
  const t0 = Date.now() - 60_000;
  let calibrateFrom: string | null = null;
  listBuiltinModels().forEach((sample, i) => {
    const v = createModel(db, {
      teamId: DEMO_TEAM.id,
      userId: engineer,
      body: { name: sample.name, key: sample.id, description: sample.description, featureKind: sample.model.mode === 'cyclic' ? 'hole' : 'trench', fromSample: sample.id },
      publish: true,
      now: new Date(t0 + i),
    });
    if (sample.id === DEMO_CALIBRATED_KEY) calibrateFrom = v.id;
  });
  if (calibrateFrom) seedCalibratedVersion(db, calibrateFrom, engineer, new Date(t0 + 1000));
  if ((db.select({ n: count() }).from(ruleSets).where(eq(ruleSets.teamId, DEMO_TEAM.id)).get()?.n ?? 0) === 0) {
    createRuleSet(db, { teamId: DEMO_TEAM.id, userId: engineer, body: { ...DEMO_RULE_SET, rules: structuredClone(DEMO_RULE_SET.rules) as unknown as Record<string, unknown>, isDefault: true } });
  }
  return { seeded: true };
}

/** v2 of the demo deep-trench model: open rate and S fitted to the invented demo measurements, then published. */
function seedCalibratedVersion(db: Db, fromVersionId: string, userId: string | null, now: Date): void {
  let text: string;
  try {
    text = readFileSync(/*turbopackIgnore: true*/ demoCalibrationPath(), 'utf8');
  } catch {
    return;
  }
  const draft = createDraftFrom(db, { versionId: fromVersionId, userId, now });
  const rows = parseCalibrationCsv(text);
  const fit = ['openRateUmPerMin', 'reactionProbability'] as const;
  const result = fitCalibration(rows, { baseModel: draft.document, fit: [...fit], date: now.toISOString().slice(0, 10), source: `${DEMO_CALIBRATION_FILE} (invented demo measurements)` });
  if (!result.ok) throw new Error(`demo calibration failed: ${result.message}`);
  const calibration: StoredCalibration = {
    fileName: DEMO_CALIBRATION_FILE,
    fit: [...fit],
    rows,
    rSquared: Number.isFinite(result.rSquared) ? result.rSquared : null,
    rmsResidualUm: result.rmsResidualUm,
    residualStandardErrorUm: Number.isFinite(result.residualStandardErrorUm) ? result.residualStandardErrorUm : null,
    degreesOfFreedom: result.degreesOfFreedom,
    parameters: result.parameters as StoredCalibration['parameters'],
    warnings: result.warnings,
  };
  updateDraft(db, {
    versionId: draft.id,
    body: { document: result.model as unknown as Record<string, unknown>, note: 'Calibrated on the invented demo measurement set (open rate and S fitted).', calibration },
    now,
  });
  publishVersion(db, { versionId: draft.id, userId, now });
}
