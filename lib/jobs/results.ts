/**
 * Reading the results of a finished analysis: summary, per-opening results (paged), flags (paged, filtered) and
 * the map index. Results exist only for status 'done'; other states answer 409 with the state in the message.
 */
import { and, asc, count, eq, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '@/db/client';
import { analyses, analysisFeatures, analysisFlags, analysisMaps, type AnalysisMapRow, type AnalysisRow } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import { FLAG_KINDS, FLAG_SEVERITIES } from '@/lib/pipeline/settings';
import { featureFileOf } from './feature-columns';
import { readFeatureRange } from './feature-file';

function finishedAnalysis(db: Db, analysisId: string): AnalysisRow {
  const a = db.select().from(analyses).where(eq(analyses.id, analysisId)).get();
  if (!a) throw new ApiError('not_found', 'Analysis not found.');
  if (a.status !== 'done') {
    const why = a.status === 'failed' ? `it failed: ${a.errorMessage ?? 'no message'}` : a.status === 'cancelled' ? 'it was cancelled' : `it is ${a.status}`;
    throw new ApiError('conflict', `This analysis has no results: ${why}.`);
  }
  return a;
}

export const pageQuery = z.object({
  offset: z.coerce.number().int().min(0).default(0),
  limit: z.coerce.number().int().min(1).max(5000).default(500),
});

export const flagsQuery = pageQuery.extend({
  severity: z.enum(FLAG_SEVERITIES).optional(),
  kind: z.enum(FLAG_KINDS).optional(),
});

export type MapInfo = {
  name: string;
  kind: string;
  unit: string;
  grid: { x0Um: number; y0Um: number; pixelUm: number; nx: number; ny: number };
  meta: Record<string, unknown>;
  bytes: number;
  url: string;
};

function mapInfo(analysisId: string, m: AnalysisMapRow): MapInfo {
  return {
    name: m.name,
    kind: m.kind,
    unit: m.unit,
    grid: { x0Um: m.x0Um, y0Um: m.y0Um, pixelUm: m.pixelUm, nx: m.nx, ny: m.ny },
    meta: m.meta,
    bytes: m.bytes,
    url: `/api/v1/analyses/${analysisId}/maps/${m.name}`,
  };
}

/** One page of per-opening results in the API's item shape (the same fields the analysis_features table gave). */
function featureItemsFromFile(file: string, page: z.infer<typeof pageQuery>) {
  const f = readFeatureRange(file, page.offset, page.limit);
  const items = [];
  for (let k = 0; k < f.count; k++) {
    const at = (c: Float64Array) => c[k] as number;
    items.push({
      featureId: f.featureId[k] as number,
      shape: f.shapes[f.shape[k] as number] ?? '',
      modelKind: f.modelKind[k] === 1 ? 'hole' : 'trench',
      areaUm2: at(f.areaUm2),
      widthUm: at(f.widthUm),
      lengthUm: at(f.lengthUm),
      effectiveDensity: at(f.effectiveDensity),
      depthUm: at(f.depthUm),
      aspectRatio: at(f.aspectRatio),
      marginUm: at(f.marginUm),
      overEtchUm: at(f.overEtchUm),
      reachesTarget: f.reachesTarget[k] === 1,
      depthSigmaUm: sigmaAt(f.depthSigmaUm, k),
      id: f.featureId[k] as number,
      centroidUm: [at(f.xUm), at(f.yUm)] as [number, number],
      bboxUm: [at(f.x0Um), at(f.y0Um), at(f.x1Um), at(f.y1Um)] as [number, number, number, number],
      warnings: splitWarnings(f.warningTexts[f.warnings[k] as number] ?? ''),
    });
  }
  return items;
}

function sigmaAt(column: Float64Array | undefined, k: number): number | null {
  const v = column?.[k];
  return v === undefined || Number.isNaN(v) ? null : v;
}

function splitWarnings(w: string): string[] {
  return w ? w.split('; ') : [];
}

export function getResults(db: Db, analysisId: string, page: z.infer<typeof pageQuery>) {
  const a = finishedAnalysis(db, analysisId);
  const maps = db.select().from(analysisMaps).where(eq(analysisMaps.analysisId, analysisId)).all();
  const file = featureFileOf(db, analysisId);
  if (file) {
    const total = (db.$client.prepare('SELECT count FROM analysis_feature_files WHERE analysis_id = ?').get(analysisId) as { count: number }).count;
    return {
      analysisId,
      summary: a.summary,
      maps: maps.map((m) => mapInfo(analysisId, m)),
      features: { total, offset: page.offset, limit: page.limit, items: featureItemsFromFile(file, page) },
    };
  }
  const total = db.select({ n: count() }).from(analysisFeatures).where(eq(analysisFeatures.analysisId, analysisId)).get()?.n ?? 0;
  const rows = db
    .select()
    .from(analysisFeatures)
    .where(eq(analysisFeatures.analysisId, analysisId))
    .orderBy(asc(analysisFeatures.featureId))
    .limit(page.limit)
    .offset(page.offset)
    .all();
  return {
    analysisId,
    summary: a.summary,
    maps: maps.map((m) => mapInfo(analysisId, m)),
    features: {
      total,
      offset: page.offset,
      limit: page.limit,
      items: rows.map(({ analysisId: _a, x0Um, y0Um, x1Um, y1Um, xUm, yUm, warnings, ...r }) => ({
        ...r,
        id: r.featureId,
        centroidUm: [xUm, yUm] as [number, number],
        bboxUm: [x0Um, y0Um, x1Um, y1Um] as [number, number, number, number],
        warnings: splitWarnings(warnings),
      })),
    },
  };
}

export function listFlags(db: Db, analysisId: string, q: z.infer<typeof flagsQuery>) {
  finishedAnalysis(db, analysisId);
  const conds: SQL[] = [eq(analysisFlags.analysisId, analysisId)];
  if (q.severity) conds.push(eq(analysisFlags.severity, q.severity));
  if (q.kind) conds.push(eq(analysisFlags.kind, q.kind));
  const where = and(...conds);
  const total = db.select({ n: count() }).from(analysisFlags).where(where).get()?.n ?? 0;
  const rows = db.select().from(analysisFlags).where(where).orderBy(asc(analysisFlags.rank)).limit(q.limit).offset(q.offset).all();
  return {
    analysisId,
    total,
    offset: q.offset,
    limit: q.limit,
    items: rows.map((f) => ({
      id: f.id,
      key: f.flagKey,
      kind: f.kind,
      severity: f.severity,
      bboxUm: [f.x0Um, f.y0Um, f.x1Um, f.y1Um] as [number, number, number, number],
      atUm: [f.xUm, f.yUm] as [number, number],
      measured: f.measured,
      limit: f.limit,
      unit: f.unit,
      message: f.message,
      featureId: f.featureId,
      window: f.windowUm !== null && f.stepUm !== null ? { windowUm: f.windowUm, stepUm: f.stepUm } : null,
      uncertain: f.uncertain,
    })),
  };
}

export const mapNameParam = z.string().regex(/^[a-z0-9][a-z0-9.-]{0,80}$/, 'map name: lower-case letters, digits, dots and dashes');

/**
 * A map of a finished analysis by name ("risk", "window-density-700um-70um") or by kind ("window-density" gives
 * the first window set).
 */
export function findMap(db: Db, analysisId: string, name: string): { analysis: AnalysisRow; map: AnalysisMapRow } {
  const analysis = finishedAnalysis(db, analysisId);
  const maps = db.select().from(analysisMaps).where(eq(analysisMaps.analysisId, analysisId)).all();
  const map = maps.find((m) => m.name === name) ?? maps.filter((m) => m.kind === name).sort((a, b) => a.name.localeCompare(b.name))[0];
  if (!map) throw new ApiError('not_found', `No map "${name}"; this analysis has: ${maps.map((m) => m.name).join(', ')}.`);
  return { analysis, map };
}
