/**
 * The one interface every layout and result file goes through (lib/storage/index.ts picks the backend). Keys are
 * the data-folder-relative paths the database already stores ("layouts/<project>/<revision>.gds",
 * "analyses/<id>/risk.trgrid"), always with "/" separators. Layouts can be gigabytes: writes take a file or a
 * stream and reads give a stream, so nothing needs the whole object in memory except getBytes (for small files).
 */
import type { Readable } from 'node:stream';

/** Bytes [start, end) of an object; end defaults to the end of the object. Clipped to the object's size. */
export type ByteRange = { start: number; end?: number };

export type ObjectStat = { size: number; modifiedAt: Date | null };

export interface ObjectStore {
  readonly kind: 'local' | 's3';
  /** Where objects live, for logs and messages (a folder, or s3://bucket/prefix). */
  readonly where: string;
  /** Stores the file at `srcPath` under `key`. With `move`, the source is consumed (renamed when it can be). */
  putFile(key: string, srcPath: string, options?: { move?: boolean }): Promise<void>;
  putBytes(key: string, bytes: Uint8Array): Promise<void>;
  putStream(key: string, body: Readable): Promise<void>;
  /** The object as a stream; throws StorageNotFoundError when it does not exist. */
  getStream(key: string, range?: ByteRange): Promise<Readable>;
  getBytes(key: string, range?: ByteRange): Promise<Uint8Array>;
  /** Copies the object to a local file (written under a temporary name, then renamed). */
  downloadTo(key: string, destPath: string): Promise<void>;
  /** Size and time of the object, or null when there is none. */
  stat(key: string): Promise<ObjectStat | null>;
  /** Removes one object; no error when it is absent. */
  delete(key: string): Promise<void>;
  /** Removes every object whose key starts with `prefix` (e.g. "analyses/<id>/"); returns how many went. */
  deletePrefix(prefix: string): Promise<number>;
  /** The object's path on this machine's disk when the backend is the local folder, else null. */
  localPath(key: string): string | null;
}

export class StorageNotFoundError extends Error {
  readonly code = 'not-found';
  constructor(
    readonly key: string,
    where: string,
  ) {
    super(`stored file ${key} is missing (${where})`);
    this.name = 'StorageNotFoundError';
  }
}

export function isStorageNotFound(err: unknown): err is StorageNotFoundError {
  return err instanceof StorageNotFoundError || (err instanceof Error && err.name === 'StorageNotFoundError');
}
