/**
 * Lowers the CPU priority of the calling worker thread (Linux: a thread is a task with its own nice value, found
 * through /proc/thread-self), so the server's request thread wins the CPU over analyses and upload checks on a
 * busy machine. Worker threads only. TRENCHANT_WORKER_NICE (default 10, 0 = leave as is). Anywhere this is not possible it does nothing.
 */
import { readlinkSync } from 'node:fs';
import { getPriority, setPriority } from 'node:os';
import { isMainThread } from 'node:worker_threads';

export function lowerThreadPriority(): number | null {
  if (isMainThread) return null; // never the server's (or a CLI's) own thread
  const nice = process.env.TRENCHANT_WORKER_NICE === undefined ? 10 : Number(process.env.TRENCHANT_WORKER_NICE);
  if (!Number.isInteger(nice) || nice <= 0 || nice > 19) return null;
  try {
    const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
    if (!Number.isInteger(tid) || tid <= 0) return null;
    // Only ever lower the priority (raise nice): going back up needs privileges.
    if (getPriority(tid) < nice) setPriority(tid, nice);
    return tid;
  } catch {
    return null;
  }
}
