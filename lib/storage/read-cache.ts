/**
 * Local copies of stored objects for readers that need a file path (the layout reader of the canvas viewer's
 * polygon index, the positional reads of the per-opening column file). On the local backend that is the object's
 * own path; on S3 a copy in the cache folder, fetched once and kept while there is room:
 *   TRENCHANT_CACHE_DIR   default <os temp>/trenchant-cache/<bucket hash>; never the data folder
 *   TRENCHANT_CACHE_MB    default 4096; the least recently used copies go first when it is exceeded
 * Stored objects never change under their key (revisions and results are written once), so a copy never goes stale;
 * forgetCached() drops copies when objects are deleted (the caching store, cached-s3-store.ts, does it on every
 * delete and overwrite). A cold key is downloaded once however many readers ask for it at the same time.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, statSync, utimesSync } from 'node:fs';
import { readdir, rm, stat, unlink } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { checkKey } from './keys';
import { asS3Store } from './s3-store';
import { startDownload, type Download } from './download-thread';
import { copyIntoPlace, moveIntoPlace, TEMP_MARK } from './place-file';
import type { ObjectStore } from './types';

/** A copy used within this long is never evicted (it may be open right now). */
const IN_USE_MS = 60_000;
/** A temporary file not written to for this long belongs to a download that will never finish. */
const STALE_TMP_MS = 60 * 60_000;

export function cacheDir(store: ObjectStore): string {
  const configured = process.env.TRENCHANT_CACHE_DIR?.trim();
  if (configured) return path.resolve(configured);
  return path.join(tmpdir(), 'trenchant-cache', createHash('sha256').update(store.where).digest('hex').slice(0, 12));
}

function cacheLimitBytes(): number {
  const mb = Number(process.env.TRENCHANT_CACHE_MB);
  return (Number.isFinite(mb) && mb > 0 ? mb : 4096) * 1024 * 1024;
}

export const cachedPath = (store: ObjectStore, key: string) => path.join(cacheDir(store), ...checkKey(key).split('/'));

/**
 * Downloads in flight in this process, by cache path: every reader of a cold key, asynchronous or synchronous,
 * waits for the one download (single-flight). The download runs on its own thread (download-thread.ts), which is
 * what lets a synchronous reader wait for a download an asynchronous reader started without a deadlock.
 */
const inFlight = new Map<string, Download>();

function downloadOnce(store: ObjectStore, key: string, dest: string): Download {
  const running = inFlight.get(dest);
  if (running) return running;
  const s3 = asS3Store(store);
  if (!s3) throw new Error(`no cached reads for ${store.kind} storage`);
  mkdirSync(path.dirname(dest), { recursive: true });
  const download = startDownload(s3.config, checkKey(key), dest);
  inFlight.set(dest, download);
  const forget = () => {
    if (inFlight.get(dest) === download) inFlight.delete(dest);
  };
  download.done.then(forget, forget);
  return download;
}

/** How many downloads into the cache are running in this process (for tests and logs). */
export function downloadsInFlight(): number {
  return inFlight.size;
}

/**
 * Marks a cache file as used now. Use is kept in the access time; the modification time is left as it is, because an
 * open on-disk reader (the GDSII tile source of a tile worker, the viewer's index) compares it to notice a replaced
 * file. utimes cannot leave one of the two times alone and rounds what it writes, so every cache file gets a
 * whole-second modification time when it enters the cache (this, on the temporary file before its rename; the download
 * thread does the same), which writing it back keeps exactly. A copy cached by an older version is rounded once.
 */
export function settleTimes(file: string): void {
  utimesSync(file, new Date(), Math.floor(statSync(file).mtimeMs / 1000));
}

/** The cached copy of `key` if there is one (its use time refreshed), else null. Never downloads. */
export function cachedCopy(store: ObjectStore, key: string): string | null {
  if (store.localPath(key)) return null;
  const dest = cachedPath(store, key);
  if (!existsSync(dest)) return null;
  try {
    settleTimes(dest);
  } catch {
    return null; // evicted just now by another process
  }
  return dest;
}

