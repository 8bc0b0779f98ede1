/**
 * groupFindings: expected groups are worked out by hand from the constructed inputs below (common practice, no
 * source: the grouping rule is our own product decision, stated in lib/review/group-findings.ts).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { groupFindings, widthClasses, type GroupableFinding } from '@/lib/review/group-findings';

const via = (key: string, widthUm: number, x: number, severity = 'error'): GroupableFinding => ({
  key, kind: 'width-below-minimum', cause: 'limit 5 µm', severity, bboxUm: [x, 0, x + widthUm, widthUm], widthUm,
});
const win = (key: string, x0: number, y0: number, size = 100): GroupableFinding => ({
  key, kind: 'window-density-above-max', cause: 'window 100/50 µm, limit 60 %', severity: 'error', bboxUm: [x0, y0, x0 + size, y0 + size], widthUm: null,
});

describe('widthClasses(widths, tolerance)', () => {
  it('puts widths within 2 % of the narrowest in one class (4.98 and 5.0 µm together, 5.2 µm apart)', () => {
    expect(widthClasses([5, 4.98, 5.2, 4.99, 10], 0.02)).toEqual([[4.98, 4.99, 5], [5.2], [10]]);
  });
});

describe('groupFindings(findings)', () => {
  it('groups openings of one kind, cause and width class wherever they are on the die', () => {
    const fs = [via('a', 4.98, 0), via('b', 5, 5000), via('c', 4.99, 9000), via('d', 10, 100)];
    const g = groupFindings(fs);
    expect(g.map((x) => x.memberKeys)).toEqual([['a', 'b', 'c'], ['d']]);
    expect(g[0]).toMatchObject({ count: 3, widthRangeUm: [4.98, 5], bboxUm: [0, 0, 9004.99, 5] });
  });

  it('keeps different causes apart even for equal widths', () => {
    const other = { ...via('x', 5, 0), cause: 'limit 6 µm' };
    expect(groupFindings([via('a', 5, 0), other]).length).toBe(2);
  });

  it('joins density windows that touch or overlap (a chain counts), and keeps a distant one apart', () => {
    // windows at x = 0, 50 (overlap), 100 (touches the second), and 1000 (far away)
    const fs = [win('w1', 0, 0), win('w2', 50, 0), win('w3', 150, 0), win('w4', 1000, 1000)];
    const g = groupFindings(fs);
    expect(g.map((x) => x.memberKeys)).toEqual([['w1', 'w2', 'w3'], ['w4']]);
    expect(g[0]?.widthRangeUm).toBeNull();
  });

  it('uses nearUm as the largest gap that still joins', () => {
    const fs = [win('w1', 0, 0), win('w2', 130, 0)]; // gap 30 µm
    expect(groupFindings(fs, { nearUm: 0 }).length).toBe(2);
    expect(groupFindings(fs, { nearUm: 30 }).length).toBe(1);
  });

  it('gives a group the worst severity of its members and keeps worst-first order', () => {
    const g = groupFindings([via('w', 5, 0, 'warning'), via('e', 5, 10, 'error'), via('z', 20, 0, 'warning')]);
    expect(g.map((x) => [x.memberKeys, x.severity])).toEqual([[['w', 'e'], 'error'], [['z'], 'warning']]);
  });

  it('12,000 equal vias collapse to one row (the TSV case of issue 14)', () => {
    const fs = Array.from({ length: 12_000 }, (_, i) => via(`v${i}`, i % 2 ? 4.98 : 5, (i % 100) * 50));
    const g = groupFindings(fs);
    expect(g.length).toBe(1);
    expect(g[0]?.count).toBe(12_000);
  });

  it('puts every finding in exactly one group (property, seeded)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.record({ w: fc.option(fc.double({ min: 0.5, max: 50, noNaN: true }), { nil: null }), x: fc.integer({ min: 0, max: 5000 }), y: fc.integer({ min: 0, max: 5000 }), k: fc.integer({ min: 0, max: 2 }) }), { maxLength: 200 }),
        (rows) => {
          const fs: GroupableFinding[] = rows.map((r, i) => ({ key: `k${i}`, kind: `kind${r.k}`, cause: 'c', severity: 'error', bboxUm: [r.x, r.y, r.x + 10, r.y + 10], widthUm: r.w }));
          const g = groupFindings(fs, { nearUm: 5 });
          const keys = g.flatMap((x) => x.memberKeys).sort();
          expect(keys).toEqual(fs.map((f) => f.key).sort());
          expect(g.reduce((n, x) => n + x.count, 0)).toBe(fs.length);
          for (const x of g) expect(new Set(x.memberKeys.map((k) => fs[Number(k.slice(1))]?.kind)).size).toBe(1);
        },
      ),
      { seed: 20261203, numRuns: 200 },
    );
  });
});
