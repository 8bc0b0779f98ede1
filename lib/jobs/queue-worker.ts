/**
 * A BullMQ worker process (`npm run worker`): takes analysis jobs from Redis and runs each in the same piscina
 * pool and with the same steps as the embedded backend (lib/jobs/runner.ts, started per job with runById). It
 * needs the server's database file (same TRENCHANT_DB, e.g. on a shared disk), TRENCHANT_REDIS_URL, and the data
 * folder (TRENCHANT_DATA_DIR) unless layouts and results are on S3 (the same TRENCHANT_S3_*; lib/storage).
 *
 * Failure handling:
 *   - the worker process dies mid-job (kill -9, out of memory, power loss): its lock on the job lapses, BullMQ's
 *     stalled-job check puts the job back and another worker takes it; the analyses row counts the attempt, and
 *     past TRENCHANT_JOB_MAX_ATTEMPTS pick-ups the job is marked failed, as in the embedded pool;
 *   - an error of the worker itself before the job starts (database busy): thrown to BullMQ, which retries with
 *     exponential backoff up to the same number of attempts, then the job is marked failed;
 *   - cancel: the server publishes the id; the worker running it stops it (the same shared-memory flag and grace
 *     period as the embedded pool). A cancel key in Redis covers a job that is picked up after the message.
 * Progress and final states go to Redis pub/sub, where the server hands them to its SSE subscribers.
 */
import { UnrecoverableError, Worker, type Job, type WorkerOptions } from 'bullmq';
import type { Redis } from 'ioredis';
import { storage } from '@/lib/storage';
import { cancelChannel, cancelKey, eventsChannel, lockMs, openRedis, QUEUE_NAME, redisPrefix, safeUrl, type AnalysisJobData } from './bullmq-shared';
import { setJobEventRelay, type JobEvent } from './events';
import { RemoteTaskRunner } from './remote-runner';
import type { RemoteJobResult } from './remote-task';
import { jobMaxAttempts } from './job-limits';
import { JobRunner } from './runner';

export type QueueWorker = { close: () => Promise<void>; concurrency: number };

/** TRENCHANT_WORKER_DB=none: this worker opens no database (lib/jobs/remote-runner.ts); the server records. */
export function workerWithoutDatabase(): boolean {
  return process.env.TRENCHANT_WORKER_DB?.trim().toLowerCase() === 'none';
}

/** The BullMQ Worker options both kinds of worker use: lock, stall checks and the stall cap. */
export function workerOptions(connection: Redis, concurrency: number): WorkerOptions {
  const lock = lockMs();
  return {
    connection,
    prefix: redisPrefix(),
    concurrency,
    lockDuration: lock,
    stalledInterval: Math.max(1_000, Math.floor(lock / 2)),
    // The analyses row counts pick-ups and fails the job past the cap with a clear message; BullMQ allows one
    // more stall so that check is the one that decides.
    maxStalledCount: jobMaxAttempts(),
  };
}

export async function startQueueWorker(url: string, log: (line: string) => void = (l) => console.log(l)): Promise<QueueWorker> {
  if (workerWithoutDatabase()) return startRemoteWorker(url, log);
  const runner = new JobRunner({ autoPump: false });
  const pub = openRedis(url, 'worker');
  const sub = openRedis(url, 'worker-cancel');
  const connection = openRedis(url, 'worker-jobs');

  setJobEventRelay((event) => {
    void pub.publish(eventsChannel(), JSON.stringify(event)).catch(() => undefined);
  });
  await sub.subscribe(cancelChannel());
  sub.on('message', (channel: string, analysisId: string) => {
    if (channel === cancelChannel() && runner.isRunning(analysisId)) runner.cancel(analysisId);
  });

  const processor = async (job: Job<AnalysisJobData>) => {
    const analysisId = job.data.analysisId;
    // Throws on a database error: BullMQ retries the job after a backoff.
    const running = runner.runById(analysisId);
    if (!running) return { ran: false }; // finished, cancelled, or over the attempt cap (marked failed)
    log(`[trenchant] worker ${process.pid}: analysis ${analysisId} started (pick-up ${job.attemptsStarted}, stalled ${job.stalledCounter})`);
    if (await pub.get(cancelKey(analysisId)).catch(() => null)) runner.cancel(analysisId);
    await running;
    log(`[trenchant] worker ${process.pid}: analysis ${analysisId} ended`);
    return { ran: true };
  };

  const worker = new Worker<AnalysisJobData>(QUEUE_NAME, processor, workerOptions(connection, runner.concurrency));
  worker.on('error', (err) => console.error('[trenchant] worker:', err.message));
  worker.on('failed', (job, err) => {
    if (!job) return;
    const final = job.attemptsMade >= (job.opts.attempts ?? 1) || /stalled more than allowable limit/i.test(err.message);
    if (!final) {
      log(`[trenchant] worker ${process.pid}: analysis ${job.data.analysisId} will be retried (${err.message})`);
      return;
    }
    try {
      runner.failJob(job.data.analysisId, 'worker-crash', `The analysis could not be run by a queue worker after ${job.attemptsMade} attempts: ${err.message.replace(/\s+/g, ' ').slice(0, 300)}`);
    } catch (e) {
      // The database is still unusable: the row stays as it is; the server's start-up requeues it.
      console.error(`[trenchant] worker ${process.pid}: could not mark analysis ${job.data.analysisId} failed:`, e instanceof Error ? e.message : e);
    }
  });
  await worker.waitUntilReady();
  log(`[trenchant] queue worker ${process.pid} on ${safeUrl(url)}: up to ${runner.concurrency} analyses at a time`);

  return {
    concurrency: runner.concurrency,
    close: async () => {
      await worker.close();
      setJobEventRelay(null);
      await runner.close();
      sub.disconnect();
      pub.disconnect();
      connection.disconnect();
    },
  };
}

