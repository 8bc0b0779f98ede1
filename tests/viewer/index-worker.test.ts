// The viewer's polygon index is built on a worker thread: the main thread keeps answering while it builds, and
// the answers equal the in-thread index's.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { threadId } from 'node:worker_threads';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';
import { readLayoutFile } from '@/lib/layout/read';
import { queryPolygonsOffThread } from '@/lib/viewer/index-host';
import { buildPolygonIndex, queryPolygons } from '@/lib/viewer/polygon-index';

/** n × n squares of 0.5 µm at a 1 µm pitch as one AREF: a small file that flattens to n² polygons. */
function arrayGds(n: number): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'IDX' });
  w.beginCell('TOP').aref('SQ', n, n, [0, 0], [n * 1000, 0], [0, n * 1000]).endCell();
  w.beginCell('SQ').rect(1, 0, 0, 0, 500, 500).endCell();
  return w.finish();
}

describe('polygon index on a worker thread', () => {
  let dir = '';
  let server: Server;
  let url = '';
  beforeAll(async () => {
    dir = mkdtempSync(path.join(tmpdir(), 'trenchant-index-'));
    writeFileSync(path.join(dir, 'small.gds'), arrayGds(10));
    writeFileSync(path.join(dir, 'big.gds'), arrayGds(600));
    server = createServer((_req, res) => res.end('pong'));
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
    const a = server.address();
    url = `http://127.0.0.1:${typeof a === 'object' && a ? a.port : 0}/`;
  });
  afterAll(async () => {
    await new Promise((r) => server.close(r));
    rmSync(dir, { recursive: true, force: true });
  });

  it('answers from another thread, equal to the in-thread index', async () => {
    const q = { revisionId: 'small', path: path.join(dir, 'small.gds'), topCell: null, box: [2, 2, 5.2, 5.2] as [number, number, number, number], max: 1000 };
    const got = await queryPolygonsOffThread(q);
    expect(got.threadId).not.toBe(threadId);
    const want = queryPolygons(buildPolygonIndex(await readLayoutFile(q.path)), q.box, q.max);
    expect(got.polygons.total).toBe(want.total);
    expect(got.polygons.total).toBe(16); // squares at 2,3,4,5 in x and y meet the box
    expect([...got.polygons.coords]).toEqual([...want.coords]);
  }, 120_000);

  it('the main thread keeps serving HTTP while a 360,000-polygon index builds', async () => {
    let done = false;
    const answeredBefore: boolean[] = [];
    const build = queryPolygonsOffThread({ revisionId: 'big', path: path.join(dir, 'big.gds'), topCell: null, box: [100, 100, 110, 110], max: 50_000 }).then((a) => {
      done = true;
      return a;
    });
    // Ping the in-process server until the index is ready (at most 200 pings).
    for (let k = 0; k < 200 && !done; k++) {
      const r = await fetch(url);
      expect(await r.text()).toBe('pong');
      answeredBefore.push(!done);
    }
    const a = await build;
    expect(a.polygons.total).toBe(121); // 100..110 inclusive in x and y (a square's box meets the edge)
    // Had the build run on this thread, no ping could have been answered while it ran.
    expect(answeredBefore.filter(Boolean).length).toBeGreaterThan(3);
  }, 120_000);

  it('a bad layout file is a clear error, and the worker keeps serving afterwards', async () => {
    writeFileSync(path.join(dir, 'bad.gds'), new Uint8Array([0, 6, 0, 2, 0, 3, 9, 9, 9]));
    await expect(queryPolygonsOffThread({ revisionId: 'bad', path: path.join(dir, 'bad.gds'), topCell: null, box: [0, 0, 1, 1], max: 10 })).rejects.toThrow(/could not be read/);
    const again = await queryPolygonsOffThread({ revisionId: 'small', path: path.join(dir, 'small.gds'), topCell: null, box: [0, 0, 1, 1], max: 100 });
    expect(again.polygons.total).toBeGreaterThan(0);
  }, 60_000);
});
