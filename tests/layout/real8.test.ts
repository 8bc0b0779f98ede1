/**
 * GDSII 8-byte reals. Check vectors from the format definition (Calma GDSII Stream Format Manual 6.0:
 * value = (−1)^s · fraction · 16^(exponent − 64), fraction = 56 bits / 2^56), as listed in domain.md §4.
 */
import { describe, expect, it } from 'vitest';
import { decodeReal8, encodeReal8 } from '@/lib/layout/real8';

const bytes = (hex: string) => new Uint8Array(hex.split(' ').map((h) => parseInt(h, 16)));

describe('decodeReal8', () => {
  const vectors: [string, number][] = [
    ['41 10 00 00 00 00 00 00', 1.0], // manual: 1 = 1/16 · 16^1
    ['c1 10 00 00 00 00 00 00', -1.0], // sign bit set
    ['40 80 00 00 00 00 00 00', 0.5], // 8/16 · 16^0
    ['42 5a 00 00 00 00 00 00', 90.0], // 0x5A/256 · 16^2 = 90
    ['39 44 b8 2f a0 9b 5a 54', 1e-9], // UNITS metres per dbu, usual writers
    ['39 44 b8 2f a0 9b 5a 53', 1e-9], // same, rounded down in the last byte (domain.md: ±1 by rounding)
    ['3e 41 89 37 4b c6 a7 f0', 0.001], // UNITS user units per dbu
    ['3e 41 89 37 4b c6 a7 ef', 0.001], // some writers round down
    ['00 00 00 00 00 00 00 00', 0],
  ];
  for (const [hex, value] of vectors) {
    it(`decodes ${hex} to ${value} (format definition)`, () => {
      const got = decodeReal8(bytes(hex), 0);
      if (value === 0) expect(got).toBe(0);
      else expect(Math.abs(got - value) / Math.abs(value)).toBeLessThan(1e-15);
    });
  }

  it('decodes 43 19 99 99 99 99 99 9a to 409.6 (0.1 · 16^3, worked by hand from the definition)', () => {
    // 43 19 99 99 99 99 99 9a: exponent 3, fraction 0x19999999999999A / 2^56 = 0.1 (to 2^-56) → 0.1 · 16^3 = 409.6
    expect(decodeReal8(bytes('43 19 99 99 99 99 99 9a'), 0)).toBeCloseTo(409.6, 12);
  });
});

describe('encodeReal8', () => {
  it('writes the manual bytes for 1, −1, 0.5 and 90', () => {
    const out = new Uint8Array(8);
    for (const [v, hex] of [[1, '41 10 00 00 00 00 00 00'], [-1, 'c1 10 00 00 00 00 00 00'], [0.5, '40 80 00 00 00 00 00 00'], [90, '42 5a 00 00 00 00 00 00']] as const) {
      encodeReal8(v, out, 0);
      expect(Array.from(out)).toEqual(Array.from(bytes(hex))); // manual vectors, domain.md §4
    }
  });

  it('round-trips values across the exponent range within the 56-bit fraction precision', () => {
    const out = new Uint8Array(8);
    for (const v of [1e-9, 0.001, 1e-6, 2.5e-8, 123456.789, -0.3, 7e30, 3.3e-70]) {
      encodeReal8(v, out, 0);
      expect(Math.abs(decodeReal8(out, 0) - v) / Math.abs(v)).toBeLessThan(1e-15);
    }
  });
});
