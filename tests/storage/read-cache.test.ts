/**
 * The S3 read cache against the fake S3 server (s3rver), with a counting proxy in front of it so each check can
 * say how many requests reached the bucket:
 *   - N concurrent cold reads of one key make one GET (single-flight), whether the readers are asynchronous or one
 *     of them is synchronous (the per-opening column file's reader) and joins a download already running;
 *   - a download cut off mid-body leaves neither the file nor a temporary file in the cache, and the next read
 *     fetches it again (one more GET) and gets the right bytes;
 *   - the caching store (what storage() gives on S3) serves whole reads, ranges and stat of a cached result file
 *     with no request, and drops the copy on delete and on overwrite;
 *   - completion warms the cache: a worker with the database announcing "done" over Redis makes the server fetch the
 *     files once; an embedded run's files are moved into it as they are uploaded; a result recorded for a worker without the database (remote-results.ts ->
 *     finishJob) fetches every result file once; the next reads of the map and of the column file make no request.
 */
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import { setDbForTesting, type Db } from '@/db/client';
import { BullJobQueue } from '@/lib/jobs/bullmq-queue';
import { eventsChannel, openRedis } from '@/lib/jobs/bullmq-shared';
import { readFeatureColumns } from '@/lib/jobs/feature-columns';
import { encodeFeatureFile, FEATURE_FILE_NAME, featureFileBytes } from '@/lib/jobs/feature-file';
import { recordResult } from '@/lib/jobs/remote-results';
import { warmResultCache } from '@/lib/jobs/warm-results';
import { storage } from '@/lib/storage';
import { CachedS3ObjectStore } from '@/lib/storage/cached-s3-store';
import { resultStaging } from '@/lib/storage/job-files';
import { cachedPath, downloadsInFlight, readablePath, readablePathSync } from '@/lib/storage/read-cache';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { S3ObjectStore } from '@/lib/storage/s3-store';
import type { AnalysisSummary } from '@/lib/pipeline/summary';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import { startTestRedis } from '../jobs/redis-server';
import { inventedResults, tempDb } from '../jobs/results-store';
import { startCountingProxy, type CountingProxy } from './proxy';
import { pattern, sha } from './test-bytes';

const scratch = mkdtempSync(path.join(tmpdir(), 'trenchant-read-cache-test-'));
const PREFIX = 'rc';
const saved = { ...process.env };
let fake: TestS3;
let proxy: CountingProxy;
let direct: S3ObjectStore; // straight to the fake server: setting objects up is not counted
let cached: CachedS3ObjectStore; // through the proxy
let db: Db;

const tmpFilesIn = (dir: string) => (existsSync(dir) ? readdirSync(dir, { recursive: true }).map(String).filter((f) => f.includes('.tmp-')) : []);

beforeAll(async () => {
  fake = await startTestS3();
  proxy = await startCountingProxy(fake.endpoint);
  direct = new S3ObjectStore(s3ConfigFromEnv({ ...fake.env, TRENCHANT_S3_PREFIX: PREFIX })!);
  const viaProxy = { ...fake.env, TRENCHANT_S3_ENDPOINT: proxy.endpoint, TRENCHANT_S3_PREFIX: PREFIX };
  cached = new CachedS3ObjectStore(s3ConfigFromEnv(viaProxy)!);
  // storage() (used by finishJob's warm-up and the column-file reader) must be the same store, through the proxy.
  Object.assign(process.env, viaProxy, { TRENCHANT_CACHE_DIR: path.join(scratch, 'cache') });
  db = tempDb(path.join(scratch, 'data'));
  setDbForTesting(db);
});
afterAll(async () => {
  setDbForTesting(undefined);
  db?.$client.close();
  direct?.client.destroy();
  cached?.client.destroy();
  proxy?.stop();
  await fake?.stop();
  for (const k of Object.keys(process.env)) if (!(k in saved)) delete process.env[k];
  Object.assign(process.env, saved);
  rmSync(scratch, { recursive: true, force: true });
});
beforeEach(async () => {
  await proxy.delayGets(0);
  await proxy.delayBodies(0);
  await proxy.reset();
});

