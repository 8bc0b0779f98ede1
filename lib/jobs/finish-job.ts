/**
 * The one way a job reaches a terminal state, shared by the embedded runner and the BullMQ backend: the row is
 * updated only while queued or running (so a late result never overwrites a cancel), a job that did not finish
 * loses any partial result rows, SSE subscribers get the final event, and a done job's files are fetched into the
 * read cache when they are on S3 (warm-results.ts).
 */
import { getDb } from '@/db/client';
import type { AnalysisStatus } from '@/db/schema';
import { publishJobEvent } from './events';
import { warmResultCache } from './warm-results';

/** Writes a terminal state (only over queued/running, so a late result never overwrites a cancel). */
export function finishJob(
  analysisId: string,
  status: Extract<AnalysisStatus, 'done' | 'failed' | 'cancelled'>,
  error: { code: string; message: string } | null,
  done?: { summary: unknown; resultDir: string },
): void {
  const sqlite = getDb().$client;
  const progress = status === 'done' ? 1 : null;
  const res = sqlite
    .prepare(
      `UPDATE analyses SET status = ?, stage = ?, progress = COALESCE(?, progress), error_code = ?, error_message = ?, finished_at = ?,
         summary = ?, result_dir = ? WHERE id = ? AND status IN ('queued', 'running')`,
    )
    .run(status, status, progress, error?.code ?? null, error?.message ?? null, Date.now(), done ? JSON.stringify(done.summary) : null, done?.resultDir ?? null, analysisId);
  if (res.changes === 0) return;
  if (status !== 'done') {
    sqlite.prepare('DELETE FROM analysis_flags WHERE analysis_id = ?').run(analysisId);
    sqlite.prepare('DELETE FROM analysis_features WHERE analysis_id = ?').run(analysisId);
    sqlite.prepare('DELETE FROM analysis_feature_files WHERE analysis_id = ?').run(analysisId);
    sqlite.prepare('DELETE FROM analysis_maps WHERE analysis_id = ?').run(analysisId);
  }
  const row = sqlite.prepare('SELECT progress FROM analyses WHERE id = ?').get(analysisId) as { progress: number } | undefined;
  publishJobEvent({ analysisId, status, stage: status, progress: row?.progress ?? 0, errorMessage: error?.message ?? null });
  // Results on S3: into this server's read cache now, so the first review page does not wait for the bucket.
  if (status === 'done') void warmResultCache(analysisId);
}
