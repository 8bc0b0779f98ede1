/**
 * An analysis job's layout on S3 (lib/storage/job-files.ts localInput) comes through the read cache, with a counting
 * proxy in front of the fake S3 server (s3rver) so the test can say how many GETs reached the bucket: a worker that
 * runs an analysis and that analysis's tiles (which resolve the stored layout to the cached copy, stored-source.ts)
 * fetches the layout once; the job's file is a hard link to the cached copy (one copy on disk), still whole when the
 * cache drops its copy, and release() leaves the cached copy for the next job.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync, unlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { localInput } from '@/lib/storage/job-files';
import { CachedS3ObjectStore } from '@/lib/storage/cached-s3-store';
import { cachedPath } from '@/lib/storage/read-cache';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { S3ObjectStore } from '@/lib/storage/s3-store';
import { resolveStoredSpec, storedSpec } from '@/lib/pipeline/tiled/stored-source';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import { startCountingProxy, type CountingProxy } from './proxy';
import { pattern } from './test-bytes';

const scratch = mkdtempSync(path.join(tmpdir(), 'trenchant-job-input-'));
const saved = { ...process.env };
let fake: TestS3;
let proxy: CountingProxy;
let direct: S3ObjectStore;
let store: CachedS3ObjectStore;

beforeAll(async () => {
  fake = await startTestS3();
  proxy = await startCountingProxy(fake.endpoint);
  direct = new S3ObjectStore(s3ConfigFromEnv({ ...fake.env, TRENCHANT_S3_PREFIX: 'ji' })!);
  const viaProxy = { ...fake.env, TRENCHANT_S3_ENDPOINT: proxy.endpoint, TRENCHANT_S3_PREFIX: 'ji' };
  store = new CachedS3ObjectStore(s3ConfigFromEnv(viaProxy)!);
  // storage() (what the tile worker's resolveStoredSpec uses) is the same bucket, through the proxy.
  Object.assign(process.env, viaProxy, { TRENCHANT_CACHE_DIR: path.join(scratch, 'cache') });
});
afterAll(async () => {
  direct?.client.destroy();
  store?.client.destroy();
  proxy?.stop();
  await fake?.stop();
  for (const k of Object.keys(process.env)) if (!(k in saved)) delete process.env[k];
  Object.assign(process.env, saved);
  rmSync(scratch, { recursive: true, force: true });
});

describe('an analysis job reads its S3 layout through the read cache', () => {
  it('the job and the tile worker of the same process fetch the layout once', async () => {
    const key = 'layouts/viaduct/rev-7.gds';
    const bytes = pattern(2 * 1024 * 1024 + 3, 21);
    await direct.putBytes(key, bytes);
    await proxy.reset();
    const input = await localInput(store, key);
    const tiles = await resolveStoredSpec(storedSpec(key));
    expect(tiles.kind === 'file' && tiles.path).toBe(cachedPath(store, key));
    const again = await localInput(store, key); // a second analysis of the same revision
    expect(await proxy.count('GET', key)).toBe(1);
    expect(readFileSync(input.path).equals(bytes)).toBe(true);
    // One copy on disk: the job's file is the cached copy under another name.
    const cached = cachedPath(store, key);
    expect(statSync(input.path).ino).toBe(statSync(cached).ino);
    expect(statSync(input.path).nlink).toBe(3);
    await again.release();
    expect(existsSync(again.path)).toBe(false);
    expect(existsSync(cached)).toBe(true); // left for the next job and the tile worker
    // The cache lets its copy go (evicted, or the object deleted): the running job's file is still whole.
    unlinkSync(cached);
    expect(readFileSync(input.path).equals(bytes)).toBe(true);
    await input.release();
    expect(existsSync(input.path)).toBe(false);
    // With no cached copy any more, the next job fetches the layout again (and caches it).
    const third = await localInput(store, key);
    expect(readFileSync(third.path).equals(bytes)).toBe(true);
    expect(await proxy.count('GET', key)).toBe(2);
    expect(existsSync(cached)).toBe(true);
    await third.release();
  });

  it('a missing layout still fails as missing (the runner then names the revision as missing)', async () => {
    await expect(localInput(store, 'layouts/viaduct/none.gds')).rejects.toMatchObject({ name: 'StorageNotFoundError' });
  });
});
