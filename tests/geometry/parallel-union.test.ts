/**
 * The two-thread union (parallel-union.ts) only splits the work: on seeded layouts it must give exactly the arrays
 * of the one-thread `openRegions` (the reference, itself checked against clipper-lib's global union in
 * union-fuzz.test.ts) — with a real helper thread, with none, with 1, 2 or many chunks (the cut between the threads
 * moves through tiles that overlapping polygons, slanted edges and rectangles cross), in both polarities, and when
 * the helper takes chunks and never delivers them.
 */
import { describe, expect, it } from 'vitest';
import { openRegions, type OpenRegions } from '@/lib/geometry';
import { openRegionsInThreads, unionChunkBounds } from '@/lib/geometry/parallel-union';
import { planUnion } from '@/lib/geometry/open-regions';
import type { PolygonSet } from '@/lib/layout/types';
import { makeSet, mulberry32, ngon, rect, type Ring } from './make-set';
import { failingHelper, useAnalysisHelper } from '../support/helper-thread';

/**
 * Every field as plain values, so shared and ordinary typed arrays compare by content. `pieceY` (only the
 * two-thread union provides it) is checked against the pieces' own points and left out of the comparison.
 */
function plain(r: OpenRegions): Record<string, unknown> {
  const { pieceY, ...rest } = r;
  if (pieceY) {
    expect(pieceY.length).toBe(2 * r.pieceCount);
    for (let p = 0; p < r.pieceCount; p++) {
      let lo = Infinity, hi = -Infinity;
      for (let k = r.ringOffsets[r.pieceRings[p] as number] as number; k < (r.ringOffsets[r.pieceRings[p + 1] as number] as number); k++) {
        lo = Math.min(lo, r.coords[2 * k + 1] as number);
        hi = Math.max(hi, r.coords[2 * k + 1] as number);
      }
      if (pieceY[2 * p] !== lo || pieceY[2 * p + 1] !== hi) throw new Error(`pieceY of piece ${p}: ${pieceY[2 * p]}..${pieceY[2 * p + 1]}, points ${lo}..${hi}`);
    }
  }
  return Object.fromEntries(Object.entries(rest).map(([k, v]) => [k, ArrayBuffer.isView(v) ? Array.from(v as unknown as ArrayLike<number>) : v]));
}

/** Holes, trenches that overlap into clusters, 24-gons (slanted edges), a few long lines crossing many tiles. */
function seededLayout(seed: number, n: number, size: number): PolygonSet {
  const rnd = mulberry32(seed);
  const rings: Ring[] = [];
  for (let k = 0; k < n; k++) {
    const x = Math.floor(rnd() * size), y = Math.floor(rnd() * size);
    const u = rnd();
    if (u < 0.15) rings.push(ngon(x, y, 500 + Math.floor(rnd() * 3_000), 24, rnd()));
    else if (u < 0.2) rings.push(rect(x, y, x + Math.floor(rnd() * size * 0.3), y + 300 + Math.floor(rnd() * 500)));
    else if (u < 0.6) rings.push(rect(x, y, x + 300 + Math.floor(rnd() * 8_000), y + 300 + Math.floor(rnd() * 1_500)));
    else rings.push(rect(x, y, x + 400, y + 400));
  }
  return makeSet(rings);
}

const helperThread = useAnalysisHelper();

describe('openRegionsInThreads', () => {
  it('starts a helper thread from source', () => {
    expect(helperThread()).not.toBeNull();
  });

  for (const polarity of ['clear', 'dark'] as const) {
    it(`equals openRegions array for array (${polarity}; 1, 2, 7 and 64 chunks)`, () => {
      for (const seed of [1, 2, 3]) {
        const set = seededLayout(seed, 3_000, 400_000);
        const opts = { polarity, regionDbu: [0, 0, 420_000, 420_000] as [number, number, number, number], tileDbu: 9_000 + seed * 1_000 };
        const want = plain(openRegions(set, 0.001, opts));
        for (const chunks of [1, 2, 7, 64]) {
          const info: { helperChunks?: number } = {};
          const got = openRegionsInThreads(set, 0.001, opts, helperThread(), { chunks, minPolygons: 0, info });
          expect(plain(got), `seed ${seed}, ${chunks} chunks`).toEqual(want);
        }
        // No helper: the one-thread union itself.
        expect(plain(openRegionsInThreads(set, 0.001, opts, null, { minPolygons: 0 }))).toEqual(want);
      }
    });
  }

  it('the helper really takes chunks (waits until it has started)', () => {
    const set = seededLayout(7, 20_000, 1_500_000);
    const opts = { regionDbu: [0, 0, 1_520_000, 1_520_000] as [number, number, number, number] };
    const want = plain(openRegions(set, 0.001, opts));
    let took = 0;
    for (let k = 0; k < 20 && took === 0; k++) {
      const info: { helperChunks?: number } = {};
      expect(plain(openRegionsInThreads(set, 0.001, opts, helperThread(), { chunks: 256, minPolygons: 0, info }))).toEqual(want);
      took = info.helperChunks ?? 0;
    }
    expect(took).toBeGreaterThan(0);
  });

  it('chunks a helper took but never delivered are computed by the caller', () => {
    const set = seededLayout(11, 2_000, 300_000);
    const opts = { tileDbu: 8_000 };
    // A helper that takes three chunks on the spot and then fails.
    const failing = failingHelper();
    expect(plain(openRegionsInThreads(set, 0.001, opts, failing, { chunks: 9, minPolygons: 0 }))).toEqual(plain(openRegions(set, 0.001, opts)));
  });

  it('cuts the tiles into ordered, non-empty chunks covering every tile', () => {
    const set = seededLayout(5, 1_000, 200_000);
    const plan = planUnion(set, { tileDbu: 5_000 });
    if ('empty' in plan) throw new Error('unexpected empty plan');
    for (const chunks of [1, 2, 5, 64, 10_000]) {
      const b = unionChunkBounds(plan, chunks);
      expect(b[0]).toBe(0);
      expect(b[b.length - 1]).toBe(plan.ntx * plan.nty);
      for (let k = 1; k < b.length; k++) expect(b[k]).toBeGreaterThan(b[k - 1] as number);
      expect(b.length - 1).toBeLessThanOrEqual(chunks);
    }
  });
});
