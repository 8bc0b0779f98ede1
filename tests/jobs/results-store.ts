/**
 * Helpers for the result-storage tests: invented per-opening results, a migrated temporary database with foreign
 * keys off (so result rows need no project/revision chain), and the old row-by-row save into analysis_features
 * (what the server did before the column file) as the reference the file store must match.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { openDatabase, type Db } from '@/db/client';
import { encodeFeatureFile, FEATURE_FILE_NAME, featureFileBytes } from '@/lib/jobs/feature-file';
import type { FeatureResult } from '@/lib/pipeline/predict-features';

const SHAPES: FeatureResult['shape'][] = ['trench', 'round-hole', 'square-hole', 'open-field', 'irregular'];

/** Deterministic pseudo-random results (LCG), with NaN, warnings and excursions sprinkled in. */
export function inventedResults(n: number, seed = 7): FeatureResult[] {
  let s = seed >>> 0;
  const rnd = () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
  const out: FeatureResult[] = [];
  for (let k = 0; k < n; k++) {
    const shape = SHAPES[Math.floor(rnd() * SHAPES.length)] as FeatureResult['shape'];
    const x = rnd() * 1e4;
    const y = rnd() * 1e4;
    const w = 0.5 + rnd() * 20;
    out.push({
      id: k + 1,
      shape,
      modelKind: shape.endsWith('hole') ? 'hole' : 'trench',
      centroidUm: [x, y],
      bboxUm: [x - w / 2, y - 1, x + w / 2, y + 1],
      areaUm2: w * 2,
      widthUm: w,
      lengthUm: k % 11 === 0 ? Number.NaN : 2,
      effectiveDensity: Math.round(rnd() * 1e4) / 1e4,
      depthUm: 30 + rnd() * 20,
      aspectRatio: 40 / w,
      marginUm: rnd() * 10 - 5,
      overEtchUm: 0,
      depthSigmaUm: k % 3 === 0 ? null : rnd() * 0.5,
      timeToTargetMin: null,
      reachesTarget: rnd() > 0.3,
      maskRemainingUm: null,
      stopped: false,
      warnings: k % 5 === 0 ? ['aspect ratio reached the model limit'] : [],
      excursions: k % 7 === 0 ? [{ quantity: 'width', value: w, min: 1, max: 10, unit: 'µm' }] : [],
    });
  }
  return out;
}

export function tempDb(dir: string): Db {
  process.env.TRENCHANT_DATA_DIR = dir;
  const db = openDatabase(path.join(dir, 'results.db'));
  db.$client.pragma('foreign_keys = OFF');
  return db;
}

/** The old storage: one analysis_features row per opening (as save-results.ts did before the column file). */
export function saveAsRows(db: Db, analysisId: string, results: FeatureResult[]): void {
  const num = (v: number) => (Number.isNaN(v) ? 0 : v);
  const ins = db.$client.prepare(
    `INSERT INTO analysis_features (analysis_id, feature_id, shape, model_kind, x_um, y_um, x0_um, y0_um, x1_um, y1_um, area_um2,
      width_um, length_um, effective_density, depth_um, aspect_ratio, margin_um, over_etch_um, reaches_target, warnings, depth_sigma_um)
      VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)`,
  );
  db.$client.transaction(() => {
    for (const r of results) {
      const [x0, y0, x1, y1] = r.bboxUm;
      ins.run(analysisId, r.id, r.shape, r.modelKind, r.centroidUm[0], r.centroidUm[1], x0, y0, x1, y1, num(r.areaUm2), num(r.widthUm), num(r.lengthUm),
        num(r.effectiveDensity), num(r.depthUm), num(r.aspectRatio), num(r.marginUm), num(r.overEtchUm), r.reachesTarget ? 1 : 0,
        [...r.warnings, ...r.excursions.map((e) => `${e.quantity} outside the calibrated range`)].join('; '), r.depthSigmaUm);
    }
  })();
}

/** The new storage: the worker's column file in the analysis folder plus its index row. */
export function saveAsFile(db: Db, dataDir: string, analysisId: string, results: FeatureResult[]): number {
  const bytes = featureFileBytes(encodeFeatureFile(results));
  const dir = path.join(dataDir, 'analyses', analysisId);
  mkdirSync(dir, { recursive: true });
  writeFileSync(path.join(dir, FEATURE_FILE_NAME), bytes);
  db.$client.prepare('INSERT INTO analysis_feature_files (analysis_id, file, count, bytes) VALUES (?,?,?,?)').run(analysisId, FEATURE_FILE_NAME, results.length, bytes.length);
  return bytes.length;
}

export function insertDoneAnalysis(db: Db, id: string): void {
  db.$client
    .prepare(
      `INSERT INTO analyses (id, project_id, revision_id, created_at, settings, model, model_name, model_version, model_source, status, progress, summary)
       VALUES (?, 'p', 'r', 0, '{}', '{}', 'm', '1', 'test', 'done', 1, '{}')`,
    )
    .run(id);
}
