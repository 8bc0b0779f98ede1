/**
 * Retries with exponential backoff in the BullMQ backend, in-process against a real redis-server: a worker whose
 * database is locked (another connection holds an exclusive transaction) cannot claim its job; BullMQ retries it
 * after 300 ms, then 600 ms (delay × 2^(n−1), BullMQ's documented exponential backoff); once the lock is gone the
 * job is claimed and runs. When every attempt fails BullMQ gives the job up after TRENCHANT_JOB_MAX_ATTEMPTS.
 */
import Database from 'better-sqlite3';
import { Queue } from 'bullmq';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { setDbForTesting, type Db } from '@/db/client';
import { analysisJobOptions, QUEUE_NAME, redisPrefix } from '@/lib/jobs/bullmq-shared';
import { startQueueWorker, type QueueWorker } from '@/lib/jobs/queue-worker';
import { startTestRedis, type TestRedis } from './redis-server';
import { tempDb } from './results-store';

const BACKOFF_MS = 300;

describe('BullMQ retries with exponential backoff', () => {
  let redis: TestRedis;
  let dir: string;
  let db: Db;
  let queue: Queue;
  let worker: QueueWorker;
  const logs: { at: number; line: string }[] = [];
  const saved = { ...process.env };

  beforeAll(async () => {
    redis = await startTestRedis();
    dir = mkdtempSync(path.join(tmpdir(), 'trenchant-retry-'));
    Object.assign(process.env, { TRENCHANT_REDIS_PREFIX: 'trenchant-retry', TRENCHANT_QUEUE_BACKOFF_MS: String(BACKOFF_MS), TRENCHANT_JOB_MAX_ATTEMPTS: '3', TRENCHANT_JOB_CONCURRENCY: '1' });
    db = tempDb(dir);
    db.$client.pragma('busy_timeout = 50');
    setDbForTesting(db);
    queue = new Queue(QUEUE_NAME, { connection: { url: redis.url }, prefix: redisPrefix() });
    worker = await startQueueWorker(redis.url, (line) => logs.push({ at: Date.now(), line }));
  });
  afterAll(async () => {
    await worker?.close();
    await queue?.close();
    setDbForTesting(undefined);
    db?.$client.close();
    await redis?.stop();
    rmSync(dir, { recursive: true, force: true });
    process.env = saved;
  });

  /** A queued analysis whose revision does not exist: once claimed it fails at once with 'missing-revision'. */
  function insertQueued(id: string): void {
    db.$client
      .prepare(
        `INSERT INTO analyses (id, project_id, revision_id, created_at, settings, model, model_name, model_version, model_source, status, progress)
         VALUES (?, 'p', 'no-such-revision', ?, '{}', '{}', 'm', '1', 'test', 'queued', 0)`,
      )
      .run(id, Date.now());
  }
  const row = (id: string) => db.$client.prepare('SELECT status, error_code AS code, error_message AS message, attempts FROM analyses WHERE id = ?').get(id) as { status: string; code: string | null; message: string | null; attempts: number };
  const retriesOf = (id: string) => logs.filter((l) => l.line.includes(`analysis ${id} will be retried`));

  async function until(cond: () => boolean, timeoutMs = 20_000): Promise<void> {
    const deadline = Date.now() + timeoutMs;
    while (!cond()) {
      if (Date.now() > deadline) throw new Error(`timed out; worker said:\n${logs.map((l) => l.line).join('\n')}`);
      await new Promise((r) => setTimeout(r, 20));
    }
  }

  it('retries after growing delays while the database is locked, then runs the job', async () => {
    const id = 'retry-then-run';
    insertQueued(id);
    const lock = new Database(path.join(dir, 'results.db'));
    lock.exec('BEGIN EXCLUSIVE');
    try {
      await queue.add('analysis', { analysisId: id }, analysisJobOptions(id));
      await until(() => retriesOf(id).length >= 2);
    } finally {
      lock.exec('ROLLBACK');
      lock.close();
    }
    await until(() => row(id).status !== 'queued');
    expect(row(id)).toMatchObject({ status: 'failed', code: 'missing-revision', attempts: 1 });
    const [first, second] = retriesOf(id);
    const job = await queue.getJob(id);
    expect(job).toBeUndefined(); // removed once done
    // The second attempt started one backoff (300 ms) after the first failed.
    expect(second!.at - first!.at).toBeGreaterThanOrEqual(BACKOFF_MS);
    expect(retriesOf(id)).toHaveLength(2);
  }, 60_000);

  it('marks the job failed when every attempt fails', async () => {
    const id = 'retry-exhausted';
    insertQueued(id);
    const lock = new Database(path.join(dir, 'results.db'));
    lock.exec('BEGIN EXCLUSIVE');
    try {
      await queue.add('analysis', { analysisId: id }, { ...analysisJobOptions(id), removeOnFail: false });
      // 3 attempts: failures after 0, +300 and +600 ms of backoff.
      await until(() => retriesOf(id).length >= 2);
      const job = await queue.getJob(id);
      const deadline = Date.now() + 20_000;
      while ((await job?.getState()) !== 'failed' && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
      expect(await job?.getState()).toBe('failed');
      expect((await queue.getJob(id))?.attemptsMade).toBe(3);
      // Delays 300 ms, then 600 ms: the third attempt failed at least 2 × BACKOFF_MS after the second.
      const [first, second] = retriesOf(id);
      expect(second!.at - first!.at).toBeGreaterThanOrEqual(BACKOFF_MS);
      expect((await queue.getJob(id))!.finishedOn! - second!.at).toBeGreaterThanOrEqual(2 * BACKOFF_MS);
    } finally {
      lock.exec('ROLLBACK');
      lock.close();
    }
    // Marking it failed needed the database: the row stays queued, so the server's resync hands it to Redis again
    // (nothing is lost while the database is unusable).
    expect(row(id)).toMatchObject({ status: 'queued', attempts: 0 });
  }, 60_000);
});
