/**
 * One GDSII index per tile worker, not per tile thread (index-registry.ts, tile-pool.ts, tile-thread.ts): the index
 * built in shared memory holds the same lists as the ordinary one and reads the same tiles; a pool of N threads runs
 * one index pass for a file however many threads take its tiles, and its tiles come out byte for byte as the
 * calling thread computes them from its own index; a changed file is indexed again, a bad one is not kept, and a
 * new pool over the same registry (after a thread died) indexes nothing. The references are the project's own
 * on-disk reader and tile jobs (checked against the whole-file reader and gdspy in tests/layout); what is checked
 * here is that sharing the index changes nothing.
 */
import { mkdtempSync, rmSync, statSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { MessageChannel, receiveMessageOnPort } from 'node:worker_threads';
import { afterAll, describe, expect, it } from 'vitest';
import { isShared } from '@/lib/layout/array-alloc';
import { indexGdsiiFile, type GdsiiIndex } from '@/lib/layout/gdsii-index';
import { gdsiiTileSourceOfSharedIndex, openGdsiiTileSource } from '@/lib/layout/gdsii-tile-source';
import { readLayoutFile } from '@/lib/layout/read';
import { runAnalysis } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema } from '@/lib/pipeline/settings';
import { runTiledAnalysis } from '@/lib/pipeline/tiled/run-tiled';
import { IndexRegistry } from '@/lib/pipeline/tiled/index-registry';
import { planTiles, type TilePlan } from '@/lib/pipeline/tiled/plan';
import { packPart } from '@/lib/pipeline/tiled/stitch-features';
import { sharedTileThreads } from '@/lib/pipeline/tiled/tile-pool';
import { runTileJob, type TileJob, type TileJobResult } from '@/lib/pipeline/tiled/tile-work';
import { allLayers, flatDie, hierarchicalDie, polygonsOf, tileGrid } from '../layout/tile-fixtures';
import { testModel } from './fixtures';

const dir = mkdtempSync(join(tmpdir(), 'trenchant-index-share-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function write(name: string, bytes: Uint8Array): string {
  const file = join(dir, name);
  writeFileSync(file, bytes);
  return file;
}

/** Every typed array of the element lists, in order. */
function listArrays(index: GdsiiIndex): ArrayBufferView[] {
  return index.cells.flatMap((c) => c.lists.flatMap((l) => [...l.offsetChunks, ...l.boxChunks, l.exact, ...(l.grid ? [l.grid.starts, l.grid.boxes] : [])]));
}

const bytesOf = (a: ArrayBufferView) => Buffer.from(a.buffer, a.byteOffset, a.byteLength);

describe('the GDSII index in shared memory', () => {
  const files = [write('hier.gds', hierarchicalDie()), write('flat.gds', flatDie(40_000)), 'samples/mems-die.gds'];

  it('holds the same lists as the ordinary index, all of them shared', () => {
    for (const file of files) {
      const plain = indexGdsiiFile(file);
      const shared = indexGdsiiFile(file, { shared: true });
      expect([plain.shared, shared.shared]).toEqual([false, true]);
      const a = listArrays(plain), b = listArrays(shared);
      expect(b.length).toBe(a.length);
      expect(b.length).toBeGreaterThan(0);
      b.forEach((x, k) => {
        expect(x.constructor).toBe(a[k]!.constructor);
        expect(bytesOf(x).equals(bytesOf(a[k]!)), `${file} array ${k}`).toBe(true);
        expect(isShared(x)).toBe(true);
      });
      expect(a.some(isShared)).toBe(false);
      expect({ ...shared, cells: null, shared: true }).toEqual({ ...plain, cells: null, shared: true });
    }
  });

  it('posted to another port, shares its lists (a write shows through) and reads the same tiles', () => {
    for (const file of files) {
      const index = indexGdsiiFile(file, { shared: true });
      const { port1, port2 } = new MessageChannel();
      port1.postMessage(index);
      const got = receiveMessageOnPort(port2)?.message as GdsiiIndex;
      port1.close();
      const [mine, theirs] = [listArrays(index), listArrays(got)];
      // Same memory, not a copy: a change made through one view is seen through the other.
      const probe = theirs[0] as Int32Array | Uint32Array | Float64Array;
      const was = probe[0] as number;
      (mine[0] as typeof probe)[0] = was + 2;
      expect(probe[0]).toBe(was + 2);
      (mine[0] as typeof probe)[0] = was;
      // The cell structure arrives whole (a list's cell is the library's cell).
      expect(got.cells[0]!.def).toBe(got.lib.cells[0]);
      const ref = openGdsiiTileSource(file);
      const src = gdsiiTileSourceOfSharedIndex(got);
      try {
        expect(src.header).toEqual(ref.header);
        const layers = allLayers(ref);
        for (const t of tileGrid(ref.header.bboxDbu!, 4, 3)) expect(polygonsOf(src.readTile(t.box, layers))).toEqual(polygonsOf(ref.readTile(t.box, layers)));
      } finally {
        src.close();
        ref.close();
      }
    }
  });

  it('takes another top cell, and refuses a file changed since it was indexed', () => {
    const file = write('hier-top.gds', hierarchicalDie());
    const index = indexGdsiiFile(file, { shared: true });
    expect(gdsiiTileSourceOfSharedIndex(index, { topCell: 'GYRO' }).header).toEqual(openGdsiiTileSource(file, { topCell: 'GYRO' }).header);
    expect(() => gdsiiTileSourceOfSharedIndex(index, { topCell: 'NOPE' })).toThrow(/top cell "NOPE" is not in the library/);
    const st = statSync(file);
    utimesSync(file, st.atime, new Date(st.mtimeMs + 5000));
    expect(() => gdsiiTileSourceOfSharedIndex(index)).toThrow(/changed while it was being read tile by tile/);
  });
});

const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 4 } });

