/**
 * The default backend: objects are files under the data folder, at their key as relative path (what the server
 * did before there was a storage interface, so existing data folders keep working). Writes go to a temporary name
 * beside the target and are renamed into place (place-file.ts), so a reader never sees half a file.
 */
import { createReadStream } from 'node:fs';
import { readdir, rm, stat, unlink } from 'node:fs/promises';
import path from 'node:path';
import { Readable } from 'node:stream';
import { checkKey, checkPrefix, StorageKeyError } from './keys';
import { bytesIntoPlace, copyIntoPlace, moveIntoPlace, streamIntoPlace } from './place-file';
import { StorageNotFoundError, type ByteRange, type ObjectStat, type ObjectStore } from './types';

const isEnoent = (err: unknown) => (err as NodeJS.ErrnoException | null)?.code === 'ENOENT';

export class LocalObjectStore implements ObjectStore {
  readonly kind = 'local' as const;
  /** `root` is read on every call: the data folder follows TRENCHANT_DATA_DIR / TRENCHANT_DB as they are now. */
  constructor(private readonly root: () => string) {}

  get where(): string {
    return this.root();
  }

  /** Absolute path of a key; refuses anything that would leave the folder (checkKey already refuses ".."). */
  private abs(key: string): string {
    const root = path.resolve(this.root());
    const abs = path.resolve(root, checkKey(key));
    if (abs === root || !abs.startsWith(root + path.sep)) throw new StorageKeyError(key, 'leaves the data folder');
    return abs;
  }

  localPath(key: string): string {
    return this.abs(key);
  }

  // async, so a bad key rejects rather than throws
  async putFile(key: string, srcPath: string, options: { move?: boolean } = {}): Promise<void> {
    return options.move ? moveIntoPlace(srcPath, this.abs(key)) : copyIntoPlace(srcPath, this.abs(key));
  }

  async putBytes(key: string, bytes: Uint8Array): Promise<void> {
    return bytesIntoPlace(this.abs(key), bytes);
  }

  async putStream(key: string, body: Readable): Promise<void> {
    return streamIntoPlace(this.abs(key), body);
  }

  async stat(key: string): Promise<ObjectStat | null> {
    try {
      const st = await stat(this.abs(key));
      return st.isFile() ? { size: st.size, modifiedAt: st.mtime } : null;
    } catch (err) {
      if (isEnoent(err)) return null;
      throw err;
    }
  }

  async getStream(key: string, range?: ByteRange): Promise<Readable> {
    const st = await this.stat(key);
    if (!st) throw new StorageNotFoundError(key, this.where);
    const start = Math.max(0, range?.start ?? 0);
    const end = Math.min(st.size, range?.end ?? st.size);
    if (start >= end) return Readable.from([]);
    return createReadStream(this.abs(key), { start, end: end - 1 });
  }

  async getBytes(key: string, range?: ByteRange): Promise<Uint8Array> {
    const chunks: Buffer[] = [];
    for await (const chunk of await this.getStream(key, range)) chunks.push(chunk as Buffer);
    return Buffer.concat(chunks);
  }

  async downloadTo(key: string, destPath: string): Promise<void> {
    const src = this.abs(key);
    if (!(await this.stat(key))) throw new StorageNotFoundError(key, this.where);
    await copyIntoPlace(src, destPath);
  }

  async delete(key: string): Promise<void> {
    await unlink(this.abs(key)).catch((err: unknown) => {
      if (!isEnoent(err)) throw err;
    });
  }

  async deletePrefix(prefix: string): Promise<number> {
    const p = checkPrefix(prefix);
    if (p.endsWith('/')) {
      // A folder: count its files, then remove it whole.
      const dir = this.abs(p.slice(0, -1));
      const n = await countFiles(dir);
      await rm(dir, { recursive: true, force: true });
      return n;
    }
    // A partial name ("analyses/ab" also matches "analyses/abc/x"): walk the parent folder.
    const slash = p.lastIndexOf('/');
    const parentKey = slash < 0 ? '' : p.slice(0, slash);
    const parent = parentKey ? this.abs(parentKey) : path.resolve(this.root());
    let removed = 0;
    for (const rel of await listFiles(parent)) {
      const key = parentKey ? `${parentKey}/${rel}` : rel;
      if (!key.startsWith(p)) continue;
      await unlink(path.join(parent, rel)).catch((err: unknown) => {
        if (!isEnoent(err)) throw err;
      });
      removed++;
    }
    return removed;
  }
}

/** Files (not folders) under `dir`, as "/"-separated paths relative to it; [] when it does not exist. */
async function listFiles(dir: string): Promise<string[]> {
  try {
    const entries = await readdir(dir, { recursive: true, withFileTypes: true });
    return entries.filter((e) => e.isFile()).map((e) => path.relative(dir, path.join(e.parentPath, e.name)).split(path.sep).join('/'));
  } catch (err) {
    if (isEnoent(err) || (err as NodeJS.ErrnoException).code === 'ENOTDIR') return [];
    throw err;
  }
}

async function countFiles(dir: string): Promise<number> {
  return (await listFiles(dir)).length;
}
