/**
 * Worker thread that owns the viewer's polygon readers (lib/viewer/layout-windows.ts): per layout revision either an
 * R-tree over the flattened layout (built on first use) or, for a GDSII file above the whole-read size, its on-disk
 * index read one window at a time. Answers polygons-in-box queries, so a 1–5 s build at a million polygons never
 * blocks the server's main thread. Queries for a revision still being opened wait for it here.
 * Compiled to node_modules/.cache/trenchant/viewer-index-worker.mjs by scripts/build-worker.mjs.
 */
import { parentPort, threadId } from 'node:worker_threads';
import { readerCache } from './reader-cache';
import type { IndexReply, IndexRequest } from './index-protocol';

// A few revisions at a time: an R-tree of 1M polygons holds ~150 MB.
const readers = readerCache(2);

const port = parentPort;
if (!port) throw new Error('index-worker must run as a worker thread');
port.on('message', (r: IndexRequest) => {
  void (async () => {
    try {
      const reader = await readers.get(r);
      const w = reader.query(r.box, r.max);
      const reply: IndexReply = { id: r.id, ok: true, threadId, polygons: w };
      port.postMessage(reply, [w.polyLayer.buffer as ArrayBuffer, w.offsets.buffer as ArrayBuffer, w.coords.buffer as ArrayBuffer]);
    } catch (err) {
      const e = err as Error & { code?: unknown };
      const reply: IndexReply = { id: r.id, ok: false, name: e?.name ?? 'Error', message: e?.message ?? String(err), code: typeof e?.code === 'string' ? e.code : undefined };
      port.postMessage(reply);
    }
  })();
});
