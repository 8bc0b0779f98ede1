/**
 * The parent's side of one analysis on the worker pool (lib/jobs/pool-task.ts), against a small stand-in worker
 * (written below, no analysis in it) so each part of the protocol can be seen on its own:
 *   - progress messages reach the runner's callback;
 *   - a cancel sets the shared flag and sends "cancel" on the port, once however often it is asked;
 *   - a cancel asked before the task started reaches it when it starts;
 *   - a thread that ignores the cancel is ended after the grace period, but only while the runner says the task is
 *     still its running one.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it, vi } from 'vitest';
import { CANCEL_GRACE_MS, newAnalysisPool, newTaskControl, requestCancel, runPoolTask, type PoolTaskInput } from '@/lib/jobs/pool-task';
import type { WorkerMessage } from '@/lib/pipeline/worker';

const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-pool-task-test-'));
const workerPath = path.join(dir, 'stand-in-worker.mjs');
// layoutPath picks the behaviour: "obedient" waits for the flag (up to 20 s) and says what it saw; "stuck" spins.
writeFileSync(
  workerPath,
  `export default async function (task) {
  let message = false;
  task.port.on('message', (m) => { if (m && m.type === 'cancel') message = true; });
  task.port.postMessage({ type: 'progress', stage: 'reading', fraction: 0.25 });
  if (task.layoutPath === 'stuck') for (;;) {}
  const t0 = Date.now();
  while (Date.now() - t0 < 20000) {
    await new Promise((r) => setTimeout(r, 5));
    if (Atomics.load(task.cancelFlag, 0) === 1) {
      await new Promise((r) => setTimeout(r, 50)); // let a message sent with the flag arrive
      return { ok: false, code: 'cancelled', message: message ? 'flag and message' : 'flag only' };
    }
  }
  return { ok: false, code: 'bad-input', message: 'never cancelled' };
}
`,
);
const pool = newAnalysisPool(workerPath, 2);
const task = (layoutPath: string): PoolTaskInput => ({ layoutPath, settings: {}, model: {}, outDir: dir });

afterAll(async () => {
  await pool.destroy();
  rmSync(dir, { recursive: true, force: true });
});

describe('one analysis on the pool', () => {
  it('passes progress on; a cancel sets the flag and sends the message, once', async () => {
    const control = newTaskControl();
    const seen: WorkerMessage[] = [];
    const running = runPoolTask(pool, control, task('obedient'), (m) => {
      seen.push(m);
      requestCancel(control, () => false);
      requestCancel(control, () => false); // a second ask changes nothing
    });
    const result = await running;
    expect(seen).toEqual([{ type: 'progress', stage: 'reading', fraction: 0.25 }]);
    expect(result).toEqual({ ok: false, code: 'cancelled', message: 'flag and message' });
    expect(Atomics.load(control.flag, 0)).toBe(1);
    expect(control.port).toBeNull();
    expect(control.controller.signal.aborted).toBe(false);
  });

  it('a cancel asked before the task starts reaches it as flag and message', async () => {
    const control = newTaskControl();
    requestCancel(control, () => false);
    expect(await runPoolTask(pool, control, task('obedient'), () => undefined)).toEqual({ ok: false, code: 'cancelled', message: 'flag and message' });
  });

  it('a thread that ignores the cancel is ended after the grace period', async () => {
    const control = newTaskControl();
    const started = Date.now();
    const running = runPoolTask(pool, control, task('stuck'), () => requestCancel(control, () => true));
    await expect(running).rejects.toThrow();
    expect(control.controller.signal.aborted).toBe(true);
    expect(Date.now() - started).toBeGreaterThanOrEqual(CANCEL_GRACE_MS - 50);
  }, 30_000);

  it('no abort after the grace period once the runner no longer runs the task', () => {
    vi.useFakeTimers();
    try {
      const control = newTaskControl();
      let stillRunning = true;
      requestCancel(control, () => stillRunning);
      stillRunning = false;
      vi.advanceTimersByTime(CANCEL_GRACE_MS + 1);
      expect(control.controller.signal.aborted).toBe(false);
      const other = newTaskControl();
      requestCancel(other, () => true);
      vi.advanceTimersByTime(CANCEL_GRACE_MS - 1);
      expect(other.controller.signal.aborted).toBe(false);
      vi.advanceTimersByTime(2);
      expect(other.controller.signal.aborted).toBe(true);
    } finally {
      vi.useRealTimers();
    }
  });
});
