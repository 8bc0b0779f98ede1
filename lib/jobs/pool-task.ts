/**
 * One analysis on the piscina pool of worker threads, as both runners drive it (the embedded runner.ts and the
 * database-less remote-runner.ts): the pool, a progress channel per task, and the cancel protocol — a flag in shared
 * memory the worker polls at every check point, a "cancel" message on the port, and the thread ended through the
 * task's abort signal if it has not stopped within CANCEL_GRACE_MS.
 */
import { MessageChannel, type MessagePort } from 'node:worker_threads';
import Piscina from 'piscina';
import type { AnalysisTask, AnalysisTaskResult, WorkerMessage } from '@/lib/pipeline/worker';

/** How long a cancelled job may take to reach a check point before its thread is terminated. */
export const CANCEL_GRACE_MS = 3_000;

export type AnalysisPool = Piscina<AnalysisTask, AnalysisTaskResult>;

/** The parent's side of one running task. */
export type TaskControl = {
  /** Element 0 set to 1 (Atomics.store) = cancel; shared with the worker thread. */
  flag: Int32Array;
  /** The progress port while the task runs on the pool. */
  port: MessagePort | null;
  /** Aborting it ends the task's thread. */
  controller: AbortController;
  cancelRequested: boolean;
};

/** An analysis task as a runner builds it (the port and cancel flag are the pool's to add). */
export type PoolTaskInput = Omit<AnalysisTask, 'port' | 'cancelFlag'>;

export function newTaskControl(): TaskControl {
  return { flag: new Int32Array(new SharedArrayBuffer(4)), port: null, controller: new AbortController(), cancelRequested: false };
}

/** A pool of at most `maxThreads` analysis threads of the compiled worker `filename` (memory: TRENCHANT_JOB_MEMORY_MB). */
export function newAnalysisPool(filename: string, maxThreads: number): AnalysisPool {
  const memoryMb = Number(process.env.TRENCHANT_JOB_MEMORY_MB);
  return new Piscina<AnalysisTask, AnalysisTaskResult>({
    filename,
    minThreads: 0,
    maxThreads,
    idleTimeout: 60_000,
    ...(Number.isFinite(memoryMb) && memoryMb > 0 ? { resourceLimits: { maxOldGenerationSizeMb: memoryMb } } : {}),
  });
}

/**
 * Asks the task to stop (once; later calls do nothing). `stillRunning` is asked after the grace period: while it says
 * yes, the thread is ended.
 */
export function requestCancel(control: TaskControl, stillRunning: () => boolean): void {
  if (control.cancelRequested) return;
  control.cancelRequested = true;
  Atomics.store(control.flag, 0, 1);
  control.port?.postMessage({ type: 'cancel' });
  setTimeout(() => {
    if (stillRunning()) control.controller.abort();
  }, CANCEL_GRACE_MS).unref();
}

/**
 * Runs `task` on `pool` with this control's cancel flag and abort signal and a fresh progress channel, whose
 * messages go to `onMessage`; a cancel requested before the task started is passed on at once.
 */
export async function runPoolTask(
  pool: AnalysisPool,
  control: TaskControl,
  task: PoolTaskInput,
  onMessage: (m: WorkerMessage) => void,
): Promise<AnalysisTaskResult> {
  const channel = new MessageChannel();
  control.port = channel.port1;
  channel.port1.on('message', onMessage);
  if (control.cancelRequested) channel.port1.postMessage({ type: 'cancel' });
  try {
    return await pool.run({ ...task, port: channel.port2, cancelFlag: control.flag }, { transferList: [channel.port2], signal: control.controller.signal });
  } finally {
    channel.port1.close();
    control.port = null;
  }
}
