/**
 * A tile source for any layout file the product reads: GDSII is indexed on disk (gdsii-tile-source.ts); a polygon
 * CSV has no hierarchy or byte layout to index, so it is read whole and served from memory. The format is decided
 * from the content, as readLayoutFile does (a GDSII stream starts with the HEADER record 00 06 00 02).
 */
import { closeSync, openSync, readSync } from 'node:fs';
import { openGdsiiTileSource, type GdsiiTileSourceOptions } from './gdsii-tile-source';
import { readLayoutFile } from './read';
import { inMemoryTileSource, type TileSource } from './tile-source';

export async function openLayoutTileSource(path: string, opts: GdsiiTileSourceOptions = {}): Promise<TileSource> {
  const head = new Uint8Array(4);
  let n = 0;
  try {
    const fd = openSync(path, 'r');
    try {
      n = readSync(fd, head, 0, 4, 0);
    } finally {
      closeSync(fd);
    }
  } catch {
    // Unreadable: let the whole-file reader name the problem.
  }
  if (n === 4 && head[0] === 0 && head[1] === 6 && head[2] === 0 && head[3] === 2) return openGdsiiTileSource(path, opts);
  return inMemoryTileSource(await readLayoutFile(path, { ...(opts.topCell !== undefined ? { topCell: opts.topCell } : {}), ...(opts.signal ? { signal: opts.signal } : {}) }));
}
