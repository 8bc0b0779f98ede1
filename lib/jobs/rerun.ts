/**
 * "Run again": a new queued analysis of the same revision with the settings and process model stored on an
 * earlier one (after a cancel, a failure, or to repeat a run). The stored settings are validated again, so a
 * run whose settings no longer pass today's rules gets the same field errors a new analysis would.
 */
import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { analyses, type AnalysisRow } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import { parseAnalysisSettings } from '@/lib/pipeline/settings';
import { QUEUED_JOB_STATE } from './analyses';
import { jobQueue } from './queue';

export function rerunAnalysis(db: Db, input: { analysisId: string; userId: string }): AnalysisRow {
  const old = db.select().from(analyses).where(eq(analyses.id, input.analysisId)).get();
  if (!old) throw new ApiError('not_found', 'Analysis not found.');
  if (old.status === 'queued' || old.status === 'running') {
    throw new ApiError('conflict', `This analysis is still ${old.status}; cancel it or wait for it to finish before running it again.`);
  }
  const settings = parseAnalysisSettings(old.settings);
  if (!settings.ok) {
    const first = settings.issues[0];
    throw new ApiError('unprocessable', `The stored settings no longer pass validation (${first ? `${first.path || 'settings'}: ${first.message}` : 'unknown problem'}); start a new analysis instead.`);
  }
  const row: AnalysisRow = {
    ...old,
    id: randomUUID(),
    createdBy: input.userId,
    createdAt: new Date(),
    settings: settings.settings as unknown as Record<string, unknown>,
    ...QUEUED_JOB_STATE,
  };
  db.insert(analyses).values(row).run();
  jobQueue().pump();
  return row;
}
