import 'server-only';
/**
 * Server side of the canvas viewer: what it needs about a finished analysis (model, limits, layers) and
 * where its layout revision is stored (the polygon index lives on a worker thread, lib/viewer/index-host.ts).
 */
import { eq } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { analyses, layoutRevisions } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import type { AnalysisSummary } from '@/lib/pipeline/summary';
import { wholeReadLimitBytes } from '@/lib/layout/whole-read-limit';
import { storage } from '@/lib/storage';
import { readablePath } from '@/lib/storage/read-cache';

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

/**
 * Where the analysis's layout revision is, for the polygon-index worker (lib/viewer/index-host.ts): its file in the
 * data folder, or a local copy of it when layouts are on S3 (lib/storage/read-cache.ts).
 */
export async function layoutSourceFor(db: Db, analysisId: string): Promise<{ revisionId: string; path: string; topCell: string | null; wholeReadBytes: number }> {
  const { rev } = finished(db, analysisId);
  return { revisionId: rev.id, path: await readablePath(storage(), rev.storedPath), topCell: rev.topCell ?? null, wholeReadBytes: wholeReadLimitBytes() };
}