/** The object's own path (local backend) or its cached copy; null when it has to be downloaded. */
function readableNow(store: ObjectStore, key: string): string | null {
  return store.localPath(key) ?? cachedCopy(store, key);
}

/** A local file holding the object (the object's own path on the local backend). */
export async function readablePath(store: ObjectStore, key: string): Promise<string> {
  const ready = readableNow(store, key);
  if (ready) return ready;
  const dest = cachedPath(store, key);
  await downloadOnce(store, key, dest).done;
  await prune(store, dest);
  return dest;
}

/** The same, for synchronous callers: a cold S3 copy blocks this thread while it downloads (download-thread.ts). */
export function readablePathSync(store: ObjectStore, key: string): string {
  const ready = readableNow(store, key);
  if (ready) return ready;
  const dest = cachedPath(store, key);
  const download = downloadOnce(store, key, dest);
  try {
    download.waitSync();
  } finally {
    // Settled (the promise's handler that forgets it has not run yet: this thread was blocked): a failure must let
    // the next reader try again, a success leaves the file. Still running after the timeout: it stays shared.
    if (download.settled() && inFlight.get(dest) === download) inFlight.delete(dest);
  }
  void prune(store, dest).catch(() => undefined);
  return dest;
}

/**
 * Keeps a copy of a file just stored under `key` (S3 only), so the first read needs no download. With `move` the
 * file itself goes into the cache (renamed when it can be; a staging folder about to be removed).
 */
export async function keepInCache(store: ObjectStore, key: string, srcPath: string, options: { move?: boolean } = {}): Promise<void> {
  if (store.localPath(key)) return;
  const dest = cachedPath(store, key);
  // settleTimes on the file entering the cache: the moved file itself, or the temporary copy before its rename.
  if (options.move) await moveIntoPlace(srcPath, dest, settleTimes);
  else await copyIntoPlace(srcPath, dest, settleTimes);
  await prune(store, dest);
}

/**
 * Drops cached copies of keys starting with `prefix` (call after deleting the objects). Downloads of such keys
 * still running are waited for first, so none puts a copy back after it was dropped.
 */
export async function forgetCached(store: ObjectStore, prefix: string): Promise<void> {
  if (store.kind === 'local') return;
  const base = cacheDir(store);
  const target = path.join(base, ...prefix.replace(/\/$/, '').split('/'));
  if (!target.startsWith(base + path.sep)) return;
  const running = [...inFlight].filter(([dest]) => dest === target || dest.startsWith(target + path.sep)).map(([, d]) => d.done.catch(() => undefined));
  await Promise.all(running);
  if (prefix.endsWith('/')) await rm(target, { recursive: true, force: true });
  else await unlink(target).catch(() => undefined);
}

/** Least recently used copies go until the cache fits its limit; `keep` and copies in use stay. */
async function prune(store: ObjectStore, keep: string): Promise<void> {
  const base = cacheDir(store);
  const limit = cacheLimitBytes();
  const entries = await readdir(base, { recursive: true, withFileTypes: true }).catch(() => []);
  const files: { file: string; size: number; used: number }[] = [];
  let total = 0;
  for (const e of entries) {
    if (!e.isFile()) continue;
    const file = path.join(e.parentPath, e.name);
    const st = await stat(file).catch(() => null);
    if (!st) continue;
    if (e.name.includes(TEMP_MARK)) {
      // A download or copy in progress, or the leftover of a process that stopped mid-download.
      if (Date.now() - st.mtimeMs > STALE_TMP_MS) await unlink(file).catch(() => undefined);
      continue;
    }
    files.push({ file, size: st.size, used: Math.max(st.atimeMs, st.mtimeMs) });
    total += st.size;
  }
  if (total <= limit) return;
  const now = Date.now();
  files.sort((a, b) => a.used - b.used);
  for (const f of files) {
    if (total <= limit) break;
    if (f.file === keep || now - f.used < IN_USE_MS) continue;
    await unlink(f.file).catch(() => undefined);
    total -= f.size;
  }
}
