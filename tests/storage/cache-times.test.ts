/**
 * Marking a cached S3 copy as used must not look like a replaced file to a reader that has it open: the GDSII tile
 * source (a tile worker's, the viewer's) compares size and modification time before each tile and refuses a file
 * that changed under it. Before the fix, cachedCopy refreshed the modification time and the next tile failed with
 * "changed while it was being read". Runs against the fake S3 server (s3rver).
 */
import { readFileSync, rmSync, mkdtempSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openLayoutTileSource } from '@/lib/layout/open-tile-source';
import { CachedS3ObjectStore } from '@/lib/storage/cached-s3-store';
import { cachedCopy, readablePath } from '@/lib/storage/read-cache';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import { PROJECT_ROOT } from '../support/server';

const scratch = mkdtempSync(path.join(tmpdir(), 'trenchant-cache-times-'));
const saved = process.env.TRENCHANT_CACHE_DIR;
let fake: TestS3;
let store: CachedS3ObjectStore;

beforeAll(async () => {
  fake = await startTestS3();
  process.env.TRENCHANT_CACHE_DIR = path.join(scratch, 'cache');
  store = new CachedS3ObjectStore(s3ConfigFromEnv({ ...fake.env, TRENCHANT_S3_PREFIX: 'ct' })!);
});
afterAll(async () => {
  store?.client.destroy();
  await fake?.stop();
  if (saved === undefined) delete process.env.TRENCHANT_CACHE_DIR;
  else process.env.TRENCHANT_CACHE_DIR = saved;
  rmSync(scratch, { recursive: true, force: true });
});

describe('read cache: use marks keep the modification time', () => {
  it('a tile source open on a cached copy reads on after the copy is marked used', async () => {
    const key = 'layouts/mems-die.gds';
    await store.putBytes(key, readFileSync(path.join(PROJECT_ROOT, 'samples', 'mems-die.gds')));
    const file = await readablePath(store, key);
    const before = statSync(file);
    const source = await openLayoutTileSource(file);
    try {
      const box = source.header.bboxDbu!;
      const layers = source.header.layers.map(({ layer, datatype }) => ({ layer, datatype }));
      const first = source.readTile(box, layers).layers.reduce((n, s) => n + s.count, 0);
      expect(first).toBeGreaterThan(0);
      await new Promise((r) => setTimeout(r, 20));
      expect(cachedCopy(store, key)).toBe(file);
      const after = statSync(file);
      expect(after.mtimeMs).toBe(before.mtimeMs);
      expect(after.atimeMs).toBeGreaterThan(before.atimeMs);
      // The same tile again: no "changed" error, same polygons.
      expect(source.readTile(box, layers).layers.reduce((n, s) => n + s.count, 0)).toBe(first);
    } finally {
      source.close();
    }
  });
});