/**
 * A worker without the database: the job's data carries the task, pick-ups and progress go to the server over
 * Redis pub/sub (it writes the row), and the result is the job's return value, which the server records when
 * BullMQ reports the completion (lib/jobs/remote-results.ts). Files go through lib/storage, so with storage on S3
 * this worker shares nothing with the server but Redis and the bucket.
 */
async function startRemoteWorker(url: string, log: (line: string) => void): Promise<QueueWorker> {
  const runner = new RemoteTaskRunner();
  const pub = openRedis(url, 'worker');
  const sub = openRedis(url, 'worker-cancel');
  const connection = openRedis(url, 'worker-jobs');
  const send = (event: JobEvent, mark: { pickup?: true } = {}) => void pub.publish(eventsChannel(), JSON.stringify({ ...event, remote: true, ...mark })).catch(() => undefined);
  await sub.subscribe(cancelChannel());
  sub.on('message', (channel: string, analysisId: string) => {
    if (channel === cancelChannel()) runner.cancel(analysisId);
  });

  const processor = async (job: Job<AnalysisJobData>): Promise<RemoteJobResult> => {
    const { analysisId, task } = job.data;
    // A job added by a server that does not send tasks cannot run here; retrying would not help.
    if (!task) throw new UnrecoverableError('the job carries no task (the server is older than this worker); run a worker with the database');
    if (await pub.get(cancelKey(analysisId))) return { remote: true, ok: false, code: 'cancelled', message: 'Cancelled before it started.' };
    send({ analysisId, status: 'running', stage: 'starting', progress: 0, errorMessage: null }, { pickup: true });
    log(`[trenchant] worker ${process.pid}: analysis ${analysisId} started (pick-up ${job.attemptsStarted}, stalled ${job.stalledCounter})`);
    const running = runner.run(analysisId, task, (stage, progress) => send({ analysisId, status: 'running', stage, progress, errorMessage: null }));
    // The cancel may have been sent between the check above and now.
    if (await pub.get(cancelKey(analysisId)).catch(() => null)) runner.cancel(analysisId);
    const result = await running;
    log(`[trenchant] worker ${process.pid}: analysis ${analysisId} ended (${result.ok ? 'results stored' : result.code})`);
    return result;
  };

  const worker = new Worker<AnalysisJobData, RemoteJobResult>(QUEUE_NAME, processor, workerOptions(connection, runner.concurrency));
  worker.on('error', (err) => console.error('[trenchant] worker:', err.message));
  worker.on('failed', (job, err) => {
    if (job) log(`[trenchant] worker ${process.pid}: analysis ${job.data.analysisId} failed in the worker (${err.message}); the queue retries it or the server marks it failed`);
  });
  await worker.waitUntilReady();
  log(`[trenchant] queue worker ${process.pid} on ${safeUrl(url)} without a database (files: ${storage().where}): up to ${runner.concurrency} analyses at a time`);
  return {
    concurrency: runner.concurrency,
    close: async () => {
      await worker.close();
      await runner.close();
      sub.disconnect();
      pub.disconnect();
      connection.disconnect();
    },
  };
}
