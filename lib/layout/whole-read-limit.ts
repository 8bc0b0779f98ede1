/**
 * Which layouts the web app reads whole and which it reads through the on-disk GDSII index (gdsii-index.ts,
 * gdsii-tile-source.ts): a GDSII file larger than TRENCHANT_WHOLE_READ_MB (default 256 MiB) is never flattened in
 * one piece — the upload check describes it from the index, the analysis runs tiled, the viewer reads one window at
 * a time. The size of the file decides, not the polygon count, because the count is only known after a read; a
 * small file that flattens to very many polygons is still bounded by the team's polygon limits at upload.
 * Polygon CSV has no hierarchy or byte layout to index and is always read whole.
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';

export const DEFAULT_WHOLE_READ_MB = 256;

/** Largest layout file (bytes) read whole: TRENCHANT_WHOLE_READ_MB (MiB, may be fractional), default 256 MiB. */
export function wholeReadLimitBytes(env: Record<string, string | undefined> = process.env): number {
  const v = Number(env.TRENCHANT_WHOLE_READ_MB);
  const mb = env.TRENCHANT_WHOLE_READ_MB !== undefined && env.TRENCHANT_WHOLE_READ_MB.trim() !== '' && Number.isFinite(v) && v >= 0 ? v : DEFAULT_WHOLE_READ_MB;
  return Math.floor(mb * 1024 * 1024);
}

/** GDSII streams start with the HEADER record 00 06 00 02. */
export function isGdsiiHead(head: Uint8Array): boolean {
  return head.length >= 4 && head[0] === 0 && head[1] === 6 && head[2] === 0 && head[3] === 2;
}

/**
 * Whether the file at `path` is a GDSII stream larger than `limitBytes` (so it is read through the index). False
 * for CSV, small files and unreadable paths (the whole-file reader then names the problem).
 */
export function readsThroughIndex(path: string, limitBytes = wholeReadLimitBytes()): boolean {
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch {
    return false;
  }
  try {
    const size = fstatSync(fd).size;
    if (size <= limitBytes) return false;
    const head = new Uint8Array(4);
    return readSync(fd, head, 0, 4, 0) === 4 && isGdsiiHead(head);
  } catch {
    return false;
  } finally {
    closeSync(fd);
  }
}
