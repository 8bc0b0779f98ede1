/**
 * Runs analyses for a queue worker that has no database (TRENCHANT_WORKER_DB=none): the task comes in the job's
 * data (remote-task.ts), the layout from storage into a temporary file, the results go to storage, and the summary,
 * flags and map index go back as the job's return value for the server to record. The same piscina worker, cancel
 * flag and grace period as the embedded pool (runner.ts; both through pool-task.ts); progress goes to `onProgress` (the worker sends it to the
 * server over Redis).
 */
import type { AnalysisTaskResult, WorkerMessage } from '@/lib/pipeline/worker';
import { wholeReadLimitBytes } from '@/lib/layout/whole-read-limit';
import { isStorageNotFound, storage } from '@/lib/storage';
import { localInput, resultStaging, type LocalInput, type ResultStaging } from '@/lib/storage/job-files';
import { analysisRelDir } from './paths';
import { newAnalysisPool, newTaskControl, requestCancel, runPoolTask, type AnalysisPool, type TaskControl } from './pool-task';
import type { RemoteJobResult, RemoteTask } from './remote-task';
import { jobConcurrency } from './job-limits';
import { workerFile } from './worker-file';

export class RemoteTaskRunner {
  readonly concurrency = jobConcurrency();
  private pool: AnalysisPool | null = null;
  private readonly running = new Map<string, TaskControl>();

  private async getPool(): Promise<AnalysisPool> {
    if (this.pool) return this.pool;
    this.pool = newAnalysisPool(await workerFile(), this.concurrency);
    return this.pool;
  }

  isRunning(analysisId: string): boolean {
    return this.running.has(analysisId);
  }

  /** Stops a running job at its next check point; its thread is ended if it has not stopped within 3 s. */
  cancel(analysisId: string): void {
    const job = this.running.get(analysisId);
    if (job) requestCancel(job, () => this.running.get(analysisId) === job);
  }

  /**
   * Runs one analysis. Analysis failures (bad input, over budget, cancelled, thread crash) resolve with ok: false
   * and leave nothing in storage; errors of the worker itself (storage unreachable) reject, for the queue to retry.
   */
  async run(analysisId: string, task: RemoteTask, onProgress: (stage: string, fraction: number) => void): Promise<RemoteJobResult> {
    if (!task.budget.ok) return { remote: true, ok: false, code: 'over-quota', message: task.budget.message };
    const job = newTaskControl();
    this.running.set(analysisId, job);
    const store = storage();
    const resultKey = analysisRelDir(analysisId);
    let staging: ResultStaging | null = null;
    let layout: LocalInput | null = null;
    try {
      await store.deletePrefix(`${resultKey}/`); // leftovers of an interrupted attempt
      staging = await resultStaging(store, resultKey);
      try {
        layout = await localInput(store, task.storedPath);
      } catch (err) {
        if (isStorageNotFound(err)) return { remote: true, ok: false, code: 'missing-revision', message: `The layout file of this revision is missing from storage (${err.key}); upload the layout again.` };
        throw err;
      }
      const pool = await this.getPool();
      let result: AnalysisTaskResult;
      try {
        result = await runPoolTask(
          pool,
          job,
          {
            layoutPath: layout.path,
            settings: task.settings,
            model: task.model,
            outDir: staging.dir,
            maxResultBytes: task.budget.maxBytes,
            resultBudgetLabel: task.budget.label,
            wholeReadBytes: wholeReadLimitBytes(),
            storedLayout: { key: task.storedPath, where: store.where },
            ...(task.topCell ? { topCell: task.topCell } : {}),
          },
          (m: WorkerMessage) => {
            // The last 5 % is the server's, for saving the results in its database.
            if (m?.type === 'progress' && m.stage !== 'done') onProgress(m.stage, Math.min(0.95, m.fraction * 0.95));
          },
        );
      } catch (err) {
        if (job.cancelRequested || job.controller.signal.aborted) return { remote: true, ok: false, code: 'cancelled', message: 'Cancelled (the worker was stopped).' };
        const message = err instanceof Error ? err.message : String(err);
        return { remote: true, ok: false, code: 'worker-crash', message: `The analysis stopped with an internal error: ${message.replace(/\s*\n\s*/g, ' ').slice(0, 500)}` };
      }
      if (!result.ok || job.cancelRequested) {
        await staging.discard();
        return result.ok ? { remote: true, ok: false, code: 'cancelled', message: 'Cancelled.' } : { ...result, remote: true };
      }
      onProgress('saving', 0.95);
      await staging.commit();
      return { ...result, remote: true };
    } catch (err) {
      await staging?.discard().catch(() => undefined);
      throw err;
    } finally {
      this.running.delete(analysisId);
      await layout?.release().catch(() => undefined);
    }
  }

  async close(): Promise<void> {
    await this.pool?.destroy();
    this.pool = null;
  }
}
