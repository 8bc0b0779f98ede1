/**
 * featuresInThreads gives exactly the features and ids of the one-thread featuresFromRegions (it only splits the
 * work); when no worker can start it measures everything itself.
 */
import { describe, expect, it } from 'vitest';
import { featuresFromRegions, featureTableFromRegions, numberFeatureTable, concatFeatureTables, openRegions } from '@/lib/geometry';
import { measureFeatures } from '@/lib/geometry/features';
import { featuresInThreads } from '@/lib/geometry/parallel-features';
import { scatteredLayout } from './scattered-layout';

describe('featuresInThreads', () => {
  it('matches featuresFromRegions feature for feature', () => {
    const set = scatteredLayout(99, 3_000, 2_000_000, { ngonEvery: 5, ngonRadius: [1_000, 2_000], rectW: [500, 20_000], rectH: [500, 3_000] });
    const regions = openRegions(set, 0.001);
    const info: { threads?: number } = {};
    const a = featuresInThreads(regions, { minPieces: 0, chunk: 64 }, info); // small chunks: both threads take some
    const b = featuresFromRegions(regions);
    expect(a).toEqual(b);
    expect([1, 2]).toContain(info.threads);
  });

  it('chunks taken by one sharer plus the rest measured afterwards (the failed-worker path) give the same table', () => {
    const set = scatteredLayout(5, 800, 400_000, { ngonEvery: 0, rectW: [500, 9_000], rectH: [500, 2_000] });
    const regions = openRegions(set, 0.001, { tileDbu: 50_000 });
    const chunk = 16;
    const chunks = Math.ceil(regions.pieceCount / chunk);
    const next = new Int32Array(new SharedArrayBuffer(4));
    const owner = new Uint8Array(new SharedArrayBuffer(chunks));
    // One sharer takes chunks until half are gone (as if a second thread then died with the rest unclaimed).
    const first = measureFeatures(regions, {}, { next, owner, me: 1, chunk });
    expect(first.table.count).toBeGreaterThan(0);
    Atomics.store(next, 0, 0);
    owner.fill(0, 0, Math.floor(chunks / 2)); // pretend the first half was taken by someone who never delivered
    const kept = measureFeatures(regions, {}, { only: Uint32Array.from({ length: chunks - Math.floor(chunks / 2) }, (_, k) => Math.floor(chunks / 2) + k), chunk });
    const redo = measureFeatures(regions, {}, { only: Uint32Array.from({ length: Math.floor(chunks / 2) }, (_, k) => k), chunk });
    const roots = Float64Array.from([...redo.roots, ...kept.roots]);
    const merged = numberFeatureTable(concatFeatureTables([redo.table, kept.table]), roots);
    expect(merged).toEqual(featureTableFromRegions(regions));
  });
});
