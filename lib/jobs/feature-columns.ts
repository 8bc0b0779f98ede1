/**
 * Per-opening results of a finished analysis as columns (typed arrays), for bulk readers: the viewer's what-if
 * worker, reports, exports. This is the one bulk read path; where the rows are stored is this module's business,
 * so the storage can change without touching the readers. Today: the worker's column file (feature-file.ts,
 * indexed in analysis_feature_files) for new analyses, the analysis_features table for ones saved before it.
 */
import type { Db } from '@/db/client';
import { storage } from '@/lib/storage';
import { readablePath, readablePathSync } from '@/lib/storage/read-cache';
import { readFeatureRange } from './feature-file';
import { analysisRelDir } from './paths';

export const MODEL_KIND_CODE = { trench: 0, hole: 1 } as const;

export interface FeatureColumns {
  count: number;
  /** Feature id as numbered by the pipeline (Flag.featureId refers to it). */
  featureId: Int32Array;
  /** 0 = trench (slot), 1 = hole; see MODEL_KIND_CODE. */
  modelKind: Uint8Array;
  xUm: Float64Array;
  yUm: Float64Array;
  x0Um: Float64Array;
  y0Um: Float64Array;
  x1Um: Float64Array;
  y1Um: Float64Array;
  areaUm2: Float64Array;
  widthUm: Float64Array;
  lengthUm: Float64Array;
  effectiveDensity: Float64Array;
  depthUm: Float64Array;
  aspectRatio: Float64Array;
  marginUm: Float64Array;
  overEtchUm: Float64Array;
  reachesTarget: Uint8Array;
}

type Row = {
  feature_id: number;
  model_kind: string;
  x_um: number;
  y_um: number;
  x0_um: number;
  y0_um: number;
  x1_um: number;
  y1_um: number;
  area_um2: number;
  width_um: number;
  length_um: number;
  effective_density: number;
  depth_um: number;
  aspect_ratio: number;
  margin_um: number;
  over_etch_um: number;
  reaches_target: number;
};

/** All openings of `analysisId` in feature-id order (empty columns when the analysis has none). */
export function readFeatureColumns(db: Db, analysisId: string): FeatureColumns {
  const sqlite = db.$client;
  const stored = featureFileOf(db, analysisId);
  if (stored) {
    const f = readFeatureRange(stored, 0, Number.POSITIVE_INFINITY);
    return {
      count: f.count,
      featureId: f.featureId,
      modelKind: f.modelKind,
      xUm: f.xUm,
      yUm: f.yUm,
      x0Um: f.x0Um,
      y0Um: f.y0Um,
      x1Um: f.x1Um,
      y1Um: f.y1Um,
      areaUm2: f.areaUm2,
      widthUm: f.widthUm,
      lengthUm: f.lengthUm,
      effectiveDensity: f.effectiveDensity,
      depthUm: f.depthUm,
      aspectRatio: f.aspectRatio,
      marginUm: f.marginUm,
      overEtchUm: f.overEtchUm,
      reachesTarget: f.reachesTarget,
    };
  }
  const n = (sqlite.prepare('SELECT count(*) AS n FROM analysis_features WHERE analysis_id = ?').get(analysisId) as { n: number }).n;
  const c: FeatureColumns = {
    count: n,
    featureId: new Int32Array(n),
    modelKind: new Uint8Array(n),
    xUm: new Float64Array(n),
    yUm: new Float64Array(n),
    x0Um: new Float64Array(n),
    y0Um: new Float64Array(n),
    x1Um: new Float64Array(n),
    y1Um: new Float64Array(n),
    areaUm2: new Float64Array(n),
    widthUm: new Float64Array(n),
    lengthUm: new Float64Array(n),
    effectiveDensity: new Float64Array(n),
    depthUm: new Float64Array(n),
    aspectRatio: new Float64Array(n),
    marginUm: new Float64Array(n),
    overEtchUm: new Float64Array(n),
    reachesTarget: new Uint8Array(n),
  };
  const rows = sqlite
    .prepare(
      `SELECT feature_id, model_kind, x_um, y_um, x0_um, y0_um, x1_um, y1_um, area_um2, width_um, length_um, effective_density,
        depth_um, aspect_ratio, margin_um, over_etch_um, reaches_target FROM analysis_features WHERE analysis_id = ? ORDER BY feature_id`,
    )
    .iterate(analysisId) as IterableIterator<Row>;
  let k = 0;
  for (const r of rows) {
    if (k >= n) break; // rows added between the count and the scan (a re-save) are left for the next read
    c.featureId[k] = r.feature_id;
    c.modelKind[k] = r.model_kind === 'hole' ? MODEL_KIND_CODE.hole : MODEL_KIND_CODE.trench;
    c.xUm[k] = r.x_um;
    c.yUm[k] = r.y_um;
    c.x0Um[k] = r.x0_um;
    c.y0Um[k] = r.y0_um;
    c.x1Um[k] = r.x1_um;
    c.y1Um[k] = r.y1_um;
    c.areaUm2[k] = r.area_um2;
    c.widthUm[k] = r.width_um;
    c.lengthUm[k] = r.length_um;
    c.effectiveDensity[k] = r.effective_density;
    c.depthUm[k] = r.depth_um;
    c.aspectRatio[k] = r.aspect_ratio;
    c.marginUm[k] = r.margin_um;
    c.overEtchUm[k] = r.over_etch_um;
    c.reachesTarget[k] = r.reaches_target;
    k++;
  }
  if (k < n) c.count = k;
  return c;
}

function featureFileKey(db: Db, analysisId: string): string | null {
  const row = db.$client.prepare('SELECT file FROM analysis_feature_files WHERE analysis_id = ?').get(analysisId) as { file: string } | undefined;
  return row ? `${analysisRelDir(analysisId)}/${row.file}` : null;
}

/**
 * Local path of the analysis's per-opening column file, or null when its rows are in the table (or absent). With
 * results on S3 this is a cached copy; a cold cache blocks while it downloads, so async callers should await
 * prepareFeatureFile() first.
 */
export function featureFileOf(db: Db, analysisId: string): string | null {
  const key = featureFileKey(db, analysisId);
  return key ? readablePathSync(storage(), key) : null;
}

/** Fetches the column file into the local cache without blocking (no-op on the local backend or without one). */
export async function prepareFeatureFile(db: Db, analysisId: string): Promise<void> {
  const key = featureFileKey(db, analysisId);
  if (key) await readablePath(storage(), key);
}
