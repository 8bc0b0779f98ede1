/**
 * Tile source specs for layouts behind the storage interface (lib/storage), so tile jobs can run on machines that
 * share nothing with the analysing process but Redis and the bucket. The tile queue worker resolves a 'stored' spec
 * to a local file before its threads open it: on S3 the object is fetched once into this machine's read cache
 * (read-cache.ts: single-flight, kept while there is room, never stale because stored objects never change under
 * their key); on the local backend it is the data folder's own file. The GDSII index is then built once by one
 * tile thread and shared with the others (index-registry.ts, tile-thread.ts).
 */
import { storage } from '@/lib/storage';
import { readablePath } from '@/lib/storage/read-cache';
import type { TileSourceSpec } from './sources';

export type StoredSpec = Extract<TileSourceSpec, { kind: 'stored' }>;
export type FileSpec = Extract<TileSourceSpec, { kind: 'file' }>;

/** The spec naming `key` in this process's storage. */
export function storedSpec(key: string, topCell?: string): StoredSpec {
  return { kind: 'stored', key, where: storage().where, ...(topCell ? { topCell } : {}) };
}

export class StoredSourceMismatchError extends Error {
  constructor(spec: StoredSpec, here: string) {
    super(`tile job for ${spec.key}: the layout is stored in ${spec.where}, but this tile worker's storage is ${here}; start tile workers with the server's TRENCHANT_S3_* settings (or its TRENCHANT_DATA_DIR on the same machine)`);
    this.name = 'StoredSourceMismatchError';
  }
}

/** A local-file spec for any spec: 'stored' is fetched (or found) through storage; others pass unchanged. */
export async function resolveStoredSpec(spec: TileSourceSpec): Promise<Exclude<TileSourceSpec, StoredSpec>> {
  if (spec.kind !== 'stored') return spec;
  const store = storage();
  if (store.where !== spec.where) throw new StoredSourceMismatchError(spec, store.where);
  const path = await readablePath(store, spec.key);
  return { kind: 'file', path, ...(spec.topCell !== undefined ? { topCell: spec.topCell } : {}) };
}
