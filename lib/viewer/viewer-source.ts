import 'server-only';
/**
 * Server side of the canvas viewer: what it needs about a finished analysis (model, limits, layers) and a
 * per-revision cache of the flattened layout's polygon index (built once, off the request path of later views).
 */
import { eq } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { analyses, layoutRevisions } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import { resolveData } from '@/lib/jobs/paths';
import { readLayoutFile } from '@/lib/layout/read';
import type { AnalysisSummary } from '@/lib/pipeline/summary';
import { buildPolygonIndex, type PolygonIndex } from './polygon-index';

export type ViewerInfo = {
  analysisId: string;
  revisionId: string;
  /** The process model exactly as the analysis used it. */
  model: Record<string, unknown>;
  limits: AnalysisSummary['limits'];
  severities: Record<string, string>;
  /** Exposed (open) fraction of the die, the global-loading input of the prediction. */
  exposedFraction: number;
  dieBboxUm: [number, number, number, number];
  polygonCount: number;
  layers: { layer: number; datatype: number; polygons: number; etch: boolean }[];
};

function finished(db: Db, analysisId: string) {
  const a = db.select().from(analyses).where(eq(analyses.id, analysisId)).get();
  if (!a) throw new ApiError('not_found', 'Analysis not found.');
  if (a.status !== 'done' || !a.summary) throw new ApiError('conflict', `This analysis has no results yet (it is ${a.status}).`);
  const rev = db.select().from(layoutRevisions).where(eq(layoutRevisions.id, a.revisionId)).get();
  if (!rev) throw new ApiError('not_found', 'The layout revision of this analysis is gone.');
  return { a, rev, summary: a.summary as unknown as AnalysisSummary };
}

export function viewerInfo(db: Db, analysisId: string): ViewerInfo {
  const { a, rev, summary } = finished(db, analysisId);
  const etch = new Set(summary.layout.etchLayers);
  return {
    analysisId,
    revisionId: rev.id,
    model: a.model,
    limits: summary.limits,
    severities: (summary.settings?.severities ?? {}) as Record<string, string>,
    exposedFraction: summary.globalDensity,
    dieBboxUm: summary.layout.dieBboxUm,
    polygonCount: rev.polygonCount,
    layers: rev.layerTable.map((l) => ({ layer: l.layer, datatype: l.datatype, polygons: l.polygons, etch: etch.has(`${l.layer}/${l.datatype}`) })),
  };
}

// A few revisions at a time: an index of 1M polygons holds ~150 MB.
const CACHE_SIZE = 2;
const cache = new Map<string, Promise<PolygonIndex>>();

/** The polygon index of the analysis's layout revision, built on first use and kept for the next views. */
export function polygonIndexFor(db: Db, analysisId: string): Promise<PolygonIndex> {
  const { rev } = finished(db, analysisId);
  const hit = cache.get(rev.id);
  if (hit) {
    cache.delete(rev.id);
    cache.set(rev.id, hit);
    return hit;
  }
  const p = readLayoutFile(resolveData(rev.storedPath), { topCell: rev.topCell }).then(buildPolygonIndex);
  p.catch(() => cache.delete(rev.id));
  cache.set(rev.id, p);
  while (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value as string);
  return p;
}
