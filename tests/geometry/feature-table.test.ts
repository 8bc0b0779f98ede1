/**
 * The column table of features: building, joining, id order and the object accessor. The id order is checked
 * against its definition written as a plain comparator sort (bbox lower edge, left edge, centroid x, then row
 * order), on seeded data with negative coordinates, -0, repeated keys and NaN-free floats.
 */
import { describe, expect, it } from 'vitest';
import { mergeSortedRows, sortKeyedRows } from '@/lib/geometry/feature-table';
import { concatFeatureTables, extractFeatures, extractFeatureTable, featureAt, featureIdOrder, featureList, FeatureTableBuilder, featureTableOf, numberFeatureTable, sliceFeatureTable, type Feature, type FeatureRow } from '@/lib/geometry';
import { makeSet, mulberry32, ngon, rect, type Ring } from './make-set';

function randomRows(n: number, seed: number): FeatureRow[] {
  const rnd = mulberry32(seed);
  // Few distinct values so that ties on the first and second keys are common.
  const pick = (vals: number[]) => vals[Math.floor(rnd() * vals.length)] as number;
  return Array.from({ length: n }, () => ({
    kind: Math.floor(rnd() * 5),
    centroidXUm: pick([-3.5, -0, 0, 1e-9, 2.25, 1e6]),
    centroidYUm: rnd(),
    x0Um: pick([-1e3, -0.001, -0, 0, 0.001, 7]),
    y0Um: pick([-5e5, -1, 0, -0, 3.3, 3.3000000000000003]),
    x1Um: rnd() * 10,
    y1Um: rnd() * 10,
    areaUm2: rnd(),
    perimeterUm: rnd(),
    minWidthUm: rnd(),
    maxWidthUm: rnd(),
    lengthUm: rnd(),
    widthStepUm: rnd() < 0.5 ? 0 : 0.01,
    widthExact: rnd() < 0.5,
    pieces: 1 + Math.floor(rnd() * 3),
  }));
}

describe('FeatureTable', () => {
  it('id order equals the comparator definition (stable, -0 equal to 0)', () => {
    for (const [n, seed] of [[0, 1], [1, 2], [7, 3], [5_000, 4], [70_000, 5]] as const) {
      const b = new FeatureTableBuilder(4); // grows many times
      for (const r of randomRows(n, seed)) b.push(r);
      const t = b.finish();
      const want = Array.from({ length: n }, (_, k) => k).sort(
        (a, c) => t.y0Um[a]! - t.y0Um[c]! || t.x0Um[a]! - t.x0Um[c]! || t.centroidXUm[a]! - t.centroidXUm[c]! || a - c,
      );
      expect(Array.from(featureIdOrder(t))).toEqual(want);
      const numbered = numberFeatureTable(t);
      expect(Array.from(numbered.id)).toEqual(want.map((_, k) => k + 1));
      expect(Array.from(numbered.y0Um)).toEqual(want.map((k) => t.y0Um[k]));
    }
  });

  it('parts sorted on their own and merged equal one sort of all rows (the two-thread features path)', () => {
    for (const [n, parts, seed] of [[0, 2, 1], [1, 2, 2], [9, 3, 3], [20_000, 2, 4], [20_000, 3, 5]] as const) {
      const rnd = mulberry32(seed + 100);
      const b = new FeatureTableBuilder(4);
      for (const r of randomRows(n, seed)) b.push(r);
      const t = b.finish();
      // Unique roots in a shuffled order (as piece indices come from threads), rows dealt to parts at random.
      const roots = Float64Array.from({ length: n }, (_, k) => k * 7 + 3);
      for (let k = n - 1; k > 0; k--) {
        const j = Math.floor(rnd() * (k + 1));
        [roots[k], roots[j]] = [roots[j] as number, roots[k] as number];
      }
      const dealt = Array.from({ length: parts }, () => [] as number[]);
      for (let k = 0; k < n; k++) dealt[Math.floor(rnd() * parts)]!.push(k);
      const keyed = dealt.map((rows) => {
        const sub = new FeatureTableBuilder(rows.length);
        for (const k of rows) sub.append(sliceFeatureTable(t, k, k + 1));
        return sortKeyedRows({ table: sub.finish(), roots: Float64Array.from(rows, (k) => roots[k] as number) });
      });
      const reorderedRoots = Float64Array.from(dealt.flat(), (k) => roots[k] as number);
      const all = concatFeatureTables(dealt.map((rows) => {
        const sub = new FeatureTableBuilder(rows.length);
        for (const k of rows) sub.append(sliceFeatureTable(t, k, k + 1));
        return sub.finish();
      }));
      expect(mergeSortedRows(keyed)).toEqual(numberFeatureTable(all, reorderedRoots));
    }
  });

  it('a tie-break column orders otherwise equal rows', () => {
    const rows = randomRows(3, 9).map((r) => ({ ...r, x0Um: 1, y0Um: 2, centroidXUm: 3 }));
    const b = new FeatureTableBuilder();
    rows.forEach((r, k) => b.push(r, k + 1));
    const t = b.finish();
    expect(Array.from(featureIdOrder(t, Float64Array.of(30, 10, 20)))).toEqual([1, 2, 0]);
    expect(Array.from(featureIdOrder(t))).toEqual([0, 1, 2]);
  });

  it('objects ↔ table round trip, and concat keeps rows and ids in order', () => {
    const rings: Ring[] = [rect(0, 0, 10_000, 2_000), ngon(50_000, 50_000, 4_000, 24), rect(20_000, 0, 22_000, 2_000), rect(0, 30_000, 3_000, 33_000)];
    const fs: Feature[] = extractFeatures(makeSet(rings), 0.001);
    const t = extractFeatureTable(makeSet(rings), 0.001);
    expect(featureList(t)).toEqual(fs);
    expect(featureList(featureTableOf(fs))).toEqual(fs);
    const joined = concatFeatureTables([featureTableOf(fs.slice(0, 1)), featureTableOf([]), featureTableOf(fs.slice(1))]);
    expect(joined.count).toBe(fs.length);
    expect(featureList(joined)).toEqual(fs);
    expect(featureAt(joined, 2)).toEqual(fs[2]);
    expect(featureList(sliceFeatureTable(joined, 1, 3))).toEqual(fs.slice(1, 3));
  });
});
