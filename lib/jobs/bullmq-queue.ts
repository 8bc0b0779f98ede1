/**
 * The server's side of the BullMQ backend (TRENCHANT_REDIS_URL set): queued analyses become BullMQ jobs (job id =
 * analysis id), worker processes run them (lib/jobs/queue-worker.ts), and their progress comes back over Redis
 * pub/sub into the local SSE fan-out (lib/jobs/events.ts). The analyses table stays the record of each job's
 * state; Redis only carries the hand-off. This server runs no analyses itself.
 */
import { Queue, QueueEvents } from 'bullmq';
import type { Redis } from 'ioredis';
import { getDb } from '@/db/client';
import type { AnalysisStatus } from '@/db/schema';
import { analysisJobOptions, cancelChannel, cancelKey, CANCEL_KEY_TTL_S, eventsChannel, openRedis, QUEUE_NAME, redisPrefix, type AnalysisJobData } from './bullmq-shared';
import { emitRelayedJobEvent, isTerminal, type JobEvent } from './events';
import { finishJob } from './finish-job';
import type { JobQueue } from './queue';
import { recordPickup, recordProgress, recordQueueFailure, recordResult, remoteTaskOf } from './remote-results';
import { isRemoteJobResult } from './remote-task';
import { warmResultCache } from './warm-results';
import { jobConcurrency } from './job-limits';

/** Queued rows are handed to Redis again this often, so one that could not be added (Redis down) is not lost. */
const RESYNC_MS = 5_000;

export class BullJobQueue implements JobQueue {
  readonly kind = 'bullmq' as const;
  readonly concurrency = jobConcurrency();
  private readonly redis: Redis;
  private readonly sub: Redis;
  private readonly queue: Queue<AnalysisJobData>;
  /** Completions and final failures, for jobs run by workers without the database (lib/jobs/remote-results.ts). */
  private readonly queueEvents: QueueEvents;
  private readonly eventsConnection: Redis;
  /** Analyses this process has handed to Redis (skipped by pump until the next resync). */
  private readonly added = new Set<string>();
  private readonly timer: NodeJS.Timeout;
  private pumping: Promise<void> | null = null;
  private pumpAgain = false;

  constructor(url: string) {
    this.redis = openRedis(url, 'server');
    this.sub = openRedis(url, 'server-events');
    this.queue = new Queue<AnalysisJobData>(QUEUE_NAME, { connection: this.redis, prefix: redisPrefix() });
    this.queue.on('error', (err) => console.error('[trenchant] job queue:', err.message));
    void this.sub.subscribe(eventsChannel()).catch((err: Error) => console.error('[trenchant] could not subscribe to job events:', err.message));
    this.sub.on('message', (channel: string, message: string) => {
      if (channel !== eventsChannel()) return;
      const event = parseEvent(message);
      if (!event) return;
      // A worker without the database reports its pick-ups and progress; the row is written here.
      const remote = remoteMark(message);
      try {
        if (remote === 'pickup' && !recordPickup(event.analysisId)) {
          this.sendCancel(event.analysisId);
          return;
        }
        if (remote === 'progress') recordProgress(event);
      } catch (err) {
        console.error(`[trenchant] could not record the progress of ${event.analysisId}:`, err instanceof Error ? err.message : err);
      }
      emitRelayedJobEvent(event);
      // A worker with the database finished and wrote the rows itself: cache its files here (warm-results.ts).
      if (event.status === 'done' && remote === null) void warmResultCache(event.analysisId);
    });
    this.eventsConnection = openRedis(url, 'server-queue-events');
    this.queueEvents = new QueueEvents(QUEUE_NAME, { connection: this.eventsConnection, prefix: redisPrefix() });
    this.queueEvents.on('error', (err) => console.error('[trenchant] job queue events:', err.message));
    this.queueEvents.on('completed', ({ jobId, returnvalue }) => {
      const value: unknown = typeof returnvalue === 'string' ? safeJson(returnvalue) : returnvalue;
      if (!isRemoteJobResult(value)) return; // a database worker recorded it itself
      void recordResult(jobId, value).catch((err: unknown) => {
        console.error(`[trenchant] could not record the results of ${jobId}:`, err);
        recordQueueFailure(jobId, `its results could not be saved (${err instanceof Error ? err.message : String(err)})`);
      });
    });
    this.queueEvents.on('failed', ({ jobId, failedReason }) => {
      try {
        recordQueueFailure(jobId, failedReason);
      } catch (err) {
        console.error(`[trenchant] could not mark ${jobId} failed:`, err instanceof Error ? err.message : err);
      }
    });
    this.timer = setInterval(() => {
      this.added.clear();
      this.pump();
    }, RESYNC_MS);
    this.timer.unref();
  }

