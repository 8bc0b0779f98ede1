/**
 * Taking a job off the `analyses` table (the embedded queue): marks it running and counts the attempt in one
 * UPDATE, so two pumps never claim the same job; a job over the attempt cap or whose revision is gone is failed
 * instead.
 */
import { getDb } from '@/db/client';
import { publishJobEvent } from './events';
import { finishJob } from './finish-job';
import { jobMaxAttempts } from './job-limits';

/** What the runner needs to start a claimed job. */
export type ClaimedRow = {
  id: string;
  settings: string;
  model: string;
  stored_path: string;
  top_cell: string;
  team_id: string;
};

/**
 * Marks the oldest queued job running and returns what the worker needs; null when the queue is empty. With an
 * id: that job, if it is queued or left running by a worker that died.
 */
export function claimJob(analysisId?: string): ClaimedRow | null {
  const sqlite = getDb().$client;
  const which =
    analysisId === undefined ? `(SELECT id FROM analyses WHERE status = 'queued' ORDER BY created_at, id LIMIT 1)` : `? AND status IN ('queued', 'running')`;
  const row = sqlite
    .prepare(
      `UPDATE analyses SET status = 'running', stage = 'starting', progress = 0, started_at = ?, attempts = attempts + 1,
         error_code = NULL, error_message = NULL
       WHERE id = ${which}
       RETURNING id, settings, model, revision_id, project_id, attempts`,
    )
    .get(...(analysisId === undefined ? [Date.now()] : [Date.now(), analysisId])) as { id: string; settings: string; model: string; revision_id: string; project_id: string; attempts: number } | undefined;
  if (!row) return null;
  const maxAttempts = jobMaxAttempts();
  if (row.attempts > maxAttempts) {
    finishJob(row.id, 'failed', {
      code: 'too-many-attempts',
      message: `This analysis was interrupted ${row.attempts - 1 === 1 ? 'once' : `${row.attempts - 1} times`} (${analysisId === undefined ? 'the server' : 'its worker process'} stopped while it ran) and was not started again (limit: ${maxAttempts} attempts, TRENCHANT_JOB_MAX_ATTEMPTS). Try a coarser pixel or a smaller layout, or start it again.`,
    });
    return analysisId === undefined ? claimJob() : null;
  }
  const rev = sqlite.prepare('SELECT stored_path, top_cell FROM layout_revisions WHERE id = ?').get(row.revision_id) as
    | { stored_path: string; top_cell: string }
    | undefined;
  if (!rev) {
    finishJob(row.id, 'failed', { code: 'missing-revision', message: 'the layout revision of this analysis no longer exists' });
    return analysisId === undefined ? claimJob() : null;
  }
  const team = sqlite.prepare('SELECT team_id FROM projects WHERE id = ?').get(row.project_id) as { team_id: string } | undefined;
  publishJobEvent({ analysisId: row.id, status: 'running', stage: 'starting', progress: 0, errorMessage: null });
  return { id: row.id, settings: row.settings, model: row.model, stored_path: rev.stored_path, top_cell: rev.top_cell, team_id: team?.team_id ?? '' };
}
