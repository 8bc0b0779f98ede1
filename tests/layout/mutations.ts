/** Mutations of valid layout files for fuzzing (shared by tests/layout/fuzz.test.ts and bench/fuzz-long.ts). */
import fc from 'fast-check';
import { records } from './helpers';

export type Mutation =
  | { kind: 'flip'; at: number; mask: number }
  | { kind: 'truncate'; at: number }
  | { kind: 'length'; rec: number; value: number }
  | { kind: 'type'; rec: number; value: number }
  | { kind: 'swap'; a: number; b: number };

export const mutation: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ kind: fc.constant('flip' as const), at: fc.nat(), mask: fc.integer({ min: 1, max: 255 }) }),
  fc.record({ kind: fc.constant('truncate' as const), at: fc.nat() }),
  fc.record({ kind: fc.constant('length' as const), rec: fc.nat(), value: fc.oneof(fc.integer({ min: 0, max: 0xffff }), fc.integer({ min: 0, max: 64 })) }),
  fc.record({ kind: fc.constant('type' as const), rec: fc.nat(), value: fc.integer({ min: 0, max: 0x40 }) }),
  fc.record({ kind: fc.constant('swap' as const), a: fc.nat(), b: fc.nat() }),
);

export function apply(src: Uint8Array, muts: Mutation[]): Uint8Array {
  let b = src.slice();
  for (const m of muts) {
    if (b.length === 0) break;
    const recs = records(b);
    if (m.kind === 'flip') b[m.at % b.length] = (b[m.at % b.length] as number) ^ m.mask;
    else if (m.kind === 'truncate') b = b.slice(0, m.at % b.length);
    else if (recs.length > 0 && (m.kind === 'length' || m.kind === 'type')) {
      const [off] = recs[m.rec % recs.length] as [number, number, number];
      if (m.kind === 'length' && off + 1 < b.length) { b[off] = m.value >> 8; b[off + 1] = m.value & 0xff; }
      if (m.kind === 'type' && off + 2 < b.length) b[off + 2] = m.value;
    } else if (m.kind === 'swap' && recs.length > 1) {
      const ra = recs[m.a % recs.length] as [number, number, number];
      const rb = recs[m.b % recs.length] as [number, number, number];
      const [x, y] = ra[0] < rb[0] ? [ra, rb] : [rb, ra];
      if (x[0] === y[0] || y[0] + y[1] > b.length || x[1] < 4 || y[1] < 4) continue;
      b = Uint8Array.from([...b.subarray(0, x[0]), ...b.subarray(y[0], y[0] + y[1]), ...b.subarray(x[0] + x[1], y[0]), ...b.subarray(x[0], x[0] + x[1]), ...b.subarray(y[0] + y[1])]);
    }
  }
  return b;
}

