/**
 * Local files for an analysis job, whichever backend stores them: the worker thread reads the layout from a path
 * and writes its maps and column file into a folder (lib/pipeline/worker.ts), so on S3 the layout is downloaded to
 * a temporary file first and the results are written to a temporary folder, then uploaded. On the local backend
 * both are the stored paths themselves, as before.
 */
import { mkdir, mkdtemp, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { TEMP_MARK } from './place-file';
import { keepInCache } from './read-cache';
import type { ObjectStore } from './types';

export type LocalInput = { path: string; release: () => Promise<void> };

/** The object as a local file for the duration of a job; release() removes a downloaded copy. */
export async function localInput(store: ObjectStore, key: string, name = 'layout'): Promise<LocalInput> {
  const local = store.localPath(key);
  if (local) return { path: local, release: async () => undefined };
  const dir = await mkdtemp(path.join(tmpdir(), 'trenchant-job-'));
  const file = path.join(dir, `${name}${path.extname(key)}`);
  try {
    await store.downloadTo(key, file);
  } catch (err) {
    await rm(dir, { recursive: true, force: true });
    throw err;
  }
  return { path: file, release: () => rm(dir, { recursive: true, force: true }) };
}

export type ResultStaging = {
  /** Folder the worker writes into. */
  dir: string;
  /** Stores every file of `dir` under the prefix (S3: upload, then the folder goes); returns the keys. */
  commit: (options?: { cache?: (file: string) => boolean }) => Promise<string[]>;
  /** Removes whatever was written, in the folder and under the prefix. */
  discard: () => Promise<void>;
};

/** Where a job writes the files that end up under `prefix` (a key folder such as "analyses/<id>"). */
export async function resultStaging(store: ObjectStore, prefix: string): Promise<ResultStaging> {
  const local = store.localPath(prefix);
  if (local) {
    await mkdir(local, { recursive: true });
    return {
      dir: local,
      commit: async () => (await readdir(local).catch(() => [] as string[])).map((f) => `${prefix}/${f}`),
      discard: () => rm(local, { recursive: true, force: true }),
    };
  }
  const dir = await mkdtemp(path.join(tmpdir(), 'trenchant-results-'));
  return {
    dir,
    commit: async (options) => {
      const keys: string[] = [];
      try {
        for (const entry of await readdir(dir, { withFileTypes: true })) {
          if (!entry.isFile() || entry.name.includes(TEMP_MARK)) continue;
          const key = `${prefix}/${entry.name}`;
          const file = path.join(dir, entry.name);
          await store.putFile(key, file);
          if (options?.cache?.(entry.name)) await keepInCache(store, key, file, { move: true }); // the folder goes next
          keys.push(key);
        }
      } finally {
        await rm(dir, { recursive: true, force: true });
      }
      return keys;
    },
    discard: async () => {
      await rm(dir, { recursive: true, force: true });
      await store.deletePrefix(`${prefix}/`);
    },
  };
}
