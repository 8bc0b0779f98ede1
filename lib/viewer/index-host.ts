/**
 * Server side of the polygon-index worker thread (lib/viewer/index-worker.ts): one long-lived worker per server
 * process holds the polygon readers (an R-tree, or for a layout above the whole-read size its on-disk GDSII index
 * read a window at a time: layout-windows.ts) and answers polygons-in-box queries; callers await a promise, so while the worker
 * builds a million-polygon index the main thread keeps serving other requests. The worker runs the compiled
 * node_modules/.cache/trenchant/viewer-index-worker.mjs (scripts/build-worker.mjs, rebuilt here when missing or
 * older than its sources). If no worker can start, the index is built on the calling thread as before: slower to
 * others, never different.
 */
import { execFile } from 'node:child_process';
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import { ApiError } from '@/lib/http/errors';
import type { IndexReply, IndexRequest } from './index-protocol';
import { readerCache } from './reader-cache';
import type { WirePolygons } from './polygon-wire';

const OUT_REL = path.join('node_modules', '.cache', 'trenchant', 'viewer-index-worker.mjs');
const ENTRY_REL = path.join('lib', 'viewer', 'index-worker.ts');

export type IndexQuery = Omit<IndexRequest, 'id'>;
export type IndexAnswer = { polygons: WirePolygons; threadId: number };

const projectRoot = () => process.env.TRENCHANT_ROOT ?? process.cwd();

/** Null when the compiled worker is up to date, else why it needs building. */
function staleReason(root: string): string | null {
  const out = path.join(/*turbopackIgnore: true*/ root, OUT_REL);
  const manifest = `${out}.inputs.json`;
  if (!existsSync(/*turbopackIgnore: true*/ out) || !existsSync(/*turbopackIgnore: true*/ manifest)) return 'not built yet';
  if (!existsSync(/*turbopackIgnore: true*/ path.join(/*turbopackIgnore: true*/ root, ENTRY_REL))) return null; // deployed without sources
  const builtAt = statSync(/*turbopackIgnore: true*/ out).mtimeMs;
  try {
    for (const rel of JSON.parse(readFileSync(/*turbopackIgnore: true*/ manifest, 'utf8')) as string[]) {
      const p = path.join(/*turbopackIgnore: true*/ root, String(rel));
      if (!existsSync(/*turbopackIgnore: true*/ p) || statSync(/*turbopackIgnore: true*/ p).mtimeMs > builtAt) return `${rel} changed`;
    }
  } catch {
    return 'its input list is unreadable';
  }
  return null;
}

async function compiledWorker(): Promise<string> {
  const root = projectRoot();
  const reason = staleReason(root);
  if (reason) {
    console.log(`[trenchant] compiling the viewer index worker (${reason})`);
    await new Promise<void>((resolve, reject) =>
      execFile(process.execPath, [path.join(/*turbopackIgnore: true*/ root, 'scripts', 'build-worker.mjs')], { cwd: root, timeout: 120_000 }, (err, _o, stderr) => (err ? reject(new Error(`could not compile the viewer index worker: ${stderr.trim().split('\n').slice(-2).join(' ') || err.message}`)) : resolve())),
    );
  }
  return path.join(/*turbopackIgnore: true*/ root, OUT_REL);
}

type Pending = { resolve: (a: IndexAnswer) => void; reject: (e: Error) => void };
type Host = { worker: Promise<Worker | null>; pending: Map<number, Pending>; next: number };
const holder = globalThis as typeof globalThis & { __trenchantIndexHost?: Host };

function fail(pending: Map<number, Pending>, why: string) {
  for (const p of pending.values()) p.reject(new Error(why));
  pending.clear();
}

function host(): Host {
  if (holder.__trenchantIndexHost) return holder.__trenchantIndexHost;
  const pending = new Map<number, Pending>();
  const h: Host = { pending, next: 1, worker: Promise.resolve(null) };
  h.worker = compiledWorker()
    .then((file) => {
      const w = new Worker(file);
      // An idle index worker must not keep the process (tests, CLI) alive.
      w.unref();
      w.on('message', (m: IndexReply) => {
        const p = pending.get(m.id);
        if (!p) return;
        pending.delete(m.id);
        if (m.ok) p.resolve({ polygons: m.polygons, threadId: m.threadId });
        else p.reject(m.name === 'LayoutReadError' ? new ApiError('conflict', `The layout of this analysis could not be read: ${m.message}`) : new Error(m.message));
      });
      const gone = (why: string) => {
        fail(pending, why);
        // The next query starts a fresh worker.
        if (holder.__trenchantIndexHost === h) holder.__trenchantIndexHost = undefined;
      };
      w.on('error', (e) => gone(`the polygon index worker failed: ${e.message}`));
      w.on('exit', (code) => gone(`the polygon index worker stopped (exit code ${code})`));
      return w;
    })
    .catch((err: unknown) => {
      console.warn(`[trenchant] viewer index worker unavailable, indexing on the main thread: ${err instanceof Error ? err.message : String(err)}`);
      return null;
    });
  holder.__trenchantIndexHost = h;
  return h;
}

// Fallback when no worker starts: the same readers on this thread.
const local = readerCache(2);

/** Polygons of a layout revision meeting `box` (at most `max`), from the worker thread's index for that revision. */
export async function queryPolygonsOffThread(q: IndexQuery): Promise<IndexAnswer> {
  const h = host();
  const w = await h.worker;
  if (!w) return { polygons: (await local.get(q)).query(q.box, q.max), threadId: 0 };
  const id = h.next++;
  return new Promise<IndexAnswer>((resolve, reject) => {
    h.pending.set(id, { resolve, reject });
    const req: IndexRequest = { id, ...q };
    w.postMessage(req);
  });
}