function planFor(file: string): TilePlan {
  const src = openGdsiiTileSource(file);
  try {
    return planTiles(src.header, settings, { tileUm: 250 });
  } finally {
    src.close();
  }
}

/** What the calling thread computes for each job from its own index: the reference, compared byte for byte. */
function expected(file: string, plan: TilePlan, jobs: TileJob[]): Buffer[] {
  const src = openGdsiiTileSource(file);
  try {
    return jobs.map((j) => packed(runTileJob(src, plan, j)));
  } finally {
    src.close();
  }
}

function packed(r: TileJobResult): Buffer {
  return Buffer.concat([bytesOf(r.acc ?? new Float64Array(0)), bytesOf(packPart(r)), bytesOf(Float64Array.from(r.pending))]);
}

describe('a pool of tile threads', () => {
  it('indexes a file once for two threads and six tiles at once; the tiles equal the inline ones byte for byte', async () => {
    const file = write('pool.gds', flatDie(6_000, 5));
    const plan = planFor(file);
    const jobs: TileJob[] = Array.from({ length: Math.min(6, plan.ntx * plan.nty) }, (_, t) => ({ kind: 'core', tile: t, marginDbu: plan.marginDbu }));
    expect(jobs.length).toBe(6);
    const want = expected(file, plan, jobs);
    const registry = new IndexRegistry();
    const pool = sharedTileThreads(2, registry)!;
    try {
      const spec = { kind: 'file' as const, path: file };
      const got = await Promise.all(jobs.map((j) => pool.run(j, spec, plan)));
      expect(got.map(packed)).toEqual(want);
      expect(new Set(got.map((r) => r.worker))).toEqual(new Set([0, 1])); // both threads ran tiles
      expect(registry.builds).toBe(1);
      expect(pool.indexPasses().reduce((a, b) => a + b, 0)).toBe(1);

      // The file replaced (other content, later time): indexed again, once, and the tiles follow the new file.
      writeFileSync(file, flatDie(6_000, 6));
      const st = statSync(file);
      utimesSync(file, st.atime, new Date(st.mtimeMs + 2000));
      const plan2 = planFor(file);
      const jobs2 = jobs.slice(0, 4);
      const got2 = await Promise.all(jobs2.map((j) => pool.run(j, spec, plan2)));
      expect(got2.map(packed)).toEqual(expected(file, plan2, jobs2));
      expect(got2.map(packed)).not.toEqual(want.slice(0, 4));
      expect(registry.builds).toBe(2);
      expect(pool.indexPasses().reduce((a, b) => a + b, 0)).toBe(2);

      // Same size, only the time changed: still a different file state, so indexed again.
      utimesSync(file, st.atime, new Date(st.mtimeMs + 4000));
      await pool.run(jobs2[0]!, spec, plan2);
      expect(registry.builds).toBe(3);
    } finally {
      await pool.close();
    }
  }, 120_000);

  it('a new pool over the same registry (the old one lost a thread) indexes nothing; a bad file is not kept', async () => {
    const file = write('again.gds', flatDie(4_000, 9));
    const plan = planFor(file);
    const jobs: TileJob[] = [0, 1, 2].map((t) => ({ kind: 'core', tile: t, marginDbu: plan.marginDbu }));
    const want = expected(file, plan, jobs);
    const registry = new IndexRegistry();
    const spec = { kind: 'file' as const, path: file };
    const first = sharedTileThreads(1, registry)!;
    await first.run(jobs[0]!, spec, plan);
    // Its thread dies (as a tile worker's thread out of memory would): the pool is broken, the index is not lost.
    const dying = { kind: 'module' as const, url: new URL('./tiled-fixture-source.ts', import.meta.url).href, exportName: 'openDyingSource', args: {} };
    await expect(first.run(jobs[0]!, dying, plan)).rejects.toThrow(/tile worker 0 stopped \(exit code 7\)/);
    expect(first.broken()).toBe(true);
    await first.close();
    const second = sharedTileThreads(2, registry)!;
    try {
      expect((await Promise.all(jobs.map((j) => second.run(j, spec, plan)))).map(packed)).toEqual(want);
      expect(registry.builds).toBe(1);
      expect(second.indexPasses()).toEqual([0, 0]);

      // Cut inside a record: the build fails with the reader's message, every time (never kept as an index).
      const bad = write('cut.gds', flatDie(2_000).subarray(0, 5_001));
      for (let k = 0; k < 2; k++) await expect(second.run(jobs[0]!, { kind: 'file', path: bad }, plan)).rejects.toThrow(/cut\.gds|truncated|ends|byte/i);
      expect(registry.builds).toBe(3);
      expect(registry.size).toBe(1);
      expect(second.broken()).toBe(false);
    } finally {
      await second.close();
    }
  }, 120_000);
});

