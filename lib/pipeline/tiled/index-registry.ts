/**
 * The GDSII indexes a pool of tile threads works from (tile-pool.ts), built once per file instead of once per
 * thread. The registry lives with the pool's owner — a tile queue worker's main thread, across pool restarts, or
 * one analysis — and holds each index built in shared memory (gdsii-index.ts `shared`): a thread builds it, posts
 * it back, and every other thread receives the same lists, not a copy.
 *
 * An index belongs to the file as it was: entries are keyed by path, size and modification time, looked up afresh
 * on every request, so a replaced layout (the local data folder's file overwritten, a new cache copy) gets a new
 * index; one whose file changed while it was being built is handed out once (the tile source then refuses it as
 * changed) but not kept. A build that fails (bad file, its thread died) is not kept either: the next request builds
 * again. The last `keep` indexes are kept; listeners hear when one goes, so threads can let it go too.
 */
import { randomBytes } from 'node:crypto';
import { closeSync, openSync, readSync, statSync } from 'node:fs';
import { resolve } from 'node:path';
import type { GdsiiIndex } from '../../layout/gdsii-index';

export interface RegisteredIndex {
  /** Names this index in this registry's messages to threads. */
  id: string;
  index: GdsiiIndex;
}

/** Builds the index of `path` (`id` names it for the thread that builds it). */
export type IndexBuilder = (path: string, id: string) => Promise<GdsiiIndex>;

interface FileState {
  key: string;
  size: number;
  mtimeMs: number;
}

/** The file's identity now, or null when it is not a GDSII stream (or cannot be read: its opener names why). */
function gdsiiFileState(path: string): FileState | null {
  try {
    const st = statSync(path);
    if (!st.isFile()) return null;
    const head = new Uint8Array(4);
    const fd = openSync(path, 'r');
    try {
      if (readSync(fd, head, 0, 4, 0) !== 4) return null;
    } finally {
      closeSync(fd);
    }
    // A GDSII stream starts with the HEADER record 00 06 00 02 (as open-tile-source.ts decides).
    if (head[0] !== 0 || head[1] !== 6 || head[2] !== 0 || head[3] !== 2) return null;
    return { key: `${resolve(path)}\u0000${st.size}\u0000${st.mtimeMs}`, size: st.size, mtimeMs: st.mtimeMs };
  } catch {
    return null;
  }
}

export class IndexRegistry {
  /** Least recently used first. */
  private readonly entries = new Map<string, Promise<RegisteredIndex>>();
  private readonly listeners = new Set<(id: string) => void>();
  private readonly prefix = randomBytes(4).toString('hex');
  private seq = 0;
  /** Index builds started, for tests and logs. */
  builds = 0;

  constructor(private readonly keep = 2) {}

  /** The shared index of the GDSII file at `path` as it is now, built by `build` unless already here; null: not GDSII. */
  get(path: string, build: IndexBuilder): Promise<RegisteredIndex> | null {
    const file = gdsiiFileState(path);
    if (!file) return null;
    const known = this.entries.get(file.key);
    if (known) {
      this.entries.delete(file.key);
      this.entries.set(file.key, known);
      return known;
    }
    const id = `${this.prefix}-${++this.seq}`;
    this.builds++;
    const p: Promise<RegisteredIndex> = build(path, id).then((index) => {
      if (index.fileSize !== file.size || index.mtimeMs !== file.mtimeMs) this.forget(file.key, p);
      return { id, index };
    });
    p.catch(() => this.forget(file.key, p));
    this.entries.set(file.key, p);
    this.trim();
    return p;
  }

  /** Adds an index built elsewhere in shared memory (the analysis's own), if its file is still as it was indexed. */
  put(index: GdsiiIndex): void {
    if (!index.shared) return;
    const file = gdsiiFileState(index.path);
    if (!file || file.size !== index.fileSize || file.mtimeMs !== index.mtimeMs || this.entries.has(file.key)) return;
    this.entries.set(file.key, Promise.resolve({ id: `${this.prefix}-${++this.seq}`, index }));
    this.trim();
  }

  /** Called with the id of every index this registry lets go. Returns the unsubscribe. */
  onEvict(listener: (id: string) => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  /** Indexes held now. */
  get size(): number {
    return this.entries.size;
  }

  clear(): void {
    for (const key of [...this.entries.keys()]) this.evict(key);
  }

  private trim(): void {
    while (this.entries.size > this.keep) this.evict(this.entries.keys().next().value as string);
  }

  private forget(key: string, p: Promise<RegisteredIndex>): void {
    if (this.entries.get(key) === p) this.evict(key);
  }

  private evict(key: string): void {
    const p = this.entries.get(key);
    this.entries.delete(key);
    void p?.then(({ id }) => {
      for (const f of this.listeners) f(id);
    }, () => undefined);
  }
}
