/**
 * Object keys: relative, "/"-separated paths without "." or ".." segments. Both backends check every key here,
 * so a key that would leave the data folder on disk is refused on S3 as well (the same key must mean the same
 * thing on either backend).
 */
import path from 'node:path';

export class StorageKeyError extends Error {
  constructor(key: string, why: string) {
    super(`storage key ${JSON.stringify(key)} ${why}`);
    this.name = 'StorageKeyError';
  }
}

/** The key in "/" form; throws StorageKeyError for absolute, empty, "."/".." or backslash-smuggled paths. */
export function checkKey(key: string): string {
  const k = path.sep === '\\' ? key.replaceAll('\\', '/') : key;
  if (k.length === 0) throw new StorageKeyError(key, 'is empty');
  if (k.length > 900) throw new StorageKeyError(key, 'is longer than 900 characters');
  if (k.startsWith('/')) throw new StorageKeyError(key, 'is absolute; keys are relative to the data folder');
  if (k.includes('\0')) throw new StorageKeyError(key, 'contains a NUL byte');
  for (const part of k.split('/')) {
    if (part === '' || part === '.' || part === '..') throw new StorageKeyError(key, `has an empty, "." or ".." segment; keys may not leave the data folder`);
  }
  return k;
}

/** A prefix for deletePrefix: like a key, but may end with "/" (a folder). */
export function checkPrefix(prefix: string): string {
  const p = path.sep === '\\' ? prefix.replaceAll('\\', '/') : prefix;
  return p.endsWith('/') ? `${checkKey(p.slice(0, -1))}/` : checkKey(p);
}

/** Joins key parts with "/" (the keys the database holds were made with path.join on POSIX, the same thing). */
export function joinKey(...parts: string[]): string {
  return checkKey(parts.filter((p) => p !== '').join('/'));
}