describe('read cache on S3: single-flight downloads', () => {
  it('eight concurrent cold reads of one key make one GET and see the same bytes', async () => {
    const bytes = pattern(3 * 1024 * 1024 + 17, 1);
    await direct.putBytes('analyses/sf1/risk.trgrid', bytes);
    await proxy.delayGets(300); // the download is still running when the later readers ask
    const paths = await Promise.all(Array.from({ length: 8 }, () => readablePath(cached, 'analyses/sf1/risk.trgrid')));
    expect(new Set(paths).size).toBe(1);
    expect(await proxy.count('GET', 'analyses/sf1/risk.trgrid')).toBe(1);
    expect(sha(await cached.getBytes('analyses/sf1/risk.trgrid'))).toBe(sha(bytes));
    expect(await proxy.count('GET')).toBe(1); // the getBytes above came from the copy
    expect(downloadsInFlight()).toBe(0);
  });

  it('a synchronous reader joins the download an asynchronous reader started (one GET)', async () => {
    const bytes = pattern(200_000, 2);
    await direct.putBytes('analyses/sf2/features.trfeat', bytes);
    await proxy.delayGets(300);
    const pending = readablePath(cached, 'analyses/sf2/features.trfeat');
    const syncPath = readablePathSync(cached, 'analyses/sf2/features.trfeat'); // blocks until that download is done
    expect(await pending).toBe(syncPath);
    expect(await proxy.count('GET', 'analyses/sf2/features.trfeat')).toBe(1);
    expect(sha(await cached.getBytes('analyses/sf2/features.trfeat'))).toBe(sha(bytes));
  });

  it('a download cut off mid-body leaves no partial file, and the next read fetches it again', async () => {
    const key = 'analyses/sf3/predicted-depth.trgrid';
    const bytes = pattern(2 * 1024 * 1024, 3);
    await direct.putBytes(key, bytes);
    await proxy.cutNextGet(100_000);
    await expect(readablePath(cached, key)).rejects.toThrow(/could not download analyses\/sf3\/predicted-depth\.trgrid/);
    expect(existsSync(cachedPath(cached, key))).toBe(false);
    expect(tmpFilesIn(path.join(scratch, 'cache'))).toEqual([]);
    expect(downloadsInFlight()).toBe(0);
    // The synchronous path fails the same way and cleans up too.
    await proxy.cutNextGet(50_000);
    expect(() => readablePathSync(cached, key)).toThrow(/could not download/);
    expect(existsSync(cachedPath(cached, key))).toBe(false);
    expect(tmpFilesIn(path.join(scratch, 'cache'))).toEqual([]);
    // Retried by the next read.
    const file = await readablePath(cached, key);
    expect(sha(await direct.getBytes(key))).toBe(sha(bytes));
    expect(sha(Buffer.from(await cached.getBytes(key)))).toBe(sha(bytes));
    expect(existsSync(file)).toBe(true);
    expect(await proxy.count('GET', key)).toBe(3);
  });

  it('a missing object is reported as missing (not as a failed download) and nothing is cached', async () => {
    await expect(readablePath(cached, 'analyses/none/risk.trgrid')).rejects.toMatchObject({ name: 'StorageNotFoundError' });
    expect(() => readablePathSync(cached, 'analyses/none/risk.trgrid')).toThrow(/missing/);
    expect(existsSync(cachedPath(cached, 'analyses/none/risk.trgrid'))).toBe(false);
  });
});

