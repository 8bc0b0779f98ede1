/**
 * Moving a data folder to S3 (lib/storage/migrate.ts, scripts/migrate-storage.ts) against the fake S3 server
 * (s3rver) behind the counting proxy:
 *   - a seeded data folder (layouts, maps, a per-opening column file, a 19 MiB map that goes up in three multipart
 *     parts, an empty file) is copied under the same keys; every key reads back byte for byte through the store the
 *     server uses; the database, tmp/ and temporary files are not copied; no local file is removed;
 *   - a second run copies nothing (no PUT or POST reaches the bucket, and no GET: equality is settled by HEAD);
 *   - an object that differs from the local file (same size, other bytes) is copied again;
 *   - a run stopped part-way resumes: the next run skips what was copied and copies the rest;
 *   - the script exits 1 naming a file whose upload failed (injected 500s), and 0 on the re-run; it names a file the
 *     database refers to that the data folder lacks.
 * Checksums (checksums.ts) are checked against published test vectors: MD5 of "abc" from RFC 1321 §A.5, SHA-256 of
 * "abc" from FIPS 180-2 Appendix B.1; the multipart ETag against its definition (MD5 of the parts' MD5 digests,
 * "-<parts>"; AWS S3 user guide, "Checking object integrity") computed here on slices of the buffer.
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { openDatabase } from '@/db/client';
import { encodeFeatureFile, featureFileBytes } from '@/lib/jobs/feature-file';
import { CachedS3ObjectStore } from '@/lib/storage/cached-s3-store';
import { fileSums } from '@/lib/storage/checksums';
import { migrateToS3, type MigrateEvent } from '@/lib/storage/migrate';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { S3ObjectStore } from '@/lib/storage/s3-store';
import { startTestS3, type TestS3 } from '../support/fake-s3';
import { PROJECT_ROOT } from '../support/server';
import { inventedResults } from '../jobs/results-store';
import { startCountingProxy, type CountingProxy } from './proxy';
import { pattern } from './test-bytes';

const scratch = mkdtempSync(path.join(tmpdir(), 'trenchant-migrate-test-'));
const dataDir = path.join(scratch, 'data');
const savedCache = process.env.TRENCHANT_CACHE_DIR;
let fake: TestS3;
let proxy: CountingProxy;
const opened: S3ObjectStore[] = [];
let dbBytes: Buffer;

const SEED: Record<string, Buffer> = {
  'layouts/p1/r1.gds': pattern(70_000, 1),
  'layouts/p1/r2.csv': Buffer.from('layer,datatype,x_um,y_um\n1,0,0,0\n1,0,10,0\n1,0,10,10\n'),
  'analyses/a1/risk.trgrid': pattern(300_000, 2),
  'analyses/a1/features.trfeat': Buffer.from(featureFileBytes(encodeFeatureFile(inventedResults(500, 3)))),
  'analyses/a2/predicted-depth.trgrid': pattern(19 * 1024 * 1024 + 123, 4),
  'analyses/a2/empty.trgrid': Buffer.alloc(0),
};

/** A store on bucket prefix `prefix`, straight to the fake server or through the proxy. */
function storeAt(prefix: string, via: 'direct' | 'proxy', cached = false): S3ObjectStore {
  const env = { ...fake.env, TRENCHANT_S3_PREFIX: prefix, ...(via === 'proxy' ? { TRENCHANT_S3_ENDPOINT: proxy.endpoint } : {}) };
  const config = s3ConfigFromEnv(env)!;
  const s = cached ? new CachedS3ObjectStore(config) : new S3ObjectStore(config);
  opened.push(s);
  return s;
}

