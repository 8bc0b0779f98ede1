/**
 * Writing a file into place atomically: the bytes go to a temporary name beside the target, which is renamed onto
 * it, so a reader sees the old file or the whole new one, never half of one; a failure removes the temporary and
 * leaves the target as it was. Concurrent writers of one target each write their own temporary, and the last rename
 * wins with one complete file. Nothing here calls fsync (no caller did): a crash of the machine may lose the file
 * (ext4 and XFS order the data before the rename's metadata in practice, but that is common practice, no source).
 *
 * Temporary names contain ".tmp-" — folder walkers skip them on that mark (read-cache.ts prune, migrate.ts,
 * job-files.ts commit) — and pid plus a random part, so no two writers share one.
 */
import { randomUUID } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { copyFile, mkdir, rename, unlink, writeFile } from 'node:fs/promises';
import path from 'node:path';
import type { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';

/** What marks a temporary file of a write in progress; folder walkers skip names containing it. */
export const TEMP_MARK = '.tmp-';

/** A fresh temporary name in the target's folder ("<target>.tmp-<pid>-<tag->random"). */
export function tempNameBeside(target: string, tag?: string): string {
  return `${target}${TEMP_MARK}${process.pid}-${tag ? `${tag}-` : ''}${randomUUID().slice(0, 8)}`;
}

/** Called on the file about to be renamed onto the target (the temporary, or a moved file itself). */
export type BeforePlace = (file: string) => void | Promise<void>;

/**
 * Runs `write` on a temporary name beside `target` (its folder is created), then renames that onto the target.
 * If `write`, `beforePlace` or the rename fails, the temporary is removed and the error thrown; the target is untouched.
 */
export async function writeIntoPlace(target: string, write: (tmp: string) => Promise<unknown>, beforePlace?: BeforePlace): Promise<void> {
  await mkdir(path.dirname(target), { recursive: true });
  const tmp = tempNameBeside(target);
  try {
    await write(tmp);
    await beforePlace?.(tmp);
    await rename(tmp, target);
  } catch (err) {
    await unlink(tmp).catch(() => undefined);
    throw err;
  }
}

/** Bytes (or parts written one after another) into place. */
export function bytesIntoPlace(target: string, bytes: Uint8Array | readonly Uint8Array[]): Promise<void> {
  return writeIntoPlace(target, (tmp) => writeFile(tmp, bytes instanceof Uint8Array ? bytes : [...bytes]));
}

/** A stream's bytes into place (a stream that errors leaves nothing behind). */
export function streamIntoPlace(target: string, body: Readable): Promise<void> {
  return writeIntoPlace(target, (tmp) => pipeline(body, createWriteStream(tmp)));
}

/** A copy of `src` into place; `src` is left as it is. */
export function copyIntoPlace(src: string, target: string, beforePlace?: BeforePlace): Promise<void> {
  return writeIntoPlace(target, (tmp) => copyFile(src, tmp), beforePlace);
}

/**
 * Moves `src` onto `target`: one rename when both are on the same file system; across file systems (EXDEV) a copy
 * into place, then `src` is removed (quietly: the target is already whole, and `src` lives somewhere temporary).
 * `beforePlace` sees `src` itself before a rename, or the temporary copy before its rename.
 */
export async function moveIntoPlace(src: string, target: string, beforePlace?: BeforePlace): Promise<void> {
  await mkdir(path.dirname(target), { recursive: true });
  try {
    await beforePlace?.(src);
    await rename(src, target);
    return;
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code !== 'EXDEV') throw err;
  }
  await copyIntoPlace(src, target, beforePlace);
  await unlink(src).catch(() => undefined);
}