describe('caching store (storage() on S3)', () => {
  it('serves whole reads, ranges and stat of a result file from its copy; delete and overwrite drop the copy', async () => {
    const key = 'analyses/cs1/effective-density.trgrid';
    const bytes = pattern(500_000, 4);
    await direct.putBytes(key, bytes);
    await proxy.delayGets(200);
    const streams = await Promise.all(Array.from({ length: 5 }, () => cached.getBytes(key)));
    for (const b of streams) expect(sha(b)).toBe(sha(bytes));
    expect(await proxy.count('GET', key)).toBe(1);
    await proxy.reset();
    expect((await cached.stat(key))?.size).toBe(bytes.length);
    expect(Buffer.from(await cached.getBytes(key, { start: 1000, end: 1010 })).equals(bytes.subarray(1000, 1010))).toBe(true);
    expect(Buffer.from(await cached.getBytes(key, { start: bytes.length - 5 })).equals(bytes.subarray(bytes.length - 5))).toBe(true);
    expect(await proxy.requests()).toEqual([]);
    // An overwrite replaces the copy's bytes on the next read.
    const next = pattern(1000, 5);
    await cached.putBytes(key, next);
    expect(existsSync(cachedPath(cached, key))).toBe(false);
    expect(sha(await cached.getBytes(key))).toBe(sha(next));
    await cached.deletePrefix('analyses/cs1/');
    expect(existsSync(cachedPath(cached, key))).toBe(false);
    expect(await cached.stat(key)).toBeNull();
  });

  it('a delete during a download of the same key leaves no copy behind', async () => {
    const key = 'analyses/del1/risk.trgrid';
    await direct.putBytes(key, pattern(400_000, 13));
    await proxy.delayBodies(600, '/analyses/del1/'); // the GET reaches the bucket, its body arrives after the delete
    const pending = readablePath(cached, key);
    await vi.waitFor(async () => expect(await proxy.count('GET', key)).toBe(1), { timeout: 5_000, interval: 20 });
    await cached.deletePrefix('analyses/del1/');
    await pending; // the download that was running completed (the bytes were already on their way)
    expect(existsSync(cachedPath(cached, key))).toBe(false);
    expect(await cached.stat(key)).toBeNull();
  });

  it('streams a layout (not a result file) from the bucket without keeping a copy', async () => {
    await direct.putBytes('layouts/p/r.gds', pattern(10_000, 6));
    expect(sha(await cached.getBytes('layouts/p/r.gds'))).toBe(sha(pattern(10_000, 6)));
    expect(existsSync(cachedPath(cached, 'layouts/p/r.gds'))).toBe(false);
    expect(await proxy.count('GET', 'layouts/p/r.gds')).toBe(1);
  });
});

