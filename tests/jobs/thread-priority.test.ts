/**
 * Worker threads lower their own CPU priority (nice) so the request thread wins the CPU; the main thread is never
 * touched. Linux only (per-thread nice through /proc/thread-self); elsewhere the helper is a no-op and this is skipped.
 */
import { existsSync, readFileSync, readlinkSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import { describe, expect, it } from 'vitest';
import { lowerThreadPriority } from '@/lib/jobs/thread-priority';

const linux = existsSync('/proc/thread-self');
const niceOf = (self: string) => Number(readFileSync(`/proc/${self}/stat`, 'utf8').split(') ')[1]?.split(' ')[16]);

describe.runIf(linux)('worker thread priority', () => {
  it('leaves the main thread alone', () => {
    const before = niceOf(readlinkSync('/proc/thread-self'));
    expect(lowerThreadPriority()).toBeNull();
    expect(niceOf(readlinkSync('/proc/thread-self'))).toBe(before);
  });

  it('raises the nice value of a worker thread to 10, and only that thread', async () => {
    const mainNice = niceOf(readlinkSync('/proc/thread-self'));
    const pool = new Piscina({ filename: fileURLToPath(new URL('./fixtures/priority-worker.ts', import.meta.url)), execArgv: ['--import', 'tsx'], maxThreads: 1 });
    const got = (await pool.run(null)) as { tid: number | null; nice: number };
    await pool.destroy();
    expect(got.tid).toBeGreaterThan(0);
    expect(got.nice).toBe(Math.max(10, mainNice));
    expect(niceOf(readlinkSync('/proc/thread-self'))).toBe(mainNice);
  });
});
