/**
 * When the app's tiled analysis sends its tiles to the queue (lib/pipeline/worker-tiled.ts): only with a Redis URL,
 * a stored layout (a key tile workers can fetch) and a tile worker listening; TRENCHANT_TILE_QUEUE=off keeps them
 * local. The embedded default (no Redis) never touches the queue. Product rules of this project (no outside source).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tileQueueSlots, tileQueueUrl } from '@/lib/pipeline/worker-tiled';
import { queueExecutor, startTileQueueWorker } from '@/lib/pipeline/tiled/tile-queue';
import type { TilePlan } from '@/lib/pipeline/tiled/plan';
import { redisServerBinary, startTestRedis, type TestRedis } from '../jobs/redis-server';

const stored = { stored: { key: 'layouts/p/r.gds', where: '/data' } };

describe('tile queue choice', () => {
  it('no Redis URL, no stored layout, or TRENCHANT_TILE_QUEUE=off: tiles stay in the process (no connection tried)', async () => {
    expect(await tileQueueUrl(stored, {})).toBeNull();
    expect(await tileQueueUrl({}, { TRENCHANT_REDIS_URL: 'redis://127.0.0.1:1' })).toBeNull();
    expect(await tileQueueUrl(stored, { TRENCHANT_REDIS_URL: 'redis://127.0.0.1:1', TRENCHANT_TILE_QUEUE: 'OFF' })).toBeNull();
  });
  it('slots: TRENCHANT_TILE_QUEUE_SLOTS when a positive integer, else 8', () => {
    expect(tileQueueSlots({})).toBe(8);
    expect(tileQueueSlots({ TRENCHANT_TILE_QUEUE_SLOTS: '3' })).toBe(3);
    expect(tileQueueSlots({ TRENCHANT_TILE_QUEUE_SLOTS: '0' })).toBe(8);
    expect(tileQueueSlots({ TRENCHANT_TILE_QUEUE_SLOTS: 'x' })).toBe(8);
  });
});

describe.skipIf(redisServerBinary() === null)('with a redis-server', () => {
  let redis: TestRedis | undefined;
  beforeAll(async () => {
    redis = await startTestRedis();
  }, 30_000);
  afterAll(async () => redis?.stop());
  it('the queue only while a tile worker listens on it', async () => {
    const env = { TRENCHANT_REDIS_URL: redis!.url };
    expect(await tileQueueUrl(stored, env)).toBeNull();
    const worker = await startTileQueueWorker(redis!.url, 1);
    try {
      expect(await tileQueueUrl(stored, env)).toBe(redis!.url);
    } finally {
      await worker.close();
    }
    expect(await tileQueueUrl(stored, env)).toBeNull();
  }, 60_000);

  it('an analysis whose tile workers are all gone fails after the grace period, naming the cause, instead of hanging', async () => {
    process.env.TRENCHANT_TILE_WORKER_GRACE_MS = '1000';
    const ex = await queueExecutor(redis!.url, { kind: 'file', path: '/nowhere.gds' }, {} as TilePlan, 1);
    delete process.env.TRENCHANT_TILE_WORKER_GRACE_MS;
    try {
      await expect(ex.run({ kind: 'core', tile: 0, marginDbu: 0 })).rejects.toThrow(/no tile worker has listened on the tiles queue for 1 s/);
    } finally {
      await ex.close();
    }
  }, 60_000);
});
