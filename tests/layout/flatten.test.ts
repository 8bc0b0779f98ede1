/**
 * Flattening semantics on hand-built layouts (GDSII manual 6.0 conventions as listed in domain.md §4: reflect
 * about x, then MAG, then ANGLE counter-clockwise, then translate; AREF lattice from P1, P2, P3). Expected values
 * are worked by hand from those definitions.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';
import { readLayoutBytes } from '@/lib/layout/read-bytes';
import { layerSummary, unionArea } from '@/lib/geometry/union-area';
import { summedArea } from './helpers';

const ring = (set: { coords: Float64Array; offsets: Uint32Array }, p: number) =>
  Array.from(set.coords.subarray(2 * (set.offsets[p] as number), 2 * (set.offsets[p + 1] as number)));

describe('flattenLibrary', () => {
  it('applies reflect → mag → rotate → translate to a single point (hand-worked)', async () => {
    const w = new GdsiiWriter();
    w.beginCell('TOP').sref('T', 1000, 2000, { reflect: true, mag: 2, angleDeg: 90 }).endCell();
    w.beginCell('T').rect(1, 0, 10, 20, 30, 50).endCell();
    const l = await readLayoutBytes(w.finish());
    // (10,20) → reflect (10,−20) → ×2 (20,−40) → +90° (40,20) → +(1000,2000) = (1040,2020); (30,50) → (1100,2060).
    const s = l.layers[0]!;
    const xs = ring(s, 0).filter((_, i) => i % 2 === 0);
    const ys = ring(s, 0).filter((_, i) => i % 2 === 1);
    expect([Math.min(...xs), Math.min(...ys), Math.max(...xs), Math.max(...ys)]).toEqual([1040, 2020, 1100, 2060]);
    expect(summedArea(l, 1)).toBe(60 * 40); // rings come out counter-clockwise even after a reflection
  });

  it('honours absolute magnification and absolute angle flags', async () => {
    const w = new GdsiiWriter();
    w.beginCell('TOP').sref('MID', 0, 0, { mag: 3, angleDeg: 90 }).endCell();
    w.beginCell('MID').sref('LEAF', 100, 0, { mag: 2, absMag: true, angleDeg: 0, absAngle: true }).endCell();
    w.beginCell('LEAF').rect(1, 0, 0, 0, 10, 5).endCell();
    const l = await readLayoutBytes(w.finish());
    // Origin (100,0) maps through MID's placement: ×3, +90° → (0,300). Leaf: mag 2 only, angle 0 only → 20×10.
    expect(l.bboxDbu).toEqual([0, 300, 20, 310]);
  });

  it('places AREF instances on a non-orthogonal lattice P1 + i·(P2−P1)/cols + j·(P3−P1)/rows', async () => {
    const w = new GdsiiWriter();
    w.beginCell('TOP').aref('D', 3, 2, [0, 0], [300, 60], [-40, 200]).endCell();
    w.beginCell('D').rect(5, 0, 0, 0, 1, 1).endCell();
    const l = await readLayoutBytes(w.finish());
    const s = l.layers[0]!;
    const origins = Array.from({ length: s.count }, (_, p) => {
      const r = ring(s, p);
      return [Math.min(r[0]!, r[2]!, r[4]!, r[6]!), Math.min(r[1]!, r[3]!, r[5]!, r[7]!)];
    });
    expect(origins).toEqual([[0, 0], [100, 20], [200, 40], [-20, 100], [80, 120], [180, 140]]);
  });

  it('resolves cells referenced before they are defined, and flattens 2000-deep hierarchies without recursion', async () => {
    const w = new GdsiiWriter();
    w.beginCell('C0').sref('C1', 1, 0).endCell();
    for (let i = 1; i < 2000; i++) w.beginCell(`C${i}`).sref(`C${i + 1}`, 1, 0).endCell();
    w.beginCell('C2000').rect(1, 0, 0, 0, 2, 2).endCell();
    const l = await readLayoutBytes(w.finish());
    expect(l.topCell).toBe('C0');
    expect(l.cellCount).toBe(2001);
    expect(l.bboxDbu).toEqual([2000, 0, 2002, 2]);
  });

  it('picks the unreferenced cell with the most flattened polygons as top, unless --top chooses', async () => {
    const w = new GdsiiWriter();
    w.beginCell('SMALL').rect(1, 0, 0, 0, 1, 1).endCell();
    w.beginCell('BIG').aref('V', 10, 10, [0, 0], [100, 0], [0, 100]).endCell();
    w.beginCell('V').rect(1, 0, 0, 0, 5, 5).endCell();
    const bytes = w.finish();
    const auto = await readLayoutBytes(bytes);
    expect(auto.topCell).toBe('BIG');
    expect(auto.layers[0]!.count).toBe(100);
    const chosen = await readLayoutBytes(bytes, { topCell: 'SMALL' });
    expect(chosen.topCell).toBe('SMALL');
    expect(chosen.layers[0]!.count).toBe(1);
  });

  it('keeps BOX as a polygon on layer/boxtype, TEXT as placed labels, and ignores NODE', async () => {
    const w = new GdsiiWriter();
    w.beginCell('TOP').box(7, 3, 0, 0, 50, 20).sref('L', 100, 0, { angleDeg: 90 }).endCell();
    w.beginCell('L').text(9, 1, 10, 0, 'PAD_A').endCell();
    const l = await readLayoutBytes(w.finish());
    expect(layerSummary(l)).toEqual([{ layer: 7, datatype: 3, polygons: 1, areaUm2: 1000 * 1e-6, bboxUm: [0, 0, 0.05, 0.02] }]);
    expect(l.labels).toEqual([{ layer: 9, texttype: 1, text: 'PAD_A', xDbu: 100, yDbu: 10 }]);
  });

  it('outlines paths with mitred joins and the four end types (hand-worked areas)', async () => {
    const w = new GdsiiWriter();
    const L = [0, 0, 100, 0, 100, 50]; // centre length 150, one 90° turn
    w.beginCell('TOP')
      .path(1, 0, L, 10, { pathtype: 0 })
      .path(2, 0, L, 10, { pathtype: 2 })
      .path(3, 0, L, 10, { pathtype: 4, bgnExt: 20, endExt: -3 })
      .path(4, 0, [0, 0, 1000, 0], 400, { pathtype: 1 })
      .endCell();
    const l = await readLayoutBytes(w.finish());
    expect(summedArea(l, 1)).toBe(150 * 10); // flush: length × width (a mitre adds what the inner corner loses)
    expect(summedArea(l, 2)).toBe(160 * 10); // + half-width at each end
    expect(summedArea(l, 3)).toBe(167 * 10); // + 20 at the start, − 3 at the end
    const round = summedArea(l, 4);
    const ideal = 1000 * 400 + Math.PI * 200 * 200;
    expect(round).toBeLessThan(ideal); // inscribed chords
    expect((ideal - round) / (Math.PI * 200 * 200)).toBeLessThan(0.003); // ≤ 0.2 % radial deviation → < 0.3 % cap area
  });

  it('does not scale a negative (absolute) path width by magnification', async () => {
    const w = new GdsiiWriter();
    w.beginCell('TOP').sref('P', 0, 0, { mag: 4 }).endCell();
    w.beginCell('P').path(1, 0, [0, 0, 100, 0], -10).endCell();
    const l = await readLayoutBytes(w.finish());
    expect(l.bboxDbu).toEqual([0, -5, 400, 5]);
  });

  it('reads XY continued over several records (10 000-point boundary)', async () => {
    const n = 10000;
    const pts: number[] = [];
    for (let k = 0; k < n; k++) pts.push(Math.round(1e5 * Math.cos((2 * Math.PI * k) / n)), Math.round(1e5 * Math.sin((2 * Math.PI * k) / n)));
    const l = await readLayoutBytes(new GdsiiWriter().beginCell('TOP').boundary(1, 0, pts).endCell().finish());
    expect(l.layers[0]!.offsets[1]).toBe(n);
  });

  it('gives the same result whatever the chunk boundaries (records split across chunks)', async () => {
    const file = fileURLToPath(new URL('../fixtures/gds/transforms.gds', import.meta.url));
    const bytes = new Uint8Array(readFileSync(file));
    const whole = await readLayoutBytes(bytes);
    for (const size of [1, 3, 5, 7, 64, 1000]) {
      async function* chunks() {
        for (let p = 0; p < bytes.length; p += size) yield bytes.slice(p, p + size);
      }
      const l = await readLayoutBytes(chunks());
      expect(l.layers.map((s) => Array.from(s.coords))).toEqual(whole.layers.map((s) => Array.from(s.coords)));
    }
  });
});

describe('unionArea', () => {
  it('tiling gives the same area as one union (overlapping random rectangles, integer dbu)', () => {
    let seed = 12345;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const n = 3000;
    const coords = new Float64Array(8 * n);
    const offsets = new Uint32Array(n + 1);
    for (let i = 0; i < n; i++) {
      const x = Math.floor(rnd() * 100000), y = Math.floor(rnd() * 100000);
      const w = 1 + Math.floor(rnd() * 3000), h = 1 + Math.floor(rnd() * 3000);
      coords.set([x, y, x + w, y, x + w, y + h, x, y + h], 8 * i);
      offsets[i + 1] = 4 * (i + 1);
    }
    const set = { layer: 1, datatype: 0, coords, offsets, count: n };
    const tiled = unionArea(set, { tileDbu: 2_000 }).areaDbu2;
    const single = unionArea(set, { tileDbu: 1e9 }).areaDbu2;
    expect(tiled).toBe(single); // exact: Manhattan, integer coordinates
    expect(single).toBeGreaterThan(0);
  });

  it('counts overlaps once and subtracts keyhole holes (hand-worked)', () => {
    // Two 10×10 squares overlapping in 5×10, plus a 30×30 frame with a 10×10 keyhole hole: 150 + 800.
    const coords = new Float64Array([0, 0, 10, 0, 10, 10, 0, 10, 5, 0, 15, 0, 15, 10, 5, 10,
      100, 100, 130, 100, 130, 130, 100, 130, 100, 110, 110, 110, 110, 120, 120, 120, 120, 110, 100, 110]);
    const set = { layer: 1, datatype: 0, coords, offsets: new Uint32Array([0, 4, 8, 18]), count: 3 };
    expect(unionArea(set).areaDbu2).toBe(150 + 900 - 100);
  });
});
