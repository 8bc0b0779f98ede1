/**
 * Exact widths of Manhattan openings on any vertex grid: the compressed lattice (lib/geometry/manhattan-lines.ts,
 * manhattan-widths.ts). Definitions as in lib/geometry/widths.ts (common practice, no source for them; the expected
 * values below are derived by hand from them, the arithmetic in the comments is the reference).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { extractFeatures } from '@/lib/geometry';
import { featureWidths } from '@/lib/geometry/widths';
import { bruteWidths } from './brute-widths';
import { makeSet, rect, type Ring } from './make-set';
import { trenchUnions, unionOpenings } from './trench-unions';

const DBU = 0.001;
const reversed = (r: Ring): Ring => {
  const out: number[] = [];
  for (let k = r.length - 2; k >= 0; k -= 2) out.push(r[k] as number, r[k + 1] as number);
  return out;
};
const one = (rings: Ring[]) => {
  const f = extractFeatures(makeSet(rings), DBU);
  expect(f).toHaveLength(1);
  // Vertices on a 1 nm grid: the uniform exact lattice would be far too fine; the compressed one is exact.
  expect(f[0]!.widthExact).toBe(true);
  return f[0]!;
};

describe('hand-derived widths on a 1 nm vertex grid (compressed lattice)', () => {
  it('a narrow stub on a wide trench: minWidth the stub, maxWidth the junction disk', () => {
    // Trench 3.001 µm × 20.001 µm; stub 0.501 µm wide, 1.203 µm long on its top edge. The stub's centre line is a
    // plateau of D = 250.5 dbu; disks centred below its mouth reach less than 250.5 dbu into it, so its points deeper
    // than that (up to 1203 − 250.5 from the mouth) are self-centred: minWidth = 0.501 µm. Largest disk: at the stub
    // mouth, touching the trench bottom y = 0 and the two mouth corners (9000, 3001), (9501, 3001): centre
    // (9250.5, r), 250.5² + (3001 − r)² = r² → r = (250.5² + 3001²)/6002 = 1510.95 dbu > 1500.5 (the trench plateau).
    const f = one([rect(0, 0, 20_001, 3_001), rect(9_000, 3_001, 9_501, 4_204)]);
    expect(Math.abs(f.minWidthUm - 0.501)).toBeLessThan(1e-9);
    expect(Math.abs(f.maxWidthUm - (2 * (250.5 ** 2 + 3001 ** 2)) / 6002 * DBU)).toBeLessThan(1e-9);
  });

  it('a stub shorter than its width has no self-centred point: minWidth is the trench', () => {
    // Stub 0.801 µm wide (r = 400.5 dbu), 0.601 µm long. A point of its centre line at depth t < r from the mouth lies
    // in the disk centred u below the mouth, radius √(r² + u²) (to the mouth corners), as soon as
    // √(r² + u²) − u ≥ t, true for u small enough; every point of the stub's plateau has t ≤ 601 − 400.5 < r. The
    // narrowest self-centred disks are then the trench's: minWidth 3.001 µm.
    const f = one([rect(0, 0, 20_001, 3_001), rect(9_000, 3_001, 9_801, 3_602)]);
    expect(Math.abs(f.minWidthUm - 3.001)).toBeLessThan(1e-9);
  });

  it('a square ring (frame): minWidth the wall, maxWidth the corner disk', () => {
    // Outer 20.002 µm square, hole [3001, 17001]²: wall 3001 dbu on every side.
    // Corner disk touches both outer edges and the inner corner: centre (t, t), t√2 + t = 3001√2 →
    // t = 3001√2/(1 + √2) = 1757.8 dbu > 1500.5, the wall plateau.
    const f = one([rect(0, 0, 20_002, 20_002), reversed(rect(3_001, 3_001, 17_001, 17_001))]);
    expect(Math.abs(f.minWidthUm - 3.001)).toBeLessThan(1e-9);
    const t = (3001 * Math.SQRT2) / (1 + Math.SQRT2);
    expect(Math.abs(f.maxWidthUm - 2 * t * DBU)).toBeLessThan(1e-9);
  });

  // Two openings of the 1M-polygon bench layout (bench/make-files.ts mixedLayer) where the earlier maxWidth seeding
  // (at most 4 climbs, later starts within reach of an earlier one skipped) returned an arm's plateau instead of the
  // junction disk: 1973 instead of 2175.9 dbu and 2106.7 instead of 2252.2 dbu.
  it('an L-shaped junction: maxWidth the disk on the reflex corner, not the wider arm plateau', () => {
    // Trench x ∈ [1624, 3462] (plateau 919), arm y ∈ [15705, 17678] (plateau 986.5) with a 97 dbu step in its top.
    // Junction disk: right edge x = 3462, top edge y = 17581 and the reflex corner (1624, 15705): centre
    // (3462 − r, 17581 − r), (1838 − r)² + (1876 − r)² = r² → r² − 7428 r + 1838² + 1876² = 0, smaller root
    // r = 1087.94 dbu > 986.5.
    const f = one([[3462, 17581, 1973, 17581, 1973, 17678, 0, 17678, 0, 15705, 1624, 15705, 1624, 0, 3462, 0]]);
    const r = (7428 - Math.sqrt(7428 ** 2 - 4 * (1838 ** 2 + 1876 ** 2))) / 2;
    expect(Math.abs(f.maxWidthUm - 2 * r * DBU)).toBeLessThan(1e-9);
  });

  it('a junction next to a neck between two corners: maxWidth the junction disk', () => {
    // Arm y ∈ [24000, 26059] whose top steps down to 26050 at x = 2059, trench x ∈ [1798, 3568]. The lattice maximum
    // (1928.5, 25025) sits at the neck between the corners (1798, 24000) and (2059, 26050), where a pattern search
    // stalls; the junction disk touches x = 3568, y = 26050 and the corner (1798, 24000):
    // (1770 − r)² + (2050 − r)² = r² → r = (7640 − √(7640² − 4·(1770² + 2050²)))/2 = 1126.12 dbu.
    const f = one([[3568, 15857, 3978, 15857, 3978, 17401, 3568, 17401, 3568, 26050, 2059, 26050, 2059, 26059, 0, 26059, 0, 24000, 1798, 24000, 1798, 0, 3568, 0]]);
    const r = (7640 - Math.sqrt(7640 ** 2 - 4 * (1770 ** 2 + 2050 ** 2))) / 2;
    expect(Math.abs(f.maxWidthUm - 2 * r * DBU)).toBeLessThan(1e-9);
  });

  // Two more openings of that layout where the climb's ridge snap combined only the six nearest sites, two of them
  // convex corners (never a nearest boundary point of an inside point) or lines whose foot lies past the edge, so
  // the third site of the junction disk was left out and the climb stalled at the neck: 2141 instead of 2141.43 and
  // 1991 instead of 1994.94 dbu.
  it('an L whose junction disk is only 0.02 % wider than the arm plateau: maxWidth the junction disk', () => {
    // Trench x ∈ [1683, 3306], arm y ∈ [10480, 12621] (plateau 1070.5) whose top steps down to 12468 at x = 2141.
    // Junction disk: right edge x = 3306, top edge y = 12468 and the reflex corner (1683, 10480): centre
    // (3306 − r, 12468 − r), (1623 − r)² + (1988 − r)² = r² → r = (7222 − √(7222² − 4·(1623² + 1988²)))/2 = 1070.715 dbu.
    const f = one([[3306, 12468, 2141, 12468, 2141, 12621, 0, 12621, 0, 10480, 1683, 10480, 1683, 0, 3306, 0]]);
    const r = (7222 - Math.sqrt(7222 ** 2 - 4 * (1623 ** 2 + 1988 ** 2))) / 2;
    expect(r).toBeGreaterThan(1070.5);
    expect(Math.abs(f.maxWidthUm - 2 * r * DBU)).toBeLessThan(1e-9);
  });

  it('a junction beside a narrow notch in the end wall: maxWidth the junction disk', () => {
    // Arm y ∈ [1691, 2777] (plateau 543), trench x ∈ [11865, 13856] (plateau 995.5) whose right edge stops at 1991, with
    // an 11 dbu notch to x = 13845 above. Junction disk: right edge x = 13856, top edge y = 2777 and the reflex corner
    // (11865, 1691): (1991 − r)² + (1086 − r)² = r² → r = (6154 − √(6154² − 4·(1991² + 1086²)))/2 = 997.468 dbu.
    const f = one([[13856, 1991, 13845, 1991, 13845, 2777, 0, 2777, 0, 1691, 11865, 1691, 11865, 0, 13856, 0]]);
    const r = (6154 - Math.sqrt(6154 ** 2 - 4 * (1991 ** 2 + 1086 ** 2))) / 2;
    expect(Math.abs(f.maxWidthUm - 2 * r * DBU)).toBeLessThan(1e-9);
  });

  it('a T with a stem narrower than the bar: minWidth the stem', () => {
    // Bar 2.003 µm × 20.001 µm, stem 1.201 µm × 10 µm: stem plateau 600.5 dbu, far from the junction (its disks
    // reach < 600.5 dbu into the stem): minWidth 1.201 µm. Junction disk: bar bottom y = 0 and the corners
    // (9000, 2003), (10201, 2003): r = (600.5² + 2003²)/4006 = 1091.5 dbu > 1001.5 (bar plateau).
    const f = one([rect(0, 0, 20_001, 2_003), rect(9_000, 2_003, 10_201, 12_003)]);
    expect(Math.abs(f.minWidthUm - 1.201)).toBeLessThan(1e-9);
    expect(Math.abs(f.maxWidthUm - (2 * (600.5 ** 2 + 2003 ** 2)) / 4006 * DBU)).toBeLessThan(1e-9);
  });
});

describe('compressed lattice vs the uniform exact Manhattan lattice where both apply (vertices on a 4 dbu grid)', () => {
  it('agree, and where they do not the brute force sides with the compressed lattice', () => {
    // The uniform lattice (spacing g/2/k) can miss a covering disk centred in a thin sliver between its nodes (beyond
    // the mouth of a stub shorter than its width) and so report that stub as the narrowest part; the compressed path
    // searches for such disks on the exact distance (manhattan-widths.ts coverFound). The brute force settles it.
    let compared = 0, same = 0;
    for (const rs of trenchUnions(2026, 16, 4, { pos: 120, w: [12, 48], len: [40, 170] })) {
      for (const o of unionOpenings(rs, DBU)) {
        const a = featureWidths(o.coords, o.rings, o.bbox, o.area, o.perim);
        if (a.step === 0) continue; // rectangle
        const b = featureWidths(o.coords, o.rings, o.bbox, o.area, o.perim, { uniformLattice: true });
        expect(b.exact).toBe(true);
        expect(a.exact).toBe(true);
        compared++;
        if (Math.abs(a.minWidth - b.minWidth) < 1e-6 && Math.abs(a.maxWidth - b.maxWidth) < 1e-6) {
          same++;
          continue;
        }
        const c = bruteWidths(o.local, o.bbox[2] - o.bbox[0], o.bbox[3] - o.bbox[1]);
        expect(Math.abs(a.minWidth - c.minWidth)).toBeLessThan(1e-6);
        expect(Math.abs(a.maxWidth - c.maxWidth)).toBeLessThan(c.maxExact ? 1e-6 : 1e-5);
      }
    }
    expect(compared).toBeGreaterThan(8);
    expect(same).toBeGreaterThan(compared / 2);
  }, 120_000);
});

describe('compressed lattice = brute force on 1 nm-grid unions (tests/geometry/brute-widths.ts)', () => {
  it('same widths to 1e-6 dbu on seeded unions of 2–4 trenches with odd dbu vertices', () => {
    let compared = 0;
    for (const rs of trenchUnions(77, 18, 1, { pos: 110, w: [8, 40], len: [25, 160] })) {
      for (const o of unionOpenings(rs, DBU)) {
        const a = featureWidths(o.coords, o.rings, o.bbox, o.area, o.perim);
        if (a.step === 0) continue;
        const b = bruteWidths(o.local, o.bbox[2] - o.bbox[0], o.bbox[3] - o.bbox[1]);
        compared++;
        expect(Math.abs(a.minWidth - b.minWidth)).toBeLessThan(1e-6);
        // maxWidth: exact on both sides when the brute force's grid maximum is the true one; otherwise its refined
        // off-grid maximum (compass search to 1e-10 dbu).
        expect(Math.abs(a.maxWidth - b.maxWidth)).toBeLessThan(b.maxExact ? 1e-6 : 1e-5);
      }
    }
    expect(compared).toBeGreaterThan(8);
  }, 120_000);
});

describe('properties (fast-check)', () => {
  const rectArb = fc.record({ x: fc.integer({ min: 0, max: 3000 }), y: fc.integer({ min: 0, max: 3000 }), w: fc.integer({ min: 101, max: 900 }), len: fc.integer({ min: 300, max: 5000 }), vertical: fc.boolean() });
  const toRing = (r: { x: number; y: number; w: number; len: number; vertical: boolean }, s = 1, dx = 0, dy = 0): Ring =>
    r.vertical ? rect(s * r.x + dx, s * r.y + dy, s * (r.x + r.w) + dx, s * (r.y + r.len) + dy) : rect(s * r.x + dx, s * r.y + dy, s * (r.x + r.len) + dx, s * (r.y + r.w) + dy);
  const widths = (rs: Ring[]) =>
    extractFeatures(makeSet(rs), DBU)
      .map((f) => [f.minWidthUm, f.maxWidthUm, f.areaUm2] as const)
      .sort((a, b) => a[2] - b[2]);

  it('translation by integer dbu leaves every width unchanged', () => {
    fc.assert(
      fc.property(fc.array(rectArb, { minLength: 2, maxLength: 4 }), fc.integer({ min: -50_000, max: 50_000 }), fc.integer({ min: -50_000, max: 50_000 }), (rs, dx, dy) => {
        const a = widths(rs.map((r) => toRing(r)));
        const b = widths(rs.map((r) => toRing(r, 1, dx, dy)));
        expect(b.length).toBe(a.length);
        // Measured in each opening's bbox frame: identical numbers.
        a.forEach((w, k) => expect([b[k]![0], b[k]![1]]).toEqual([w[0], w[1]]));
      }),
      { numRuns: 60, seed: 1313 },
    );
  });

  it('scaling the layout by an integer scales every width by it', () => {
    fc.assert(
      fc.property(fc.array(rectArb, { minLength: 2, maxLength: 4 }), fc.integer({ min: 2, max: 7 }), (rs, s) => {
        const a = widths(rs.map((r) => toRing(r)));
        const b = widths(rs.map((r) => toRing(r, s)));
        expect(b.length).toBe(a.length);
        a.forEach((w, k) => {
          expect(Math.abs(b[k]![0] - s * w[0])).toBeLessThan(1e-9 * s * w[0] + 1e-12);
          expect(Math.abs(b[k]![1] - s * w[1])).toBeLessThan(1e-9 * s * w[1] + 1e-12);
        });
      }),
      { numRuns: 60, seed: 1314 },
    );
  });
});
