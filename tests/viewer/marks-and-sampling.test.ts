import { describe, expect, it } from 'vitest';
import { hitMark, markStyle, type MarkFlag } from '@/components/viewer/flag-marks';
import { sampleAt } from '@/lib/viewer/map-kinds';
import { layoutToScreen } from '@/lib/viewer/view-transform';

const flag = (key: string, severity: MarkFlag['severity'], x: number, y: number): MarkFlag => ({ id: key, key, kind: 'k', severity, xUm: x, yUm: y, bboxUm: [x, y, x, y], message: '', measured: 0, limit: 0, unit: '' });

describe('flag marks', () => {
  it('differ in shape as well as colour by severity (readable without colour)', () => {
    const shapes = new Set((['error', 'warning', 'info'] as const).map((s) => markStyle(s).shape));
    expect(shapes.size).toBe(3);
  });
  it('hit test picks the nearest mark within the radius, the more severe one on a tie', () => {
    const v = { cx: 0, cy: 0, scale: 1, width: 200, height: 200 };
    const toScreen = (x: number, y: number) => layoutToScreen(v, x, y);
    const marks = [flag('w', 'warning', 5, 0), flag('e', 'error', 5, 0), flag('far', 'error', 50, 0)];
    expect(hitMark(marks, toScreen, 100 + 5, 100)?.key).toBe('e');
    expect(hitMark(marks, toScreen, 100 + 30, 100)).toBeNull();
    expect(hitMark(marks, toScreen, 100 + 48, 100 + 3)?.key).toBe('far');
  });
});

describe('map sampling (TRGRID1 convention: row 0 at the bottom, pixel (i,j) covers [x0+i·p, x0+(i+1)·p])', () => {
  const g = { x0Um: 10, y0Um: 20, pixelUm: 2, nx: 3, ny: 2 };
  const values = Float32Array.from([0, 1, 2, 3, 4, 5]);
  it('reads the pixel that contains the point', () => {
    expect(sampleAt(values, g, 10.1, 20.1)).toBe(0);
    expect(sampleAt(values, g, 15.9, 20.1)).toBe(2);
    expect(sampleAt(values, g, 12, 22)).toBe(4); // lower-left corner belongs to pixel (1,1)
    expect(sampleAt(values, g, 15.99, 23.99)).toBe(5);
  });
  it('is NaN outside the grid', () => {
    expect(sampleAt(values, g, 9.99, 21)).toBeNaN();
    expect(sampleAt(values, g, 16, 21)).toBeNaN();
    expect(sampleAt(values, g, 11, 24)).toBeNaN();
  });
});

describe('mark mesh', () => {
  it('draws each mark as an outline shape and a smaller coloured shape at its screen point', async () => {
    const { buildMarkMesh, opaqueAbgr } = await import('@/components/viewer/mark-mesh');
    const m = buildMarkMesh([{ x: 10, y: 20, shape: 'diamond', size: 7, color: 0xd55e00 }]);
    expect(m.positions.length / 2).toBe(8); // 4 outline + 4 fill vertices
    expect(m.indices.length).toBe(12); // 2 + 2 triangles
    expect(Array.from(m.positions.subarray(8, 16))).toEqual([10, 13, 17, 20, 10, 27, 3, 20]); // fill diamond, radius 7
    expect(m.colors[4]).toBe(opaqueAbgr(0xd55e00));
    expect(m.colors[4]! & 0xff).toBe(0xd5); // red in the low byte (RGBA8 little-endian)
  });
});
