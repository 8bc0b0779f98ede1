/**
 * The analysis job runner: a piscina pool of worker threads fed from the `analyses` table (the queue). At most
 * TRENCHANT_JOB_CONCURRENCY jobs run at once (default: one per two cores, at least 1). Progress goes to the DB
 * (throttled) and to SSE subscribers (every message). Cancel sets a flag in shared memory (SharedArrayBuffer) that
 * the worker polls at every check point, also in the middle of the synchronous analysis, and terminates the
 * thread if it has not stopped within a grace period. A job that throws, or whose thread dies (out of memory,
 * native crash), is marked failed with its message; the server and other jobs carry on. A job requeued after a
 * shutdown runs again, at most TRENCHANT_JOB_MAX_ATTEMPTS times in all (default 3): one that keeps taking the
 * process down is then marked failed instead of crashing every restart.
 * Each job may write at most the team's per-analysis result limit, and no more than is left of the team's quota
 * of stored results (lib/jobs/team-limits.ts); the worker refuses before writing anything.
 * One runner per process, kept on globalThis (Next may load this module in several bundles). This is the embedded
 * backend of lib/jobs/queue.ts; a BullMQ worker process (lib/jobs/queue-worker.ts) reuses it with `autoPump: false`
 * and starts the jobs Redis hands it with runById().
 * Claiming a job from the table: claim-job.ts; attempts, concurrency and result budgets: job-limits.ts.
 */
import { existsSync } from 'node:fs';
import { getDb } from '@/db/client';
import type { AnalysisStatus } from '@/db/schema';
import type { WorkerMessage } from '@/lib/pipeline/worker';
import { wholeReadLimitBytes } from '@/lib/layout/whole-read-limit';
import { isStorageNotFound, storage } from '@/lib/storage';
import { localInput, resultStaging, type LocalInput, type ResultStaging } from '@/lib/storage/job-files';
import { isTerminal, publishJobEvent } from './events';
import { finishJob } from './finish-job';
import type { JobQueue } from './queue';
import { claimJob, type ClaimedRow } from './claim-job';
import { jobConcurrency, resultBudgetOf } from './job-limits';
import { analysisRelDir } from './paths';
import { newAnalysisPool, newTaskControl, requestCancel, runPoolTask, type AnalysisPool, type PoolTaskInput, type TaskControl } from './pool-task';
import { saveResultRows } from './save-results';
import { forgetWorkerFile, workerFile } from './worker-file';

/** DB progress writes at most this often per job (SSE subscribers get every message). */
const PROGRESS_WRITE_MS = 500;

type RunningJob = TaskControl & {
  analysisId: string;
  started: boolean;
  crash: string | null;
};

export { jobConcurrency, jobMaxAttempts, resultBudgetOf, type ResultBudget } from './job-limits';

export class JobRunner implements JobQueue {
  readonly kind = 'embedded' as const;
  /** False in a BullMQ worker: jobs come from Redis (runById), never straight from the table. */
  private readonly autoPump: boolean;
  constructor(options: { autoPump?: boolean } = {}) {
    this.autoPump = options.autoPump ?? true;
  }
  private pool: AnalysisPool | null = null;
  private readonly running = new Map<string, RunningJob>();
  private pumping = false;
  private pumpAgain = false;
  readonly concurrency = jobConcurrency();

  private poolFile = '';

  private async getPool(): Promise<AnalysisPool> {
    // If the compiled worker was removed while the server runs, compile it again and start a new pool for new
    // jobs (the old one finishes its running tasks, then closes).
    if (this.pool && !existsSync(/*turbopackIgnore: true*/ this.poolFile)) {
      void this.pool.close().catch(() => undefined);
      this.pool = null;
      forgetWorkerFile();
    }
    if (this.pool) return this.pool;
    const filename = await workerFile();
    this.poolFile = filename;
    this.pool ??= newAnalysisPool(filename, this.concurrency);
    // A thread that fails to start (e.g. the worker file vanished) reports here, not through its task, whose
    // promise would then never settle: fail the jobs that have not heard from their worker yet.
    this.pool.on('error', (err: unknown) => {
      console.error('[trenchant] analysis worker error:', err);
      const message = err instanceof Error ? err.message : String(err);
      for (const job of this.running.values()) {
        if (job.started) continue;
        job.crash = `The analysis worker could not start: ${oneLine(message)}`;
        job.controller.abort();
      }
    });
    return this.pool;
  }

