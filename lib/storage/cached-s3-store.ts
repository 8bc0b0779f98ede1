/**
 * The S3 store the server uses (lib/storage/index.ts): reads go through the local read cache (read-cache.ts), so a
 * result file is fetched from the bucket once per server rather than on every request, and requests that ask for
 * the same cold file at once share one download. Which reads fill the cache:
 *   - whole reads (getStream / getBytes without a range) of result files ("analyses/..."), which the review pages
 *     read again and again (maps, previews, the per-opening column file); bounded by the analyses' result budgets;
 *   - any read of a key that is already cached (layouts the viewer fetched, results warmed at completion).
 * Other reads (a layout streamed once, a byte range of a cold file) go to the bucket directly. Writes and deletes
 * drop the cached copy, so the cache can never answer with bytes the bucket no longer holds under that key.
 */
import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import { Readable } from 'node:stream';
import { copyIntoPlace } from './place-file';
import { cachedCopy, forgetCached, readablePath } from './read-cache';
import { S3ObjectStore } from './s3-store';
import type { ByteRange, ObjectStat } from './types';

/** Keys whose whole reads are worth a local copy: result files of analyses (immutable once written). */
export function isCacheableKey(key: string): boolean {
  return key.startsWith('analyses/');
}

export class CachedS3ObjectStore extends S3ObjectStore {
  private cachedOrNull(key: string): string | null {
    return cachedCopy(this, key);
  }

  override async getStream(key: string, range?: ByteRange): Promise<Readable> {
    let local = this.cachedOrNull(key);
    if (!local && !range && isCacheableKey(key)) local = await readablePath(this, key);
    if (!local) return super.getStream(key, range);
    const size = (await stat(local)).size;
    const start = Math.max(0, range?.start ?? 0);
    const end = Math.min(size, range?.end ?? size);
    if (start >= end) return Readable.from([]);
    return createReadStream(local, { start, end: end - 1 });
  }

  override async stat(key: string): Promise<ObjectStat | null> {
    const local = this.cachedOrNull(key);
    if (!local) return super.stat(key);
    const st = await stat(local).catch(() => null);
    return st ? { size: st.size, modifiedAt: null } : super.stat(key);
  }

  override async downloadTo(key: string, destPath: string): Promise<void> {
    const local = this.cachedOrNull(key);
    if (!local) return super.downloadTo(key, destPath);
    await copyIntoPlace(local, destPath); // a copy out of the cache: no settleTimes (that is for files entering it)
  }

  override async putFile(key: string, srcPath: string, options?: { move?: boolean }): Promise<void> {
    await forgetCached(this, key);
    await super.putFile(key, srcPath, options);
  }

  override async putBytes(key: string, bytes: Uint8Array): Promise<void> {
    await forgetCached(this, key);
    await super.putBytes(key, bytes);
  }

  override async putStream(key: string, body: Readable): Promise<void> {
    await forgetCached(this, key);
    await super.putStream(key, body);
  }

  override async delete(key: string): Promise<void> {
    await super.delete(key);
    await forgetCached(this, key);
  }

  override async deletePrefix(prefix: string): Promise<number> {
    const n = await super.deletePrefix(prefix);
    await forgetCached(this, prefix);
    return n;
  }
}
