/**
 * Worker thread that owns the viewer's polygon indexes (lib/viewer/polygon-index.ts): reads and flattens a layout
 * revision, builds its R-tree on first use and answers polygons-in-box queries, so a 1–5 s build at a million
 * polygons never blocks the server's main thread. Queries for a revision still being built wait for it here.
 * Compiled to node_modules/.cache/trenchant/viewer-index-worker.mjs by scripts/build-worker.mjs.
 */
import { parentPort, threadId } from 'node:worker_threads';
import { readLayoutFile } from '@/lib/layout/read';
import { buildPolygonIndex, queryPolygons, type PolygonIndex } from './polygon-index';
import type { IndexReply, IndexRequest } from './index-protocol';

// A few revisions at a time: an index of 1M polygons holds ~150 MB.
const CACHE_SIZE = 2;
const cache = new Map<string, Promise<PolygonIndex>>();

function indexFor(r: IndexRequest): Promise<PolygonIndex> {
  const hit = cache.get(r.revisionId);
  if (hit) {
    cache.delete(r.revisionId);
    cache.set(r.revisionId, hit);
    return hit;
  }
  const p = readLayoutFile(r.path, { topCell: r.topCell ?? undefined }).then(buildPolygonIndex);
  p.catch(() => cache.delete(r.revisionId));
  cache.set(r.revisionId, p);
  while (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value as string);
  return p;
}

const port = parentPort;
if (!port) throw new Error('index-worker must run as a worker thread');
port.on('message', (r: IndexRequest) => {
  void (async () => {
    try {
      const ix = await indexFor(r);
      const w = queryPolygons(ix, r.box, r.max);
      const reply: IndexReply = { id: r.id, ok: true, threadId, polygons: w };
      port.postMessage(reply, [w.polyLayer.buffer as ArrayBuffer, w.offsets.buffer as ArrayBuffer, w.coords.buffer as ArrayBuffer]);
    } catch (err) {
      const e = err as Error & { code?: unknown };
      const reply: IndexReply = { id: r.id, ok: false, name: e?.name ?? 'Error', message: e?.message ?? String(err), code: typeof e?.code === 'string' ? e.code : undefined };
      port.postMessage(reply);
    }
  })();
});
