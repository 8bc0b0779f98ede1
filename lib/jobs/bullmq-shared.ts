/**
 * What the server and the BullMQ worker processes agree on: queue name, key prefix, pub/sub channels, job options
 * and how to open a Redis connection. Both sides read the same environment (TRENCHANT_REDIS_URL and the
 * TRENCHANT_QUEUE_* tuning variables below).
 */
import { Redis } from 'ioredis';
import type { JobsOptions } from 'bullmq';
import type { RemoteTask } from './remote-task';
import { jobMaxAttempts } from './job-limits';

export const QUEUE_NAME = 'analyses';

/** Key prefix of everything Trenchant keeps in Redis (TRENCHANT_REDIS_PREFIX, default "trenchant"). */
export function redisPrefix(): string {
  return process.env.TRENCHANT_REDIS_PREFIX?.trim() || 'trenchant';
}
/** Worker processes publish every job event here (JSON of a JobEvent). */
export const eventsChannel = () => `${redisPrefix()}:job-events`;
/** The server publishes an analysis id here to stop it wherever it runs. */
export const cancelChannel = () => `${redisPrefix()}:job-cancel`;
/** Set with the cancel message so a worker that picks the job up later (a retry) still sees it. */
export const cancelKey = (analysisId: string) => `${redisPrefix()}:cancelled:${analysisId}`;
export const CANCEL_KEY_TTL_S = 7 * 24 * 3600;

function envMs(name: string, fallback: number): number {
  const v = Number(process.env[name]);
  return Number.isFinite(v) && v > 0 ? v : fallback;
}

/** First retry delay after a worker error; doubles each retry (TRENCHANT_QUEUE_BACKOFF_MS, default 5 s). */
export const backoffMs = () => envMs('TRENCHANT_QUEUE_BACKOFF_MS', 5_000);
/**
 * How long a worker's claim on a job lasts without renewal; a worker that dies (kill -9, power loss) loses its
 * jobs to another worker after about this long (TRENCHANT_QUEUE_LOCK_MS, default 30 s). The analysis runs in a
 * thread, so the worker's event loop stays free to renew the lock.
 */
export const lockMs = () => envMs('TRENCHANT_QUEUE_LOCK_MS', 30_000);

/** One BullMQ job per analysis, its id the analysis id (adding it twice is a no-op). */
export function analysisJobOptions(analysisId: string): JobsOptions {
  return {
    jobId: analysisId,
    // Retries for errors of the worker itself (database busy, pool could not start); failures of the analysis
    // (bad input, over budget, crash of its thread) are final, as in the embedded pool.
    attempts: jobMaxAttempts(),
    backoff: { type: 'exponential', delay: backoffMs() },
    removeOnComplete: true,
    removeOnFail: true,
  };
}

/** `task`: what a worker without the database needs (lib/jobs/remote-task.ts); database workers read the row. */
export type AnalysisJobData = { analysisId: string; task?: RemoteTask };

/** A connection as BullMQ workers need it (commands wait for a reconnect instead of failing). */
export function openRedis(url: string, role: string): Redis {
  const redis = new Redis(url, { maxRetriesPerRequest: null, connectionName: `trenchant-${role}` });
  let lastLog = 0;
  redis.on('error', (err: Error) => {
    // ioredis reconnects by itself; say so at most every 10 s instead of once per attempt.
    if (Date.now() - lastLog < 10_000) return;
    lastLog = Date.now();
    console.error(`[trenchant] Redis (${role}) at ${safeUrl(url)}: ${err.message}`);
  });
  return redis;
}

/** The URL without its password, for logs. */
export function safeUrl(url: string): string {
  try {
    const u = new URL(url);
    if (u.password) u.password = '***';
    return u.toString();
  } catch {
    return 'the configured URL';
  }
}
