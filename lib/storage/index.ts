/**
 * Where layout files and analysis results are kept: the local data folder (default), or an S3-compatible bucket
 * when TRENCHANT_S3_BUCKET is set (settings in s3-config.ts). Every read and write of those files goes through
 * storage(); keys are the relative paths the database stores (lib/jobs/paths.ts). On S3, reads go through a local
 * cache (cached-s3-store.ts, read-cache.ts).
 */
import { dataDir } from '@/lib/jobs/paths';
import { LocalObjectStore } from './local-store';
import { s3ConfigFromEnv } from './s3-config';
import { CachedS3ObjectStore } from './cached-s3-store';
import type { ObjectStore } from './types';

export { isStorageNotFound, StorageNotFoundError, type ByteRange, type ObjectStat, type ObjectStore } from './types';
export { checkKey, joinKey, StorageKeyError } from './keys';

// One store per process and configuration, kept on globalThis (Next may load this module in several bundles).
const holder = globalThis as typeof globalThis & { __trenchantStorage?: { signature: string; store: ObjectStore } };

export function storage(): ObjectStore {
  const config = s3ConfigFromEnv();
  const signature = config ? JSON.stringify(config) : 'local';
  if (holder.__trenchantStorage?.signature !== signature) {
    holder.__trenchantStorage = { signature, store: config ? new CachedS3ObjectStore(config) : new LocalObjectStore(dataDir) };
  }
  return holder.__trenchantStorage.store;
}
