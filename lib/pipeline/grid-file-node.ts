/** Node-side reading and writing of TRGRID1 map files (see grid-file.ts for the format). */
import { readFile, rename, writeFile, unlink } from 'node:fs/promises';
import { decodeGrid, encodeGrid, GridFileError, type GridMap } from './grid-file';

/**
 * Write a map atomically: to `path.tmp-<pid>` then rename, so a reader never sees half a file and a crash
 * leaves no truncated map under the final name.
 */
export async function writeGridFile(path: string, map: GridMap): Promise<number> {
  const bytes = encodeGrid(map);
  const tmp = `${path}.tmp-${process.pid}`;
  try {
    await writeFile(tmp, bytes);
    await rename(tmp, path);
  } catch (err) {
    await unlink(tmp).catch(() => undefined);
    throw err;
  }
  return bytes.length;
}

/** Read and decode a map; decoding problems throw GridFileError whose message also names the file. */
export async function readGridFile(path: string): Promise<GridMap> {
  return decodeGridBytes(await readFile(path), path);
}

/** Decode a map read from storage; decoding problems throw GridFileError naming `name` (its key or path). */
export function decodeGridBytes(bytes: Uint8Array, name: string): GridMap {
  try {
    return decodeGrid(new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength));
  } catch (err) {
    if (err instanceof GridFileError) throw new GridFileError(err.code, `${name}: ${err.message}`, err.offset);
    throw err;
  }
}
