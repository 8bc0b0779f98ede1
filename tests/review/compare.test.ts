/**
 * Revision compare on two layout revisions built in code, run through the real pipeline. The expected counts
 * follow from how revision 2 was drawn from revision 1 (by construction, independent of the matcher):
 *   revision 1: ten 2 µm trenches at x = 100, 150, …, 550 (all below the 3 µm minimum width) and a 10 µm one.
 *   revision 2: trenches 0–3 widened to 4 µm about their centre          → 4 resolved
 *               trench 4 moved by 0.4 µm (inside the 1 µm tolerance)     → unchanged
 *               trench 5 moved by 20 µm (outside the tolerance)          → 1 resolved + 1 new
 *               trenches 6–9 untouched                                   → 4 unchanged
 *               three new 2 µm trenches at x = 800, 850, 900             → 3 new
 *   expected: new 4, resolved 5, unchanged 5.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import type { Db } from '@/db/client';
import { compareFindings } from '@/lib/review/compare';
import { carryWaivers, compareAnalyses } from '@/lib/review/compare-store';
import { loadFindings } from '@/lib/review/findings-store';
import { changeFindings } from '@/lib/review/review-actions';
import { narrow, reviewDb, storeAnalysis, TEAM_ID } from './review-db';
import type { RectUm } from '../pipeline/fixtures';

const xs = [100, 150, 200, 250, 300, 350, 400, 450, 500, 550];
const wide: RectUm = [700, 300, 710, 700];
const rev1: RectUm[] = [...xs.map(narrow), wide];
const rev2: RectUm[] = [
  ...xs.slice(0, 4).map((x): RectUm => [x - 1, 300, x + 3, 700]),
  narrow(300.4),
  narrow(370),
  ...xs.slice(6).map(narrow),
  wide,
  narrow(800),
  narrow(850),
  narrow(900),
];
const reviewer = { id: 'demo-reviewer', name: 'Rafael Odum', role: 'reviewer' as const };

describe('compareFindings(before, after, tolerance)', () => {
  it('matches one-to-one, closest first', () => {
    const r = compareFindings(
      [{ key: 'a', kind: 'k', xUm: 0, yUm: 0 }, { key: 'b', kind: 'k', xUm: 0.5, yUm: 0 }],
      [{ key: 'c', kind: 'k', xUm: 0.45, yUm: 0 }],
      1,
    );
    expect(r).toEqual({ unchanged: [{ beforeKey: 'b', afterKey: 'c', distanceUm: expect.closeTo(0.05, 9) }], added: [], resolved: ['a'] });
  });
  it('never matches different kinds', () => {
    const r = compareFindings([{ key: 'a', kind: 'k1', xUm: 0, yUm: 0 }], [{ key: 'b', kind: 'k2', xUm: 0, yUm: 0 }], 1);
    expect(r.unchanged).toEqual([]);
  });
  it('works at tolerance 0 (exact points) and on negative and far-apart coordinates', () => {
    const pts = [
      { key: 'a', kind: 'k', xUm: -1234.5, yUm: -0.25 },
      { key: 'b', kind: 'k', xUm: 2.5e7, yUm: -3e6 },
    ];
    const r = compareFindings(pts, pts.map((p) => ({ ...p, key: `${p.key}2` })), 0);
    expect(r.unchanged.map((u) => [u.beforeKey, u.afterKey])).toEqual([['a', 'a2'], ['b', 'b2']]);
    expect(compareFindings(pts, [{ key: 'c', kind: 'k', xUm: -1234.5 + 1e-6, yUm: -0.25 }], 0).unchanged).toEqual([]);
  });
  it('refuses a negative tolerance', () => {
    expect(() => compareFindings([], [], -1)).toThrow(/toleranceUm/);
  });
});

describe('compare of two sample revisions through the pipeline', () => {
  let db: Db;
  let a1: string;
  let a2: string;
  beforeAll(async () => {
    db = await reviewDb();
    a1 = await storeAnalysis(db, rev1, 1);
    a2 = await storeAnalysis(db, rev2, 2);
  });

  it('each revision has the width findings its drawing implies (10 and 9)', () => {
    expect(loadFindings(db, a1).items.map((f) => f.kind)).toEqual(Array(10).fill('width-below-minimum'));
    expect(loadFindings(db, a2).items.length).toBe(9);
  });

  it('gives new 4, resolved 5, unchanged 5 at a 1 µm tolerance', () => {
    expect(compareAnalyses(db, a2, a1, 1).counts).toEqual({ added: 4, resolved: 5, unchanged: 5 });
  });

  it('with a 25 µm tolerance the moved trench counts as unchanged too', () => {
    expect(compareAnalyses(db, a2, a1, 25).counts).toEqual({ added: 3, resolved: 4, unchanged: 6 });
  });

  it('carries a waiver over to the unchanged finding with a note, and not to a resolved one', () => {
    const f1 = loadFindings(db, a1).items;
    const at = (x: number) => f1.find((f) => Math.abs(f.atUm[0] - (x + 1)) < 1e-6)?.key as string;
    changeFindings(db, { analysisId: a1, teamId: TEAM_ID, actor: reviewer, keys: [at(400), at(100)], status: 'waived', reason: 'Test structure; depth does not matter here.', link: '/x' });
    const cmp = compareAnalyses(db, a2, a1, 1);
    expect(cmp.carriable).toBe(1);
    expect(carryWaivers(db, { afterId: a2, beforeId: a1, toleranceUm: 1, teamId: TEAM_ID, actor: reviewer })).toEqual({ carried: 1 });
    const carried = loadFindings(db, a2).items.filter((f) => f.status === 'waived');
    expect(carried.length).toBe(1);
    expect(carried[0]?.atUm[0]).toBeCloseTo(401, 6);
    expect(carried[0]?.waiver).toMatchObject({ reason: 'Test structure; depth does not matter here.', approverName: 'Rafael Odum' });
    expect(carried[0]?.waiver?.carriedNote).toMatch(/carried over from Synthetic trenches r1/);
    // a second run finds nothing left to carry
    expect(carryWaivers(db, { afterId: a2, beforeId: a1, toleranceUm: 1, teamId: TEAM_ID, actor: reviewer })).toEqual({ carried: 0 });
  });
});