  pump(): void {
    if (this.pumping) {
      this.pumpAgain = true;
      return;
    }
    this.pumping = (async () => {
      do {
        this.pumpAgain = false;
        await this.enqueueQueued();
      } while (this.pumpAgain);
    })()
      .catch((err: unknown) => console.error('[trenchant] could not hand queued analyses to Redis:', err instanceof Error ? err.message : err))
      .finally(() => (this.pumping = null));
  }

  private async enqueueQueued(): Promise<void> {
    const rows = getDb().$client.prepare(`SELECT id FROM analyses WHERE status = 'queued' ORDER BY created_at, id`).all() as { id: string }[];
    const fresh = rows.filter((r) => !this.added.has(r.id));
    if (fresh.length === 0) return;
    // Each job carries its task, so a worker without the database can run it (lib/jobs/remote-task.ts).
    const jobs = fresh.flatMap((r) => {
      const task = remoteTaskOf(r.id);
      return task ? [{ name: 'analysis', data: { analysisId: r.id, task }, opts: analysisJobOptions(r.id) }] : [];
    });
    await this.queue.addBulk(jobs);
    for (const r of fresh) this.added.add(r.id);
  }

  cancel(analysisId: string): AnalysisStatus | null {
    const row = getDb().$client.prepare('SELECT status FROM analyses WHERE id = ?').get(analysisId) as { status: AnalysisStatus } | undefined;
    if (!row || isTerminal(row.status)) return null;
    this.sendCancel(analysisId);
    if (row.status === 'running') return 'running'; // its worker stops it and writes the final state
    finishJob(analysisId, 'cancelled', { code: 'cancelled', message: 'Cancelled before it started.' });
    // A worker that takes the job anyway finds it cancelled and skips it; removing it just saves the trip.
    void this.queue.remove(analysisId).catch(() => undefined);
    return 'cancelled';
  }

  /** Tells the workers to stop (or skip) this job. */
  private sendCancel(analysisId: string): void {
    // The key first, then the message: a worker that claims the job after the message went out still sees the key.
    void this.redis
      .set(cancelKey(analysisId), '1', 'EX', CANCEL_KEY_TTL_S)
      .then(() => this.redis.publish(cancelChannel(), analysisId))
      .catch((err: Error) => console.error(`[trenchant] could not send the cancel of ${analysisId} to the workers:`, err.message));
  }

  /**
   * Rows left 'running' with no BullMQ job behind them (e.g. run by the embedded pool before Redis was
   * configured) go back to the queue. Rows whose job still exists are left alone: a live worker may be running
   * them, and a dead worker's jobs come back by BullMQ's stalled-job check.
   */
  async requeueInterrupted(): Promise<number> {
    // Redis down at start-up must not hold the server's start: skip this round (the rows stay as they are).
    let timer: NodeJS.Timeout | undefined;
    const timeout = new Promise<number>((resolve) => {
      timer = setTimeout(() => {
        console.error('[trenchant] Redis did not answer within 10 s at start-up; interrupted analyses were not checked');
        resolve(0);
      }, 10_000);
    });
    try {
      return await Promise.race([this.requeueOrphans(), timeout]);
    } finally {
      clearTimeout(timer);
    }
  }

  private async requeueOrphans(): Promise<number> {
    const sqlite = getDb().$client;
    const running = sqlite.prepare(`SELECT id FROM analyses WHERE status = 'running'`).all() as { id: string }[];
    let n = 0;
    for (const { id } of running) {
      if (await this.queue.getJob(id)) continue;
      n += sqlite.prepare(`UPDATE analyses SET status = 'queued', stage = 'requeued', progress = 0 WHERE id = ? AND status = 'running'`).run(id).changes;
    }
    return n;
  }

  async close(): Promise<void> {
    clearInterval(this.timer);
    await this.queue.close().catch(() => undefined);
    await this.queueEvents.close().catch(() => undefined);
    this.eventsConnection.disconnect();
    this.sub.disconnect();
    this.redis.disconnect();
  }
}

function parseEvent(message: string): JobEvent | null {
  try {
    const e = JSON.parse(message) as Partial<JobEvent>;
    if (typeof e.analysisId !== 'string' || typeof e.status !== 'string' || typeof e.progress !== 'number') return null;
    return { analysisId: e.analysisId, status: e.status, stage: typeof e.stage === 'string' ? e.stage : null, progress: e.progress, errorMessage: typeof e.errorMessage === 'string' ? e.errorMessage : null };
  } catch {
    return null;
  }
}

/** 'pickup' / 'progress' for events of a worker without the database (remote-runner.ts), else null. */
function remoteMark(message: string): 'pickup' | 'progress' | null {
  const e = safeJson(message) as { remote?: unknown; pickup?: unknown } | null;
  if (!e || e.remote !== true) return null;
  return e.pickup === true ? 'pickup' : 'progress';
}

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return null;
  }
}