  /** Starts queued jobs while there is room. Safe to call any time, from anywhere. */
  pump(): void {
    if (!this.autoPump) return;
    if (this.pumping) {
      this.pumpAgain = true;
      return;
    }
    this.pumping = true;
    try {
      do {
        this.pumpAgain = false;
        while (this.running.size < this.concurrency) {
          const row = claimJob();
          if (!row) break;
          void this.start(row);
        }
      } while (this.pumpAgain);
    } finally {
      this.pumping = false;
    }
  }

  private start(row: ClaimedRow): Promise<void> {
    const job: RunningJob = { ...newTaskControl(), analysisId: row.id, started: false, crash: null };
    this.running.set(row.id, job);
    return this.run(job, row).finally(() => {
      this.running.delete(row.id);
      this.pump();
    });
  }

  /**
   * Queue backends that hand out jobs themselves (BullMQ): claims this analysis if it is queued, or 'running' but
   * not here (its previous worker died), and runs it. Null when it is finished, cancelled or over the attempt cap
   * (then marked failed). The job is registered as running before this returns, so cancel() reaches it at once.
   */
  runById(analysisId: string): Promise<void> | null {
    if (this.running.has(analysisId)) return null;
    const row = claimJob(analysisId);
    return row ? this.start(row) : null;
  }

  /** Marks a job failed from outside a run (e.g. the queue gave up on it); no-op when it already finished. */
  failJob(analysisId: string, code: string, message: string): void {
    finishJob(analysisId, 'failed', { code, message });
  }

  private async run(job: RunningJob, row: ClaimedRow): Promise<void> {
    // Results are written to a local folder and stored under analyses/<id>/ (on S3: uploaded when the worker is
    // done); the layout is read from a local file (on S3: downloaded for this job and removed after it).
    const store = storage();
    const resultKey = analysisRelDir(row.id);
    let staging: ResultStaging | null = null;
    let layout: LocalInput | null = null;
    const discard = () => (staging ? staging.discard() : store.deletePrefix(`${resultKey}/`).then(() => undefined));
    let lastWrite = 0;
    let lastStage = '';
    const progress = (stage: string, fraction: number) => {
      publishJobEvent({ analysisId: row.id, status: 'running', stage, progress: fraction, errorMessage: null });
      const now = Date.now();
      if (stage !== lastStage || now - lastWrite >= PROGRESS_WRITE_MS) {
        lastStage = stage;
        lastWrite = now;
        getDb().$client.prepare("UPDATE analyses SET stage = ?, progress = ? WHERE id = ? AND status = 'running'").run(stage, fraction, row.id);
      }
    };
    try {
      await store.deletePrefix(`${resultKey}/`); // leftovers of an interrupted attempt
      const budget = resultBudgetOf(row.team_id);
      if (!budget.ok) {
        finishJob(row.id, 'failed', { code: 'over-quota', message: budget.message });
        return;
      }
      staging = await resultStaging(store, resultKey);
      layout = await localInput(store, row.stored_path);
      const pool = await this.getPool();
      const task: PoolTaskInput = {
        layoutPath: layout.path,
        settings: JSON.parse(row.settings),
        model: JSON.parse(row.model),
        outDir: staging.dir,
        maxResultBytes: budget.maxBytes,
        resultBudgetLabel: budget.label,
        wholeReadBytes: wholeReadLimitBytes(),
        storedLayout: { key: row.stored_path, where: store.where },
        ...(row.top_cell ? { topCell: row.top_cell } : {}),
      };
      const result = await runPoolTask(pool, job, task, (m: WorkerMessage) => {
        job.started = true;
        // Last 5 % is kept for saving the results in the database.
        if (m?.type === 'progress' && m.stage !== 'done') progress(m.stage, Math.min(0.95, m.fraction * 0.95));
      });
      if (!result.ok) {
        await discard();
        if (result.code === 'cancelled') finishJob(row.id, 'cancelled', { code: 'cancelled', message: 'Cancelled.' });
        else finishJob(row.id, 'failed', { code: result.code, message: result.message });
        return;
      }
      progress('saving', 0.95);
      // Results on S3: the files go into the read cache as they are uploaded (moved, not downloaded again), so the
      // review pages never wait for the bucket after an embedded run (lib/jobs/warm-results.ts for other runs).
      await staging.commit({ cache: () => true });
      await saveResultRows(getDb(), row.id, result, (f) => progress('saving', 0.95 + 0.049 * f));
      if (job.cancelRequested) {
        await discard();
        finishJob(row.id, 'cancelled', { code: 'cancelled', message: 'Cancelled.' });
        return;
      }
      finishJob(row.id, 'done', null, { summary: result.summary, resultDir: analysisRelDir(row.id) });
    } catch (err) {
      await discard().catch(() => undefined);
      if (job.crash) {
        finishJob(row.id, 'failed', { code: 'worker-crash', message: job.crash });
      } else if (isStorageNotFound(err)) {
        finishJob(row.id, 'failed', { code: 'missing-revision', message: `The layout file of this revision is missing from storage (${err.key}); upload the layout again.` });
      } else if (job.cancelRequested || job.controller.signal.aborted) {
        finishJob(row.id, 'cancelled', { code: 'cancelled', message: 'Cancelled (the worker was stopped).' });
      } else {
        const message = err instanceof Error ? err.message : String(err);
        console.error(`[trenchant] analysis ${row.id} failed in its worker:`, err);
        finishJob(row.id, 'failed', { code: 'worker-crash', message: `The analysis stopped with an internal error: ${oneLine(message)}` });
      }
    } finally {
      await layout?.release().catch(() => undefined);
    }
  }

