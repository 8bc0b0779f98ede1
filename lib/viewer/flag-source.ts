import 'server-only';
import { asc, eq } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { analysisFlags } from '@/db/schema';
import { flagColumns, type FlagRecord } from './flag-wire';

/** Every flag of an analysis from analysis_flags, worst first (rank order), as wire columns. */
export function readFlagColumns(db: Db, analysisId: string) {
  const rows = db
    .select({ key: analysisFlags.flagKey, kind: analysisFlags.kind, severity: analysisFlags.severity, x0: analysisFlags.x0Um, y0: analysisFlags.y0Um, x1: analysisFlags.x1Um, y1: analysisFlags.y1Um, xUm: analysisFlags.xUm, yUm: analysisFlags.yUm, measured: analysisFlags.measured, limit: analysisFlags.limit, unit: analysisFlags.unit })
    .from(analysisFlags)
    .where(eq(analysisFlags.analysisId, analysisId))
    .orderBy(asc(analysisFlags.rank))
    .all();
  return flagColumns(rows.map((r): FlagRecord => ({ key: r.key, kind: r.kind, severity: r.severity, xUm: r.xUm, yUm: r.yUm, bboxUm: [r.x0, r.y0, r.x1, r.y1], measured: r.measured, limit: r.limit, unit: r.unit })));
}