describe('an analysis on its own tile threads', () => {
  it('hands its shared index to them (no pass there); a source of its own index makes one pass for both threads; same result', async () => {
    const file = write('analysis.gds', flatDie(6_000, 8));
    const model = testModel();
    const whole = runAnalysis(await readLayoutFile(file), settings, model);
    const spec = { kind: 'file' as const, path: file };
    for (const [shared, passes] of [[true, 0], [false, 1]] as const) {
      const source = openGdsiiTileSource(file, { shared });
      try {
        const tiled = await runTiledAnalysis(source, settings, model, { tileUm: 300, spec, threads: 2, queueUrl: null });
        expect(tiled.tiled).toMatchObject({ via: 'threads', threads: 2, threadIndexPasses: passes });
        const { timingsMs: _a, ...a } = tiled.summary;
        const { timingsMs: _b, ...b } = whole.summary;
        expect(a).toEqual(b);
        expect(tiled.features).toEqual(whole.features);
        tiled.maps.forEach((m, k) => expect(bytesOf(m.values).equals(bytesOf(whole.maps[k]!.values))).toBe(true));
      } finally {
        source.close();
      }
    }
  }, 120_000);
});

describe('the index registry', () => {
  it('builds once per file state, keeps the last two, tells when one goes, and drops failed builds', async () => {
    const a = write('ra.gds', flatDie(50, 1)), b = write('rb.gds', flatDie(50, 2)), c = write('rc.gds', flatDie(50, 3));
    const registry = new IndexRegistry(2);
    const gone: string[] = [];
    registry.onEvict((id) => gone.push(id));
    let builds = 0;
    const build = async (path: string) => {
      builds++;
      return indexGdsiiFile(path, { shared: true });
    };
    const [ra, ra2] = await Promise.all([registry.get(a, build), registry.get(a, build)]);
    expect(ra2).toBe(ra);
    expect(builds).toBe(1);
    const rb = await registry.get(b, build)!;
    await registry.get(c, build);
    await new Promise((r) => setTimeout(r, 0));
    expect(gone).toEqual([ra!.id]); // a was the least recently used
    expect(registry.size).toBe(2);
    expect((await registry.get(b, build)!).id).toBe(rb.id);
    expect(builds).toBe(3);
    // Not a GDSII stream: no index (the thread's own opener reads it and names any problem).
    expect(registry.get(write('x.csv', new TextEncoder().encode('layer,datatype,x,y\n')), build)).toBeNull();
    expect(registry.get(join(dir, 'missing.gds'), build)).toBeNull();
    // A failed build is not kept.
    const failing = async () => {
      throw new Error('thread died');
    };
    const d = write('rd.gds', flatDie(50, 4));
    await expect(registry.get(d, failing)).rejects.toThrow('thread died');
    expect((await registry.get(d, build)!).index.path).toBe(d);
    // An index built elsewhere in shared memory is taken as it is; an ordinary one is not.
    const other = new IndexRegistry();
    other.put(indexGdsiiFile(a));
    expect(other.size).toBe(0);
    const seeded = indexGdsiiFile(a, { shared: true });
    other.put(seeded);
    expect((await other.get(a, failing)!).index).toBe(seeded);
  });
});
