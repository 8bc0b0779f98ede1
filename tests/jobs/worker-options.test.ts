/**
 * The one set of BullMQ Worker options both kinds of queue worker use (lib/jobs/queue-worker.ts workerOptions):
 * the lock follows TRENCHANT_QUEUE_LOCK_MS, the stall check runs at half the lock (never below 1 s; BullMQ's
 * documented default pairs a 30 s lock with a 30 s check, we check twice per lock so a dead worker's job comes back
 * sooner — our choice, no source), and the stall cap is TRENCHANT_JOB_MAX_ATTEMPTS so the analyses row decides.
 */
import { afterEach, describe, expect, it } from 'vitest';
import type { Redis } from 'ioredis';
import { workerOptions } from '@/lib/jobs/queue-worker';

const saved = { lock: process.env.TRENCHANT_QUEUE_LOCK_MS, attempts: process.env.TRENCHANT_JOB_MAX_ATTEMPTS };
afterEach(() => {
  if (saved.lock === undefined) delete process.env.TRENCHANT_QUEUE_LOCK_MS;
  else process.env.TRENCHANT_QUEUE_LOCK_MS = saved.lock;
  if (saved.attempts === undefined) delete process.env.TRENCHANT_JOB_MAX_ATTEMPTS;
  else process.env.TRENCHANT_JOB_MAX_ATTEMPTS = saved.attempts;
});

describe('workerOptions', () => {
  const connection = {} as Redis; // only passed through

  it('takes the lock and attempt cap from the environment', () => {
    process.env.TRENCHANT_QUEUE_LOCK_MS = '8000';
    process.env.TRENCHANT_JOB_MAX_ATTEMPTS = '5';
    const o = workerOptions(connection, 3);
    expect(o).toMatchObject({ connection, concurrency: 3, lockDuration: 8000, stalledInterval: 4000, maxStalledCount: 5 });
  });

  it('never checks for stalled jobs more often than once a second', () => {
    process.env.TRENCHANT_QUEUE_LOCK_MS = '1200';
    expect(workerOptions(connection, 1).stalledInterval).toBe(1000);
  });
});
