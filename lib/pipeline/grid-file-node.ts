/** Node-side reading and writing of TRGRID1 map files (see grid-file.ts for the format). */
import { readFile } from 'node:fs/promises';
import { bytesIntoPlace } from '../storage/place-file';
import { decodeGrid, encodeGrid, GridFileError, type GridMap } from './grid-file';

/**
 * Write a map atomically (a temporary name beside it, then rename: place-file.ts), so a reader never sees half a
 * file and a crash leaves no truncated map under the final name.
 */
export async function writeGridFile(path: string, map: GridMap): Promise<number> {
  const bytes = encodeGrid(map);
  await bytesIntoPlace(path, bytes);
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