beforeAll(async () => {
  fake = await startTestS3();
  proxy = await startCountingProxy(fake.endpoint);
  process.env.TRENCHANT_CACHE_DIR = path.join(scratch, 'cache');
  for (const [key, bytes] of Object.entries(SEED)) {
    mkdirSync(path.dirname(path.join(dataDir, key)), { recursive: true });
    writeFileSync(path.join(dataDir, key), bytes);
  }
  // Not stored objects: the database, an upload in flight, and a result file being written.
  // The installation's database, referring to one result file that is there and one that is not.
  const db = openDatabase(path.join(dataDir, 'trenchant.db'));
  db.$client.pragma('foreign_keys = OFF');
  db.$client
    .prepare(
      `INSERT INTO analyses (id, project_id, revision_id, created_at, settings, model, model_name, model_version, model_source, status, progress, result_dir)
       VALUES ('a1', 'p', 'r', 0, '{}', '{}', 'm', '1', 'test', 'done', 1, 'analyses/a1')`,
    )
    .run();
  const map = db.$client.prepare('INSERT INTO analysis_maps (analysis_id, name, kind, unit, file, x0_um, y0_um, pixel_um, nx, ny, meta, bytes) VALUES (?,?,?,?,?,?,?,?,?,?,?,?)');
  map.run('a1', 'risk', 'risk', 'score', 'risk.trgrid', 0, 0, 1, 10, 10, '{}', 1);
  map.run('a1', 'lost', 'risk', 'score', 'lost.trgrid', 0, 0, 1, 10, 10, '{}', 1);
  db.$client.pragma('wal_checkpoint(TRUNCATE)');
  db.$client.close();
  dbBytes = readFileSync(path.join(dataDir, 'trenchant.db'));
  mkdirSync(path.join(dataDir, 'tmp'), { recursive: true });
  writeFileSync(path.join(dataDir, 'tmp', 'upload-1.part'), 'x');
  writeFileSync(path.join(dataDir, 'analyses', 'a1', 'risk.trgrid.tmp-77-abcd1234'), 'half');
});
afterAll(async () => {
  for (const s of opened) s.client.destroy();
  proxy?.stop();
  await fake?.stop();
  if (savedCache === undefined) delete process.env.TRENCHANT_CACHE_DIR;
  else process.env.TRENCHANT_CACHE_DIR = savedCache;
  rmSync(scratch, { recursive: true, force: true });
});
beforeEach(async () => {
  await proxy.failWrites('');
  await proxy.reset();
});

describe('checksums', () => {
  it('match published test vectors and the multipart ETag definition', async () => {
    const f = path.join(scratch, 'abc.txt');
    writeFileSync(f, 'abc');
    const s = await fileSums(f, 8 * 1024 * 1024);
    expect(s.md5).toBe('900150983cd24fb0d6963f7d28e17f72'); // RFC 1321 §A.5
    expect(s.sha256).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad'); // FIPS 180-2 B.1
    const big = pattern(2_500_000, 9);
    const g = path.join(scratch, 'parts.bin');
    writeFileSync(g, big);
    const parts = [big.subarray(0, 1_000_000), big.subarray(1_000_000, 2_000_000), big.subarray(2_000_000)];
    const expected = `${createHash('md5').update(Buffer.concat(parts.map((p) => createHash('md5').update(p).digest()))).digest('hex')}-3`;
    expect((await fileSums(g, 1_000_000)).multipartEtag).toBe(expected);
  });
});