  /**
   * Cancels a queued or running job. Returns the status afterwards ('cancelled', or 'running' while a running
   * job is stopping), or null when the job had already finished.
   */
  cancel(analysisId: string): AnalysisStatus | null {
    const sqlite = getDb().$client;
    const job = this.running.get(analysisId);
    if (job) {
      // The worker stops at its next check point; if it does not, its thread is terminated.
      requestCancel(job, () => this.running.get(analysisId) === job);
      return 'running';
    }
    const row = sqlite.prepare('SELECT status FROM analyses WHERE id = ?').get(analysisId) as { status: AnalysisStatus } | undefined;
    if (!row) return null;
    if (isTerminal(row.status)) return null;
    // Queued (or marked running by a previous process that died): nothing runs it here, so cancel in place.
    finishJob(analysisId, 'cancelled', { code: 'cancelled', message: 'Cancelled before it started.' });
    return 'cancelled';
  }

  isRunning(analysisId: string): boolean {
    return this.running.has(analysisId);
  }

  /** Start-up: jobs left running by a previous process go back to the queue; then start the queue. */
  requeueInterrupted(): number {
    const sqlite = getDb().$client;
    const ids = [...this.running.keys()];
    const res = sqlite
      .prepare(
        `UPDATE analyses SET status = 'queued', stage = 'requeued', progress = 0 WHERE status = 'running'${ids.length ? ` AND id NOT IN (${ids.map(() => '?').join(',')})` : ''}`,
      )
      .run(...ids);
    return res.changes;
  }

  async close(): Promise<void> {
    await this.pool?.destroy();
    this.pool = null;
  }
}

function oneLine(s: string): string {
  return s.replace(/\s*\n\s*/g, ' ').slice(0, 500);
}

const holder = globalThis as typeof globalThis & { __trenchantJobRunner?: JobRunner };

export function jobRunner(): JobRunner {
  holder.__trenchantJobRunner ??= new JobRunner();
  return holder.__trenchantJobRunner;
}
