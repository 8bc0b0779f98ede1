/**
 * Tile jobs on BullMQ (a throwaway redis-server, tests/jobs/redis-server.ts): the tiled result through the queue
 * equals the untiled runAnalysis exactly. Skipped when redis-server is not installed.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAnalysis } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema } from '@/lib/pipeline/settings';
import { runTiledAnalysis } from '@/lib/pipeline/tiled/run-tiled';
import { startTileQueueWorker } from '@/lib/pipeline/tiled/tile-queue';
import { redisServerBinary, startTestRedis, type TestRedis } from '../jobs/redis-server';
import { testModel } from './fixtures';
import { fixtureLayout, openFixtureSource } from './tiled-fixture-source';

const hasRedis = redisServerBinary() !== null;
let redis: TestRedis | null = null;
let worker: { close(): Promise<void> } | null = null;

beforeAll(async () => {
  if (!hasRedis) return;
  redis = await startTestRedis();
  worker = await startTileQueueWorker(redis.url, 2);
}, 60_000);
afterAll(async () => {
  await worker?.close();
  await redis?.stop();
});

describe.skipIf(!hasRedis)('tiles as queue jobs', () => {
  it('give the untiled result; an in-memory layout stays on local threads', async () => {
    const layout = fixtureLayout(7);
    const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 5, datatype: 0 }], pixel: { sizeUm: 2 }, densityWindows: [{ windowUm: 100, stepUm: 50 }] });
    const model = testModel();
    const whole = runAnalysis(layout, settings, model);
    const spec = { kind: 'module' as const, url: new URL('./tiled-fixture-source.ts', import.meta.url).href, exportName: 'openFixtureSource', args: { seed: 7 } };
    const tiled = await runTiledAnalysis(openFixtureSource({ seed: 7 }), settings, model, { tileUm: 60, spec, queueUrl: redis!.url });
    const { timingsMs: _a, ...a } = tiled.summary;
    const { timingsMs: _b, ...b } = whole.summary;
    expect(a).toEqual(b);
    expect(tiled.features).toEqual(whole.features);
    expect(tiled.flags).toEqual(whole.flags);
    tiled.maps.forEach((m, k) => expect(Buffer.from(m.values.buffer).equals(Buffer.from(whole.maps[k]!.values.buffer))).toBe(true));
    expect(tiled.tiled).toMatchObject({ tiles: 25, via: 'queue' });
    expect(tiled.tiled.peakBytesPerWorker.length).toBeGreaterThan(0);
    const local = await runTiledAnalysis(openFixtureSource({ seed: 7 }), settings, model, { tileUm: 60, spec: { kind: 'memory', layout }, queueUrl: redis!.url, threads: 1 });
    expect(local.tiled.via).toBe('threads');
    expect(local.features).toEqual(whole.features);
  }, 180_000);
});
