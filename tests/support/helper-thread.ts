/** The analysis helper thread in tests: one per test file, and a helper that takes work and never delivers it. */
import { afterAll, beforeAll } from 'vitest';
import { startAnalysisHelper } from '@/lib/pipeline/analysis-helper';
import type { TaskThread } from '@/lib/threads/sync-helper';

/** One analysis helper thread for the test file (started before its tests, closed after): read it inside a test. */
export function useAnalysisHelper(): () => TaskThread | null {
  let helper: TaskThread | null = null;
  beforeAll(() => {
    helper = startAnalysisHelper();
  });
  afterAll(() => helper?.close());
  return () => helper;
}

/** A helper that takes `taken` pieces of work on the spot and then fails: the caller must do them itself. */
export const failingHelper = (taken = 3): TaskThread => ({
  post(_kind, payload) {
    const task = payload as { next: Int32Array; owner: Uint8Array };
    for (let k = 0; k < taken; k++) Atomics.store(task.owner, Atomics.add(task.next, 0, 1), 2);
    return 1;
  },
  wait: () => null,
  close() {},
});
