import { describe, expect, it } from 'vitest';
import { markStyle } from '@/components/viewer/flag-marks';
import { sampleAt } from '@/lib/viewer/map-kinds';

describe('flag marks', () => {
  it('differ in shape as well as colour by severity (readable without colour)', () => {
    const shapes = new Set((['error', 'warning', 'info'] as const).map((s) => markStyle(s).shape));
    expect(shapes.size).toBe(3);
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