describe('storage:migrate', () => {
  it('copies every stored file under its key, checked; leaves the rest and every local file alone', async () => {
    const events: MigrateEvent[] = [];
    const summary = await migrateToS3(dataDir, storeAt('m1', 'proxy'), { onEvent: (e) => events.push(e) });
    expect(summary.failed).toEqual([]);
    expect(summary).toMatchObject({ files: 6, copied: 6, skipped: 0, notStarted: 0, temporary: 1, leftAlone: ['tmp/', 'trenchant.db'] });
    expect(summary.bytesCopied).toBe(Object.values(SEED).reduce((a, b) => a + b.length, 0));
    expect(events.map((e) => e.index).sort((a, b) => a - b)).toEqual([1, 2, 3, 4, 5, 6]);
    expect(await fake.keys('m1')).toEqual(Object.keys(SEED).map((k) => `m1/${k}`).sort());
    // The 19 MiB map went up in parts (multipart upload), the rest in one PUT each.
    expect((await proxy.requests()).some((r) => r.method === 'POST' && r.path.endsWith('/analyses/a2/predicted-depth.trgrid'))).toBe(true);
    // Read back through the store the server uses on S3, byte for byte.
    const app = storeAt('m1', 'direct', true);
    for (const [key, bytes] of Object.entries(SEED)) expect(Buffer.from(await app.getBytes(key)).equals(bytes), key).toBe(true);
    for (const key of Object.keys(SEED)) expect(existsSync(path.join(dataDir, key))).toBe(true);
    expect(readFileSync(path.join(dataDir, 'trenchant.db')).equals(dbBytes)).toBe(true);
  });

  it('a dry run writes nothing and lists what a real run would copy', async () => {
    const dry = await migrateToS3(dataDir, storeAt('m6', 'proxy'), { dryRun: true });
    expect(dry).toMatchObject({ files: 6, copied: 0, skipped: 0, wouldCopy: 6, failed: [] });
    expect(await fake.keys('m6/')).toEqual([]);
    expect((await proxy.requests()).filter((r) => r.method !== 'HEAD')).toEqual([]);
  });

  it('a second run copies nothing and reads nothing back', async () => {
    await migrateToS3(dataDir, storeAt('m2', 'proxy'));
    await proxy.reset();
    const again = await migrateToS3(dataDir, storeAt('m2', 'proxy'));
    expect(again).toMatchObject({ copied: 0, skipped: 6, failed: [], bytesCopied: 0 });
    const methods = new Set((await proxy.requests()).map((r) => r.method));
    expect([...methods]).toEqual(['HEAD']);
  });

  it('copies an object again when the bucket holds other bytes under its key', async () => {
    await migrateToS3(dataDir, storeAt('m3', 'proxy'));
    const direct = storeAt('m3', 'direct');
    await direct.putBytes('analyses/a1/risk.trgrid', pattern(300_000, 99)); // same size, other bytes, no recorded SHA-256
    await direct.putBytes('layouts/p1/r1.gds', pattern(10, 1)); // another size
    const again = await migrateToS3(dataDir, storeAt('m3', 'proxy'));
    expect(again).toMatchObject({ copied: 2, skipped: 4, failed: [] });
    expect(Buffer.from(await direct.getBytes('analyses/a1/risk.trgrid')).equals(SEED['analyses/a1/risk.trgrid']!)).toBe(true);
    expect(Buffer.from(await direct.getBytes('layouts/p1/r1.gds')).equals(SEED['layouts/p1/r1.gds']!)).toBe(true);
  });

  it('a run stopped part-way resumes where it stopped', async () => {
    const controller = new AbortController();
    const first = await migrateToS3(dataDir, storeAt('m4', 'proxy'), { concurrency: 1, signal: controller.signal, onEvent: (e) => e.index === 2 && controller.abort() });
    expect(first).toMatchObject({ copied: 2, notStarted: 4, failed: [] });
    expect(await fake.keys('m4')).toHaveLength(2);
    const second = await migrateToS3(dataDir, storeAt('m4', 'proxy'));
    expect(second).toMatchObject({ copied: 4, skipped: 2, notStarted: 0, failed: [] });
    expect(await fake.keys('m4')).toEqual(Object.keys(SEED).map((k) => `m4/${k}`).sort());
  });

  it('the script names a failed upload and exits 1; run again, it finishes and exits 0', async () => {
    const env = { ...process.env, ...fake.env, TRENCHANT_S3_ENDPOINT: proxy.endpoint, TRENCHANT_S3_PREFIX: 'm5' };
    const run = () => spawnSync(process.execPath, ['--import', 'tsx', 'scripts/migrate-storage.ts', '--data-dir', dataDir, '--db', path.join(dataDir, 'trenchant.db')], { cwd: PROJECT_ROOT, env, encoding: 'utf8', timeout: 120_000 });
    await proxy.failWrites('/analyses/a1/features.trfeat');
    const bad = run();
    expect(bad.status, bad.stderr).toBe(1);
    expect(bad.stderr).toMatch(/FAILED {2}analyses\/a1\/features\.trfeat/);
    expect(bad.stderr).toMatch(/these files are NOT in the bucket[\s\S]*analyses\/a1\/features\.trfeat/);
    expect(bad.stdout).toMatch(/6 files: 5 copied .*, 0 already present .*, 1 failed/);
    expect(bad.stdout).toMatch(/left in the data folder, not stored objects: tmp\/, trenchant\.db/);
    expect(bad.stdout).toMatch(/the database refers to 2 stored files; 1 were NOT in the data folder[^\n]*\n\s+analyses\/a1\/lost\.trgrid/);
    await proxy.failWrites('');
    const good = run();
    expect(good.status, good.stderr).toBe(0);
    expect(good.stdout).toMatch(/6 files: 1 copied .*, 5 already present .*, 0 failed/);
    expect(good.stdout).toMatch(/Local files were not removed/);
    expect(await fake.keys('m5')).toHaveLength(6);
  });
});