describe('completion warms the cache', () => {
  it('a worker with the database reports done over Redis: the server fetches the files once', async () => {
    const redis = await startTestRedis();
    process.env.TRENCHANT_REDIS_PREFIX = `warm-${process.pid}`;
    const queue = new BullJobQueue(redis.url);
    const pub = openRedis(redis.url, 'test-worker');
    try {
      const id = 'warm-db-worker';
      const mapBytes = pattern(120_000, 12);
      await direct.putBytes(`analyses/${id}/risk.trgrid`, mapBytes);
      // What the worker wrote into the shared database before it published its final event.
      db.$client
        .prepare(
          `INSERT INTO analyses (id, project_id, revision_id, created_at, settings, model, model_name, model_version, model_source, status, progress, result_dir)
           VALUES (?, 'p', 'r', 0, '{}', '{}', 'm', '1', 'test', 'done', 1, ?)`,
        )
        .run(id, `analyses/${id}`);
      db.$client
        .prepare('INSERT INTO analysis_maps (analysis_id, name, kind, unit, file, x0_um, y0_um, pixel_um, nx, ny, meta, bytes) VALUES (?,?,?,?,?,?,?,?,?,?,?,?)')
        .run(id, 'risk', 'risk', 'score', 'risk.trgrid', 0, 0, 1, 10, 10, '{}', mapBytes.length);
      await proxy.reset();
      await vi.waitFor(async () => {
        // Published until the server's subscription is up (a message sent before it is lost, as in production).
        if (!existsSync(cachedPath(cached, `analyses/${id}/risk.trgrid`))) {
          await pub.publish(eventsChannel(), JSON.stringify({ analysisId: id, status: 'done', stage: 'done', progress: 1, errorMessage: null }));
        }
        expect(existsSync(cachedPath(cached, `analyses/${id}/risk.trgrid`))).toBe(true);
      }, { timeout: 15_000, interval: 200 });
      expect(await proxy.count('GET', `analyses/${id}/risk.trgrid`)).toBe(1);
      await proxy.reset();
      expect(sha(await storage().getBytes(`analyses/${id}/risk.trgrid`))).toBe(sha(mapBytes));
      expect(await proxy.requests()).toEqual([]);
    } finally {
      pub.disconnect();
      await queue.close();
      await redis.stop();
      delete process.env.TRENCHANT_REDIS_PREFIX;
    }
  });

  it('an embedded run: committed result files go into the cache as they are uploaded; reads make no request', async () => {
    const staging = await resultStaging(cached, 'analyses/emb-1');
    writeFileSync(path.join(staging.dir, 'risk.trgrid'), pattern(40_000, 8));
    writeFileSync(path.join(staging.dir, FEATURE_FILE_NAME), pattern(9_000, 9));
    const keys = await staging.commit({ cache: () => true });
    expect(keys.sort()).toEqual([`analyses/emb-1/${FEATURE_FILE_NAME}`, 'analyses/emb-1/risk.trgrid']);
    expect(existsSync(staging.dir)).toBe(false);
    expect(await proxy.count('GET')).toBe(0);
    expect(sha(await cached.getBytes('analyses/emb-1/risk.trgrid'))).toBe(sha(pattern(40_000, 8)));
    expect(readablePathSync(cached, `analyses/emb-1/${FEATURE_FILE_NAME}`)).toBe(cachedPath(cached, `analyses/emb-1/${FEATURE_FILE_NAME}`));
    expect(await proxy.count('GET')).toBe(0);
    expect(sha(await direct.getBytes('analyses/emb-1/risk.trgrid'))).toBe(sha(pattern(40_000, 8))); // and it is in the bucket
  });

  it('a result recorded for a worker without the database is fetched once; the next reads make no request', async () => {
    const id = 'warm-1';
    const rows = inventedResults(2000, 11);
    const featureBytes = featureFileBytes(encodeFeatureFile(rows));
    const mapBytes = pattern(300_000, 7);
    // What a worker without the database leaves in the bucket, then reports as its job's return value.
    await direct.putBytes(`analyses/${id}/${FEATURE_FILE_NAME}`, featureBytes);
    await direct.putBytes(`analyses/${id}/risk.trgrid`, mapBytes);
    db.$client
      .prepare(
        `INSERT INTO analyses (id, project_id, revision_id, created_at, settings, model, model_name, model_version, model_source, status, progress)
         VALUES (?, 'p', 'r', 0, '{}', '{}', 'm', '1', 'test', 'running', 0.5)`,
      )
      .run(id);
    expect(storage()).toBeInstanceOf(CachedS3ObjectStore);
    await proxy.reset();
    await recordResult(id, {
      remote: true,
      ok: true,
      summary: {} as AnalysisSummary,
      flags: [],
      featureFile: { file: FEATURE_FILE_NAME, count: rows.length, bytes: featureBytes.length },
      maps: [{ kind: 'risk', unit: 'score', file: 'risk.trgrid', grid: { x0Um: 0, y0Um: 0, pixelUm: 1, nx: 10, ny: 10 }, meta: {}, bytes: mapBytes.length }],
    } as Parameters<typeof recordResult>[1]);
    expect((db.$client.prepare('SELECT status FROM analyses WHERE id = ?').get(id) as { status: string }).status).toBe('done');
    // The warm-up finishJob started runs on its own; wait for both files to be in the cache (no read asks).
    await vi.waitFor(() => {
      expect(existsSync(cachedPath(cached, `analyses/${id}/${FEATURE_FILE_NAME}`)) && existsSync(cachedPath(cached, `analyses/${id}/risk.trgrid`))).toBe(true);
    }, { timeout: 10_000, interval: 50 });
    expect(await warmResultCache(id)).toBe(2); // a second completion report warms nothing new
    expect(await proxy.count('GET', `analyses/${id}/${FEATURE_FILE_NAME}`)).toBe(1);
    expect(await proxy.count('GET', `analyses/${id}/risk.trgrid`)).toBe(1);
    await proxy.reset();
    // The review routes' reads: the column file (synchronous reader) and the map (stat, then the whole stream).
    const columns = readFeatureColumns(db, id);
    expect(columns.count).toBe(rows.length);
    expect(Array.from(columns.featureId.subarray(0, 3))).toEqual(rows.slice(0, 3).map((r) => r.id));
    expect((await storage().stat(`analyses/${id}/risk.trgrid`))?.size).toBe(mapBytes.length);
    expect(sha(await storage().getBytes(`analyses/${id}/risk.trgrid`))).toBe(sha(mapBytes));
    expect(await proxy.requests()).toEqual([]);
  });
});
