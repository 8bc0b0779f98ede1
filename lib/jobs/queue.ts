/**
 * The analysis job queue behind one interface, with two backends:
 *   - embedded (default): the analyses table is the queue and a piscina pool in this server process runs the jobs
 *     (lib/jobs/runner.ts);
 *   - bullmq: when TRENCHANT_REDIS_URL is set, the server only enqueues on Redis (lib/jobs/bullmq-queue.ts) and
 *     worker processes started with `npm run worker` run the jobs (lib/jobs/queue-worker.ts), on this machine or
 *     others that share the database file and the data folder — or, with TRENCHANT_WORKER_DB=none and files on
 *     S3, nothing but Redis and the bucket (lib/jobs/remote-runner.ts, lib/jobs/remote-results.ts).
 * Either way the analyses table holds the job state the pages and API read, and progress reaches the browser
 * through lib/jobs/events.ts (relayed over Redis pub/sub from worker processes).
 */
import type { AnalysisStatus } from '@/db/schema';
import { BullJobQueue } from './bullmq-queue';
import { jobRunner } from './runner';

export interface JobQueue {
  readonly kind: 'embedded' | 'bullmq';
  /** Jobs this process runs at once (embedded), or each worker process runs at once (bullmq). */
  readonly concurrency: number;
  /** Hands queued analyses to the backend. Safe to call any time, from anywhere; never throws. */
  pump(): void;
  /**
   * Cancels a queued or running job. Returns the status afterwards ('cancelled', or 'running' while a running
   * job is stopping), or null when the job had already finished.
   */
  cancel(analysisId: string): AnalysisStatus | null;
  /** Start-up: jobs left running by a process that is gone go back to the queue; returns how many. */
  requeueInterrupted(): number | Promise<number>;
  close(): Promise<void>;
}

/** The Redis URL that selects the BullMQ backend, or null for the embedded pool. */
export function redisUrl(): string | null {
  const url = process.env.TRENCHANT_REDIS_URL?.trim();
  return url ? url : null;
}

const holder = globalThis as typeof globalThis & { __trenchantJobQueue?: JobQueue };

/** The process's job queue (one per process, kept on globalThis like the runner). */
export function jobQueue(): JobQueue {
  const url = redisUrl();
  holder.__trenchantJobQueue ??= url ? new BullJobQueue(url) : jobRunner();
  return holder.__trenchantJobQueue;
}
