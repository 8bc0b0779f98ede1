import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { cellPxFor, hitThinned, severityOrder, thinMarks } from '@/lib/viewer/flag-thinning';
import { decodeFlags, encodeFlags, flagAt, flagColumns, FlagWireError, selectAndAppend, type FlagRecord } from '@/lib/viewer/flag-wire';
import { layoutToScreen, MAX_SCALE, type View } from '@/lib/viewer/view-transform';

const rec = (k: number, x: number, y: number, severity = 'warning', kind = 'window-density-high'): FlagRecord => ({ key: `${kind}:w${k}`, kind, severity, xUm: x, yUm: y, bboxUm: [x - 1, y - 1, x + 1, y + 1], measured: 0.5 + k / 1e5, limit: 0.4, unit: 'fraction' });

describe('TRFLAG1 flag columns', () => {
  it('round-trips 12,000 flags (more than the JSON API page of 5,000) with keys, kinds, severities and boxes', () => {
    const kinds = ['window-density-high', 'under-target-depth', 'density-gradient'];
    const records = Array.from({ length: 12_000 }, (_, k) => rec(k, (k % 300) * 7.25, Math.floor(k / 300) * 3.5, ['error', 'warning', 'info'][k % 3], kinds[k % 3]));
    const back = decodeFlags(encodeFlags(flagColumns(records)));
    expect(back.count).toBe(12_000);
    for (const k of [0, 1, 2, 4999, 5000, 5001, 11_999]) {
      const r = flagAt(back, k);
      const want = records[k]!;
      expect(r.key).toBe(want.key);
      expect(r.kind).toBe(want.kind);
      expect(r.severity).toBe(want.severity);
      expect(r.unit).toBe('fraction');
      expect(r.xUm).toBeCloseTo(want.xUm, 3);
      expect(r.bboxUm[3]).toBeCloseTo(want.bboxUm[3], 3);
      expect(r.measured).toBeCloseTo(want.measured, 5);
    }
  });
  it('decodes from an unaligned slice and rejects bad or truncated data with the byte offset', () => {
    const bytes = encodeFlags(flagColumns([rec(1, 2, 3), rec(2, 4, 5)]));
    const shifted = new Uint8Array(bytes.byteLength + 3);
    shifted.set(bytes, 3);
    expect(decodeFlags(shifted.subarray(3)).keys).toEqual(['window-density-high:w1', 'window-density-high:w2']);
    expect(() => decodeFlags(bytes.subarray(0, 10))).toThrow(FlagWireError);
    expect(() => decodeFlags(bytes.subarray(0, bytes.byteLength - 8))).toThrow(/runs past the end/);
    const bad = bytes.slice();
    bad[0] = 0x58;
    expect(() => decodeFlags(bad)).toThrow(/magic/);
  });
  it('an empty analysis encodes to zero flags', () => {
    expect(decodeFlags(encodeFlags(flagColumns([]))).count).toBe(0);
  });
  it('selectAndAppend keeps the chosen stored flags and appends the extra ones', () => {
    const c = flagColumns([rec(0, 0, 0), rec(1, 1, 1, 'error', 'under-target-depth'), rec(2, 2, 2)]);
    const out = selectAndAppend(c, [0, 2], [rec(9, 9, 9, 'info', 'over-etch')]);
    expect(out.keys).toEqual(['window-density-high:w0', 'window-density-high:w2', 'over-etch:w9']);
    expect(flagAt(out, 2).severity).toBe('info');
    expect(flagAt(out, 2).kind).toBe('over-etch');
  });
});

