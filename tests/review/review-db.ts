/**
 * An in-memory Trenchant database with the demo team seeded and analyses whose findings come from the real
 * pipeline (runAnalysis) on layouts built in code, for testing the review logic without a server.
 */
import { randomUUID } from 'node:crypto';
import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { openDatabase, setDbForTesting, type Db } from '@/db/client';
import { analyses, layoutRevisions, layouts } from '@/db/schema';
import { seedDemo, DEMO_PROJECTS } from '@/lib/data/demo';
import { encodeFeatureFile, FEATURE_FILE_NAME, featureFileBytes } from '@/lib/jobs/feature-file';
import { analysisRelDir, resolveData } from '@/lib/jobs/paths';
import { saveResultRows } from '@/lib/jobs/save-results';
import { runAnalysis } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema } from '@/lib/pipeline/settings';
import { testModel, trenchLayout, type RectUm } from '../pipeline/fixtures';

export const PROJECT_ID = DEMO_PROJECTS[0].id;
export const TEAM_ID = 'demo-team-larkspur';

export async function reviewDb(): Promise<Db> {
  // Per-opening results live in files under the data folder: keep them in a temporary one, never ./data.
  process.env.TRENCHANT_DATA_DIR = mkdtempSync(path.join(tmpdir(), 'trenchant-review-'));
  const db = openDatabase(':memory:');
  setDbForTesting(db);
  await seedDemo(db);
  return db;
}

/**
 * Settings under which only the width rule fires: a 3 µm minimum width, a 5 µm target that every trench reaches
 * under the test model, and an aspect-ratio limit no trench here comes near.
 */
export const WIDTH_ONLY_SETTINGS = analysisSettingsSchema.parse({
  etchLayers: [{ layer: 5, datatype: 0 }],
  limits: { minWidthUm: 3, targetDepthUm: 5, toleranceUm: 1, maxAspectRatio: 1000 },
});

/** Runs the pipeline on `trenches` and stores a finished analysis with its flags; returns the analysis id. */
export async function storeAnalysis(db: Db, trenches: RectUm[], revision: number): Promise<string> {
  const result = runAnalysis(trenchLayout(trenches), WIDTH_ONLY_SETTINGS, testModel());
  const layoutId = `layout-test`;
  const now = new Date(Date.UTC(2026, 11, 1, 9, revision));
  if (revision === 1 || !db.select().from(layouts).all().some((l) => l.id === layoutId)) {
    db.insert(layouts).values({ id: layoutId, projectId: PROJECT_ID, name: 'Synthetic trenches', createdBy: 'demo-designer', createdAt: now }).run();
  }
  const revisionId = randomUUID();
  db.insert(layoutRevisions)
    .values({
      id: revisionId, layoutId, revision, uploadedBy: 'demo-designer', uploadedAt: now, originalName: `trenches-r${revision}.csv`, sha256: 'x', sizeBytes: 1,
      format: 'csv', storedPath: 'none', layerTable: [], topCell: '', libraryName: 'synthetic', dbuUm: 0.001, bboxDbu: null, polygonCount: trenches.length,
    })
    .run();
  const id = randomUUID();
  db.insert(analyses)
    .values({
      id, projectId: PROJECT_ID, revisionId, createdBy: 'demo-designer', createdAt: now, settings: WIDTH_ONLY_SETTINGS as unknown as Record<string, unknown>,
      model: {}, modelName: 'pipeline test model', modelVersion: 't1', modelSource: 'test', status: 'done', progress: 1, finishedAt: now,
      summary: result.summary as unknown as Record<string, unknown>,
    })
    .run();
  const bytes = featureFileBytes(encodeFeatureFile(result.features));
  const dir = resolveData(analysisRelDir(id));
  mkdirSync(dir, { recursive: true });
  writeFileSync(path.join(dir, FEATURE_FILE_NAME), bytes);
  const featureFile = { file: FEATURE_FILE_NAME, count: result.features.length, bytes: bytes.byteLength };
  await saveResultRows(db, id, { ok: true, summary: result.summary, featureFile, flags: result.flags, maps: [] });
  return id;
}

/** 2 µm × 400 µm trench with its left edge at x. */
export const narrow = (x: number): RectUm => [x, 300, x + 2, 700];
