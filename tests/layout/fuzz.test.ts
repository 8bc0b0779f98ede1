/**
 * Mutation fuzzing of the readers with fast-check (fixed seed, so CI runs the same cases every time): byte flips,
 * truncations, edited length fields, edited record types and swapped records applied to valid gdspy fixtures and a
 * CSV. Every mutated file must end in a layout or a LayoutReadError with a one-line message — never another
 * exception, a hang, or unbounded work (limits below bound the flattened size).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LayoutReadError } from '@/lib/layout/errors';
import { readLayoutBytes } from '@/lib/layout/read-bytes';
import { layerSummary } from '@/lib/geometry/union-area';
import { text } from './helpers';
import { apply, mutation } from './mutations';

const dir = fileURLToPath(new URL('../fixtures/gds/', import.meta.url));
const gds = ['transforms.gds', 'arrays.gds', 'paths.gds', 'paths_round.gds', 'aref_skewed.gds', 'dbu_10nm_mm.gds'].map(
  (f) => new Uint8Array(readFileSync(dir + f)),
);
const csv = text('# trenchant-polygons v1\n# unit=um dbu=0.001\nlayer,datatype,polygon,x,y\n1,0,1,0,0\n1,0,1,10,0\n1,0,1,10,5\n2,0,1,0,0\n2,0,1,3.5,0\n2,0,1,0,2\n');
const limits = { maxPolygons: 200_000, maxPoints: 2_000_000, maxLabels: 1000 };

async function outcome(bytes: Uint8Array): Promise<'ok' | 'error'> {
  const t0 = performance.now();
  try {
    const l = await readLayoutBytes(bytes, limits);
    // The union is polynomial in overlapping polygons per tile, not a reader concern; keep it to small results here.
    if (l.layers.every((s) => s.count <= 500)) layerSummary(l);
    return 'ok';
  } catch (err) {
    if (!(err instanceof LayoutReadError)) throw new Error(`not a LayoutReadError: ${String(err)}`);
    if (err.message.includes('\n') || err.message.length === 0) throw new Error(`bad message: ${err.message}`);
    return 'error';
  } finally {
    // Hang guard, not a speed target: a small mutated fixture must never take seconds.
    if (performance.now() - t0 > 5000) throw new Error('reader took over 5 s on a small mutated file');
  }
}

describe('mutation fuzzing (fast-check, seed 20261202)', () => {
  it('4000 mutated GDSII files each end in a layout or a LayoutReadError', async () => {
    const seen = { ok: 0, error: 0 };
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 0, max: gds.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 3 }), async (i, muts) => {
        seen[await outcome(apply(gds[i] as Uint8Array, muts))]++;
      }),
      { seed: 20261202, numRuns: 4000 },
    );
    expect(seen.error).toBeGreaterThan(1000); // the mutations really break files...
    expect(seen.ok).toBeGreaterThan(100); // ...and some still read (e.g. a flipped coordinate byte)
  });

  it('1000 mutated CSV files each end in a layout or a LayoutReadError', async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(fc.oneof(
        fc.record({ kind: fc.constant('flip' as const), at: fc.nat(), mask: fc.integer({ min: 1, max: 255 }) }),
        fc.record({ kind: fc.constant('truncate' as const), at: fc.nat() }),
      ), { minLength: 1, maxLength: 4 }), async (muts) => {
        await outcome(apply(csv, muts));
      }),
      { seed: 20261202, numRuns: 1000 },
    );
  });
});
