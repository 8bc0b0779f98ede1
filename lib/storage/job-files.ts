/**
 * Local files for an analysis job, whichever backend stores them: the worker thread reads the layout from a path
 * and writes its maps and column file into a folder (lib/pipeline/worker.ts), so on S3 the layout is fetched to
 * a temporary file first and the results are written to a temporary folder, then uploaded. On the local backend
 * both are the stored paths themselves, as before.
 *
 * On S3 the layout comes through the machine's read cache (read-cache.ts), and the job's file is a hard link to the
 * cached copy: a worker process that runs an analysis and, as a tile worker, that analysis's tiles (which read the
 * cached copy, stored-source.ts) downloads the layout once and keeps one copy on disk; the job's file stays whole if
 * the cache lets its copy go meanwhile. Where no link can be made (cache on another file system) the cached copy is
 * copied; where the copy went before it could be linked, the object is downloaded as before.
 */
import { copyFile, link, mkdir, mkdtemp, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { TEMP_MARK } from './place-file';
import { keepInCache, readablePath } from './read-cache';
import { asS3Store } from './s3-store';
import type { ObjectStore } from './types';

export type LocalInput = { path: string; release: () => Promise<void> };

/** The object as a local file for the duration of a job; release() removes the job's file (not the cached copy). */
export async function localInput(store: ObjectStore, key: string, name = 'layout'): Promise<LocalInput> {
  const local = store.localPath(key);
  if (local) return { path: local, release: async () => undefined };
  const dir = await mkdtemp(path.join(tmpdir(), 'trenchant-job-'));
  const file = path.join(dir, `${name}${path.extname(key)}`);
  try {
    const cached = asS3Store(store) ? await readablePath(store, key) : null;
    if (!cached) await store.downloadTo(key, file);
    else {
      await link(cached, file).catch(() =>
        copyFile(cached, file).catch(async (err: NodeJS.ErrnoException) => {
          if (err.code !== 'ENOENT') throw err;
          await store.downloadTo(key, file);
        }),
      );
    }
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