describe('flag thinning (one mark per screen cell; zoom separates)', () => {
  const view = (cx: number, cy: number, scale: number): View => ({ cx, cy, scale, width: 800, height: 600 });
  const cols = (pts: [number, number][], sev: number[] = []) => {
    const c = flagColumns(pts.map(([x, y], k) => rec(k, x, y, ['error', 'warning', 'info'][sev[k] ?? 1])));
    return c;
  };
  it('draws every flag in view when they are further apart than a cell', () => {
    const pts: [number, number][] = Array.from({ length: 100 }, (_, k) => [(k % 10) * 20, Math.floor(k / 10) * 20]);
    const c = cols(pts);
    const t = thinMarks(view(90, 90, 2), c.xUm, c.yUm, c.severity, c.count);
    expect(t.inView).toBe(100);
    expect(t.drawn.length).toBe(100);
  });
  it('merges a dense cluster into few marks, the error on top, and counts what each mark stands for', () => {
    // 6,000 flags within 1 µm, one of them an error.
    const pts: [number, number][] = Array.from({ length: 6000 }, (_, k) => [(k % 80) / 80, Math.floor(k / 80) / 80]);
    const sev = pts.map((_, k) => (k === 4321 ? 0 : 2));
    const c = cols(pts, sev);
    const t = thinMarks(view(0.5, 0.5, 10), c.xUm, c.yUm, c.severity, c.count);
    expect(t.inView).toBe(6000);
    expect(t.drawn.length).toBeLessThan(10);
    expect(t.drawn[0]).toBe(4321);
    expect([...t.merged].reduce((a, b) => a + b, 0)).toBe(6000);
  });
  it('property: any flag is drawn when the view is centred on it at a zoom where its neighbours are ≥ 2 cells away', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.double({ min: 0, max: 1000, noNaN: true }), fc.double({ min: 0, max: 1000, noNaN: true })), { minLength: 2, maxLength: 400 }), fc.nat(), (pts, pick) => {
        const c = cols(pts, pts.map((_, k) => k % 3));
        const i = pick % pts.length;
        const [x, y] = pts[i]!;
        let d = Infinity;
        pts.forEach(([a, b], k) => k !== i && (d = Math.min(d, Math.max(Math.abs(a - x), Math.abs(b - y)))));
        if (d === 0) return; // same position: one shared mark, merged > 1 says so
        const scale = Math.min(MAX_SCALE, (2 * cellPxFor(pts.length)) / d);
        if (scale * d < 2 * cellPxFor(pts.length)) return; // closer than the zoom limit can separate
        const t = thinMarks(view(x, y, scale), c.xUm, c.yUm, c.severity, c.count);
        expect([...t.drawn]).toContain(i);
      }),
      { numRuns: 200 },
    );
  });
  it('severityOrder puts errors, then warnings, then info first, keeping rank order within each; a given order gives the same marks', () => {
    const sev = Uint8Array.from([2, 0, 1, 0, 2, 1]);
    expect([...severityOrder(sev, 6)]).toEqual([1, 3, 2, 5, 0, 4]);
    const pts: [number, number][] = Array.from({ length: 500 }, (_, k) => [(k * 37) % 101, (k * 53) % 97]);
    const c = cols(pts, pts.map((_, k) => (k * 7) % 3));
    const v = view(50, 50, 3);
    const a = thinMarks(v, c.xUm, c.yUm, c.severity, c.count);
    const b = thinMarks(v, c.xUm, c.yUm, c.severity, c.count, -1, severityOrder(c.severity, c.count));
    expect([...b.drawn]).toEqual([...a.drawn]);
    expect([...b.merged]).toEqual([...a.merged]);
  });
  it('the selected flag is always drawn, and hit tests find drawn marks by screen position', () => {
    const pts: [number, number][] = [[0, 0], [0.01, 0], [50, 50]];
    const c = cols(pts, [0, 2, 1]);
    const v = view(25, 25, 4);
    const t = thinMarks(v, c.xUm, c.yUm, c.severity, c.count, 1);
    expect([...t.drawn]).toContain(1);
    const [sx, sy] = layoutToScreen(v, 50, 50);
    expect(t.drawn[hitThinned(t, sx + 3, sy - 2)]).toBe(2);
    expect(hitThinned(t, sx + 40, sy)).toBe(-1);
  });
});
