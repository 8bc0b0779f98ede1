/**
 * The storage interface (lib/storage) on both backends with one table of checks: the data folder, and S3 through
 * the AWS SDK against a local fake S3 server (s3rver, scripts/fake-s3.mjs). Checks: bytes, files (moved and
 * copied) and streams round-trip byte for byte, a 19 MiB stream goes up in several multipart parts (above the
 * 8 MiB part size) and comes back with the same SHA-256; byte ranges follow HTTP Range semantics (RFC 9110 §14.1.2:
 * first..last inclusive; here given as [start, end)) and are clipped at the end; stat gives the size and null for
 * a missing object; delete-by-prefix removes exactly the keys starting with the prefix ("analyses/a1/" keeps
 * "analyses/a10/..."); keys that would leave the folder are refused on both; the read cache (S3: a local copy,
 * fetched asynchronously or, cold, synchronously through a worker thread) returns the same bytes.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isStorageNotFound, StorageKeyError, type ObjectStore } from '@/lib/storage';
import { localInput, resultStaging } from '@/lib/storage/job-files';
import { LocalObjectStore } from '@/lib/storage/local-store';
import { cacheDir, readablePath, readablePathSync } from '@/lib/storage/read-cache';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { S3ObjectStore } from '@/lib/storage/s3-store';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import { pattern, sha } from './test-bytes';

const scratch = mkdtempSync(path.join(tmpdir(), 'trenchant-storage-test-'));
let fake: TestS3;
const stores: Record<'local' | 's3', ObjectStore> = {} as Record<'local' | 's3', ObjectStore>;
const savedCacheDir = process.env.TRENCHANT_CACHE_DIR;

beforeAll(async () => {
  fake = await startTestS3();
  const config = s3ConfigFromEnv({ ...fake.env, TRENCHANT_S3_PREFIX: 'unit' });
  if (!config) throw new Error('no S3 config from the fake server env');
  stores.s3 = new S3ObjectStore(config);
  stores.local = new LocalObjectStore(() => path.join(scratch, 'data'));
  process.env.TRENCHANT_CACHE_DIR = path.join(scratch, 'cache');
});
afterAll(async () => {
  (stores.s3 as S3ObjectStore | undefined)?.client.destroy();
  await fake?.stop();
  if (savedCacheDir === undefined) delete process.env.TRENCHANT_CACHE_DIR;
  else process.env.TRENCHANT_CACHE_DIR = savedCacheDir;
  rmSync(scratch, { recursive: true, force: true });
});

describe.each(['local', 's3'] as const)('object store: %s', (kind) => {
  const store = () => stores[kind];

  it('puts and gets bytes, and stat gives the size', async () => {
    const bytes = pattern(1000);
    await store().putBytes('analyses/x1/risk.trgrid', bytes);
    expect(Buffer.from(await store().getBytes('analyses/x1/risk.trgrid')).equals(bytes)).toBe(true);
    const st = await store().stat('analyses/x1/risk.trgrid');
    expect(st?.size).toBe(1000);
    expect(await store().stat('analyses/x1/nothing.trgrid')).toBeNull();
    // Overwrite replaces the whole object.
    await store().putBytes('analyses/x1/risk.trgrid', pattern(10, 2));
    expect(Buffer.from(await store().getBytes('analyses/x1/risk.trgrid')).equals(pattern(10, 2))).toBe(true);
  });

  it('puts a file (copied, then moved) and downloads it again', async () => {
    const src = path.join(scratch, `${kind}-src.gds`);
    writeFileSync(src, pattern(70_000, 3));
    await store().putFile('layouts/p1/r1.gds', src);
    expect(existsSync(src)).toBe(true);
    await store().putFile('layouts/p1/r2.gds', src, { move: true });
    expect(existsSync(src)).toBe(false);
    const dest = path.join(scratch, `${kind}-down`, 'copy.gds');
    await store().downloadTo('layouts/p1/r2.gds', dest);
    expect(readFileSync(dest).equals(pattern(70_000, 3))).toBe(true);
    expect(sha(await store().getBytes('layouts/p1/r1.gds'))).toBe(sha(pattern(70_000, 3)));
  });

  it('streams a 19 MiB layout up (multipart on S3) and down with the same SHA-256', async () => {
    const big = pattern(19 * 1024 * 1024 + 123, 4);
    // Odd chunk sizes, so the parts do not line up with the chunks.
    const chunks: Buffer[] = [];
    for (let at = 0; at < big.length; at += 3_000_001) chunks.push(big.subarray(at, Math.min(big.length, at + 3_000_001)));
    await store().putStream('layouts/p1/big.gds', Readable.from(chunks));
    expect((await store().stat('layouts/p1/big.gds'))?.size).toBe(big.length);
    const hash = createHash('sha256');
    let n = 0;
    for await (const c of await store().getStream('layouts/p1/big.gds')) {
      hash.update(c as Buffer);
      n++;
    }
    expect(hash.digest('hex')).toBe(sha(big));
    expect(n).toBeGreaterThan(1); // streamed, not one buffer
  });

  it('reads byte ranges, clipped at the end', async () => {
    const bytes = pattern(5000, 5);
    await store().putBytes('analyses/x2/features.trfeat', bytes);
    const get = (start: number, end?: number) => store().getBytes('analyses/x2/features.trfeat', end === undefined ? { start } : { start, end });
    expect(Buffer.from(await get(100, 164)).equals(bytes.subarray(100, 164))).toBe(true);
    expect(Buffer.from(await get(0, 1)).equals(bytes.subarray(0, 1))).toBe(true);
    expect(Buffer.from(await get(4990)).equals(bytes.subarray(4990))).toBe(true);
    expect(Buffer.from(await get(4990, 9000)).equals(bytes.subarray(4990))).toBe(true);
    expect((await get(5000)).byteLength).toBe(0);
    expect((await get(7000, 8000)).byteLength).toBe(0);
    expect((await get(10, 10)).byteLength).toBe(0);
  });

  it('names a missing object', async () => {
    const err = await store().getBytes('analyses/none/risk.trgrid').catch((e: unknown) => e);
    expect(isStorageNotFound(err)).toBe(true);
    expect(String(err)).toContain('analyses/none/risk.trgrid');
    await expect(store().getStream('analyses/none/risk.trgrid', { start: 0, end: 0 })).rejects.toThrow(/missing/);
    await expect(store().downloadTo('analyses/none/risk.trgrid', path.join(scratch, 'none'))).rejects.toThrow(/missing/);
  });

  it('deletes one key, and exactly the keys under a prefix', async () => {
    for (const k of ['analyses/a1/risk.trgrid', 'analyses/a1/features.trfeat', 'analyses/a1/sub/x', 'analyses/a10/risk.trgrid', 'analyses/a2/risk.trgrid']) await store().putBytes(k, pattern(10));
    expect(await store().deletePrefix('analyses/a1/')).toBe(3);
    expect(await store().stat('analyses/a1/risk.trgrid')).toBeNull();
    expect(await store().stat('analyses/a1/sub/x')).toBeNull();
    expect(await store().stat('analyses/a10/risk.trgrid')).not.toBeNull();
    expect(await store().deletePrefix('analyses/a1/')).toBe(0);
    // A partial name matches like a string prefix (S3's semantics).
    expect(await store().deletePrefix('analyses/a1')).toBe(1);
    expect(await store().stat('analyses/a10/risk.trgrid')).toBeNull();
    expect(await store().stat('analyses/a2/risk.trgrid')).not.toBeNull();
    await store().delete('analyses/a2/risk.trgrid');
    await store().delete('analyses/a2/risk.trgrid'); // absent: no error
    expect(await store().stat('analyses/a2/risk.trgrid')).toBeNull();
  });

  it('refuses keys that would leave the folder', async () => {
    for (const bad of ['../escape.gds', 'layouts/../../etc/passwd', '/abs/path', 'a//b', 'layouts/./x', '']) {
      await expect(store().putBytes(bad, pattern(1))).rejects.toBeInstanceOf(StorageKeyError);
      await expect(store().stat(bad)).rejects.toBeInstanceOf(StorageKeyError);
    }
    await expect(store().deletePrefix('../')).rejects.toBeInstanceOf(StorageKeyError);
  });

  it('gives readers a local file (async and sync) with the stored bytes', async () => {
    const bytes = pattern(40_000, 6);
    await store().putBytes('analyses/c1/features.trfeat', bytes);
    await store().putBytes('analyses/c2/features.trfeat', pattern(30_000, 7));
    const a = await readablePath(store(), 'analyses/c1/features.trfeat');
    expect(readFileSync(a).equals(bytes)).toBe(true);
    const b = readablePathSync(store(), 'analyses/c2/features.trfeat'); // cold on S3: the blocking fetch
    expect(readFileSync(b).equals(pattern(30_000, 7))).toBe(true);
    if (kind === 's3') {
      expect(a.startsWith(cacheDir(store()))).toBe(true);
      expect(b.startsWith(cacheDir(store()))).toBe(true);
      expect(() => readablePathSync(store(), 'analyses/none/features.trfeat')).toThrow(/missing/);
    } else {
      expect(a).toBe(path.join(scratch, 'data', 'analyses', 'c1', 'features.trfeat'));
    }
  });

  it('stages job files: a local input and result files committed under a prefix', async () => {
    await store().putBytes('layouts/p2/r9.csv', pattern(2000, 8));
    const input = await localInput(store(), 'layouts/p2/r9.csv');
    expect(readFileSync(input.path).equals(pattern(2000, 8))).toBe(true);
    const staging = await resultStaging(store(), 'analyses/j1');
    writeFileSync(path.join(staging.dir, 'risk.trgrid'), pattern(300, 9));
    writeFileSync(path.join(staging.dir, 'features.trfeat'), pattern(400, 10));
    expect((await staging.commit()).sort()).toEqual(['analyses/j1/features.trfeat', 'analyses/j1/risk.trgrid']);
    expect(Buffer.from(await store().getBytes('analyses/j1/risk.trgrid')).equals(pattern(300, 9))).toBe(true);
    await input.release();
    if (kind === 's3') {
      expect(existsSync(input.path)).toBe(false); // the downloaded copy is gone
      expect(existsSync(staging.dir)).toBe(false);
    } else {
      expect(existsSync(input.path)).toBe(true); // the stored file itself
    }
    await staging.discard();
    expect(await store().stat('analyses/j1/risk.trgrid')).toBeNull();
  });
});

describe('S3 settings from the environment', () => {
  it('is off without a bucket and fills defaults with one', () => {
    expect(s3ConfigFromEnv({})).toBeNull();
    const c = s3ConfigFromEnv({ TRENCHANT_S3_BUCKET: 'b1', TRENCHANT_S3_ENDPOINT: 'http://127.0.0.1:9' });
    expect(c?.client).toMatchObject({ region: 'us-east-1', endpoint: 'http://127.0.0.1:9', forcePathStyle: true, requestChecksumCalculation: 'WHEN_REQUIRED', responseChecksumValidation: 'WHEN_REQUIRED' });
    expect(s3ConfigFromEnv({ TRENCHANT_S3_BUCKET: 'b1' })?.client.forcePathStyle).toBe(false);
    expect(s3ConfigFromEnv({ TRENCHANT_S3_BUCKET: 'b1', TRENCHANT_S3_PREFIX: 'team/x' })?.prefix).toBe('team/x/');
    expect(() => s3ConfigFromEnv({ TRENCHANT_S3_BUCKET: 'b1', TRENCHANT_S3_ACCESS_KEY_ID: 'k' })).toThrow(/both/);
    expect(() => s3ConfigFromEnv({ TRENCHANT_S3_BUCKET: 'b1', TRENCHANT_S3_PREFIX: '../x' })).toThrow(/relative/);
  });

  it('names a missing bucket', async () => {
    const config = s3ConfigFromEnv({ ...fake.env, TRENCHANT_S3_BUCKET: 'no-such-bucket' });
    const store = new S3ObjectStore(config!);
    await expect(store.checkBucket()).rejects.toThrow(/no-such-bucket does not exist/);
    await (stores.s3 as S3ObjectStore).checkBucket();
    store.client.destroy();
  });
});
