/**
 * The server's side of queue workers without a database (TRENCHANT_WORKER_DB=none): it builds the task each job
 * carries, and records what such workers report — a pick-up (counted against TRENCHANT_JOB_MAX_ATTEMPTS, as the
 * embedded pool counts its runs), progress, and the result returned when the job completes (flags, map index and
 * the per-opening file's index into the database; the files themselves are already in storage).
 */
import { getDb } from '@/db/client';
import { storage } from '@/lib/storage';
import { isTerminal, type JobEvent } from './events';
import { finishJob } from './finish-job';
import { analysisRelDir } from './paths';
import type { RemoteJobResult, RemoteTask } from './remote-task';
import { jobMaxAttempts, resultBudgetOf } from './job-limits';
import { saveResultRows } from './save-results';
import type { AnalysisStatus } from '@/db/schema';

/** The task of a queued analysis; null when it or its revision is gone (then it is marked failed). */
export function remoteTaskOf(analysisId: string): RemoteTask | null {
  const sqlite = getDb().$client;
  const row = sqlite
    .prepare(
      `SELECT a.settings, a.model, r.stored_path, r.top_cell, p.team_id FROM analyses a
         LEFT JOIN layout_revisions r ON r.id = a.revision_id LEFT JOIN projects p ON p.id = a.project_id WHERE a.id = ?`,
    )
    .get(analysisId) as { settings: string; model: string; stored_path: string | null; top_cell: string | null; team_id: string | null } | undefined;
  if (!row) return null;
  if (row.stored_path === null) {
    finishJob(analysisId, 'failed', { code: 'missing-revision', message: 'the layout revision of this analysis no longer exists' });
    return null;
  }
  return { storedPath: row.stored_path, topCell: row.top_cell ?? '', settings: JSON.parse(row.settings), model: JSON.parse(row.model), budget: resultBudgetOf(row.team_id ?? '') };
}

/**
 * A worker picked the job up: the row goes to running and counts the attempt. False when the worker must stop it:
 * the analysis finished or was cancelled meanwhile, or this pick-up is over the attempt cap (then marked failed).
 */
export function recordPickup(analysisId: string): boolean {
  const sqlite = getDb().$client;
  const row = sqlite
    .prepare(
      `UPDATE analyses SET status = 'running', stage = 'starting', progress = 0, started_at = ?, attempts = attempts + 1,
         error_code = NULL, error_message = NULL WHERE id = ? AND status IN ('queued', 'running') RETURNING attempts`,
    )
    .get(Date.now(), analysisId) as { attempts: number } | undefined;
  if (!row) return false;
  const max = jobMaxAttempts();
  if (row.attempts > max) {
    finishJob(analysisId, 'failed', {
      code: 'too-many-attempts',
      message: `This analysis was interrupted ${row.attempts - 1 === 1 ? 'once' : `${row.attempts - 1} times`} (its worker process stopped while it ran) and was not started again (limit: ${max} attempts, TRENCHANT_JOB_MAX_ATTEMPTS). Try a coarser pixel or a smaller layout, or start it again.`,
    });
    return false;
  }
  return true;
}

const lastWrite = new Map<string, { at: number; stage: string | null }>();

/** Progress of a running job into its row, at most every 500 ms (and at every stage change). */
export function recordProgress(event: JobEvent): void {
  if (event.status !== 'running') return;
  const last = lastWrite.get(event.analysisId);
  const now = Date.now();
  if (last && last.stage === event.stage && now - last.at < 500) return;
  lastWrite.set(event.analysisId, { at: now, stage: event.stage });
  getDb().$client.prepare("UPDATE analyses SET stage = ?, progress = ? WHERE id = ? AND status = 'running'").run(event.stage, event.progress, event.analysisId);
}

/** A job's return value: results saved and the row done, or the failure recorded; a cancelled row stays cancelled. */
export async function recordResult(analysisId: string, result: RemoteJobResult): Promise<void> {
  lastWrite.delete(analysisId);
  const status = (getDb().$client.prepare('SELECT status FROM analyses WHERE id = ?').get(analysisId) as { status: AnalysisStatus } | undefined)?.status;
  if (!status || isTerminal(status)) {
    // Cancelled, failed or gone while the worker finished: its files must not linger (a done row keeps its own).
    if (result.ok && status !== 'done') await storage().deletePrefix(`${analysisRelDir(analysisId)}/`);
    return;
  }
  if (!result.ok) {
    finishJob(analysisId, result.code === 'cancelled' ? 'cancelled' : 'failed', { code: result.code, message: result.code === 'cancelled' ? 'Cancelled.' : result.message });
    return;
  }
  const { remote: _remote, ...ok } = result;
  await saveResultRows(getDb(), analysisId, ok);
  finishJob(analysisId, 'done', null, { summary: ok.summary, resultDir: analysisRelDir(analysisId) });
}

/** The queue gave up on a job (retries used up, or it stalled too often): failed, unless it already ended. */
export function recordQueueFailure(analysisId: string, reason: string): void {
  lastWrite.delete(analysisId);
  finishJob(analysisId, 'failed', { code: 'worker-crash', message: `The analysis could not be run by a queue worker: ${reason.replace(/\s+/g, ' ').slice(0, 300)}` });
}
