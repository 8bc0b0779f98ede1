/**
 * featuresInThreads gives exactly the features and ids of the one-thread featuresFromRegions (it only splits the
 * work); when no worker can start it measures everything itself.
 */
import { describe, expect, it } from 'vitest';
import { featuresFromRegions, openRegions } from '@/lib/geometry';
import { featuresInThreads } from '@/lib/geometry/parallel-features';
import { makeSet, mulberry32, ngon, rect, type Ring } from './make-set';

describe('featuresInThreads', () => {
  it('matches featuresFromRegions feature for feature', () => {
    const rnd = mulberry32(99);
    const rings: Ring[] = [];
    for (let k = 0; k < 3_000; k++) {
      const x = Math.floor(rnd() * 2_000_000), y = Math.floor(rnd() * 2_000_000);
      if (k % 5 === 0) rings.push(ngon(x, y, 1_000 + Math.floor(rnd() * 2_000), 24));
      else rings.push(rect(x, y, x + 500 + Math.floor(rnd() * 20_000), y + 500 + Math.floor(rnd() * 3_000)));
    }
    const regions = openRegions(makeSet(rings), 0.001);
    const info: { threads?: number } = {};
    const a = featuresInThreads(regions, { minPieces: 0 }, info);
    const b = featuresFromRegions(regions);
    expect(a).toEqual(b);
    expect([1, 2]).toContain(info.threads);
  });
});
