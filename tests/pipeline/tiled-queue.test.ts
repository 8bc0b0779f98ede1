/**
 * Tile jobs on BullMQ (a throwaway redis-server, tests/jobs/redis-server.ts): the tiled result through the queue
 * equals the untiled runAnalysis exactly, and a GDSII file's tiles on a tile worker with two threads index the file
 * once. Skipped when redis-server is not installed.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAnalysis } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema } from '@/lib/pipeline/settings';
import { runTiledAnalysis } from '@/lib/pipeline/tiled/run-tiled';
import { IndexRegistry } from '@/lib/pipeline/tiled/index-registry';
import { startTileQueueWorker } from '@/lib/pipeline/tiled/tile-queue';
import { openGdsiiTileSource } from '@/lib/layout/gdsii-tile-source';
import { readLayoutFile } from '@/lib/layout/read';
import { flatDie } from '../layout/tile-fixtures';
import { redisServerBinary, startTestRedis, type TestRedis } from '../jobs/redis-server';
import { testModel } from './fixtures';
import { fixtureLayout, openFixtureSource } from './tiled-fixture-source';

const hasRedis = redisServerBinary() !== null;
let redis: TestRedis | null = null;
let worker: { close(): Promise<void> } | null = null;
const indexes = new IndexRegistry();

beforeAll(async () => {
  if (!hasRedis) return;
  redis = await startTestRedis();
  worker = await startTileQueueWorker(redis.url, { threads: 2, indexes });
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

  it('a GDSII file: the tile worker indexes it once for its two threads, and the result is the untiled one', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'trenchant-tq-gds-'));
    try {
      const file = join(dir, 'flat.gds');
      writeFileSync(file, flatDie(6_000, 3));
      const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 4 } });
      const model = testModel();
      const whole = runAnalysis(await readLayoutFile(file), settings, model);
      const source = openGdsiiTileSource(file);
      const before = indexes.builds;
      const tiled = await runTiledAnalysis(source, settings, model, { tileUm: 300, spec: { kind: 'file', path: file }, queueUrl: redis!.url, threads: 4 });
      source.close();
      expect(tiled.tiled).toMatchObject({ via: 'queue' });
      expect(tiled.tiled.tiles).toBeGreaterThanOrEqual(6);
      const { timingsMs: _a, ...a } = tiled.summary;
      const { timingsMs: _b, ...b } = whole.summary;
      expect(a).toEqual(b);
      expect(tiled.features).toEqual(whole.features);
      tiled.maps.forEach((m, k) => expect(Buffer.from(m.values.buffer).equals(Buffer.from(whole.maps[k]!.values.buffer))).toBe(true));
      expect(indexes.builds - before).toBe(1);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }, 180_000);
});
