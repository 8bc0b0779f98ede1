/**
 * Node-side entry: read a layout file by streaming it from disk (never loaded whole). The pure core is
 * `readLayoutBytes` (read-bytes.ts), usable with any chunk source.
 */
import { createReadStream } from 'node:fs';
import { LayoutReadError } from './errors';
import { readLayoutBytes, type ReadOptions } from './read-bytes';
import type { FlatLayout } from './types';

export { readLayoutBytes, type ReadOptions } from './read-bytes';

export async function readLayoutFile(path: string, opts: ReadOptions & { topCell?: string; signal?: AbortSignal } = {}): Promise<FlatLayout> {
  const stream = createReadStream(path, { highWaterMark: 1 << 20 });
  try {
    return await readLayoutBytes(stream as AsyncIterable<Uint8Array>, opts);
  } catch (err) {
    if (err instanceof LayoutReadError) throw err;
    const e = err as NodeJS.ErrnoException;
    if (e && typeof e.code === 'string') throw new LayoutReadError('io', `cannot read ${path}: ${e.code === 'ENOENT' ? 'no such file' : e.code === 'EISDIR' ? 'is a directory' : e.message}`);
    throw err;
  } finally {
    stream.destroy();
  }
}
