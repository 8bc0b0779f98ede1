import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { fitView, focusOn, layoutToScreen, panBy, scaleBar, screenToLayout, visibleBox, worldMatrix, zoomAbout, type View } from '@/lib/viewer/view-transform';

const v0: View = { cx: 100, cy: 50, scale: 2, width: 800, height: 600 };

describe('screen ↔ layout µm', () => {
  it('maps the canvas centre to the view centre and flips y (screen y down, layout y up)', () => {
    expect(screenToLayout(v0, 400, 300)).toEqual([100, 50]);
    // 20 px right and 20 px up on screen at 2 px/µm = +10 µm in x and +10 µm in y.
    expect(screenToLayout(v0, 420, 280)).toEqual([110, 60]);
    expect(layoutToScreen(v0, 110, 60)).toEqual([420, 280]);
  });

  it('round-trips for any view and point', () => {
    const view = fc.record({ cx: fc.double({ min: -1e5, max: 1e5, noNaN: true }), cy: fc.double({ min: -1e5, max: 1e5, noNaN: true }), scale: fc.double({ min: 1e-3, max: 1e3, noNaN: true }), width: fc.integer({ min: 10, max: 4000 }), height: fc.integer({ min: 10, max: 4000 }) });
    fc.assert(
      fc.property(view, fc.double({ min: -5000, max: 5000, noNaN: true }), fc.double({ min: -5000, max: 5000, noNaN: true }), (v, sx, sy) => {
        const [x, y] = screenToLayout(v, sx, sy);
        const [bx, by] = layoutToScreen(v, x, y);
        expect(bx).toBeCloseTo(sx, 4);
        expect(by).toBeCloseTo(sy, 4);
      }),
    );
  });

  it('worldMatrix agrees with layoutToScreen', () => {
    const m = worldMatrix(v0);
    const [sx, sy] = layoutToScreen(v0, 37, -12);
    expect(m.a * 37 + m.c * -12 + m.tx).toBeCloseTo(sx, 9);
    expect(m.b * 37 + m.d * -12 + m.ty).toBeCloseTo(sy, 9);
  });

  it('zoom about the cursor keeps the layout point under the cursor', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 800, noNaN: true }), fc.double({ min: 0, max: 600, noNaN: true }), fc.double({ min: 0.1, max: 10, noNaN: true }), (sx, sy, f) => {
        const before = screenToLayout(v0, sx, sy);
        const z = zoomAbout(v0, sx, sy, f);
        expect(z.scale).toBeCloseTo(2 * f, 9);
        const after = screenToLayout(z, sx, sy);
        expect(after[0]).toBeCloseTo(before[0], 6);
        expect(after[1]).toBeCloseTo(before[1], 6);
      }),
    );
  });

  it('pan moves content with the pointer', () => {
    const p = panBy(v0, 40, -20); // drag right and up
    // The layout point that was at (400,300) is now at (440,280).
    expect(layoutToScreen(p, 100, 50)).toEqual([440, 280]);
  });

  it('fit shows the whole box with the margin and centres it', () => {
    const f = fitView([0, 0, 1000, 500], 800, 600, 16);
    expect(f.scale).toBeCloseTo((800 - 32) / 1000, 12);
    const vb = visibleBox(f);
    expect(vb[0]).toBeLessThanOrEqual(0);
    expect(vb[2]).toBeGreaterThanOrEqual(1000);
    expect(vb[1]).toBeLessThanOrEqual(0);
    expect(vb[3]).toBeGreaterThanOrEqual(500);
    expect([f.cx, f.cy]).toEqual([500, 250]);
  });

  it('focus centres on the point and zooms in (never out) so the box spans about a third of the canvas', () => {
    const f = focusOn({ ...v0, scale: 0.1 }, 10, 20, [0, 0, 20, 40]);
    expect([f.cx, f.cy]).toEqual([10, 20]);
    expect(f.scale).toBeCloseTo(Math.min(800 / 3 / 20, 600 / 3 / 40), 12);
    expect(focusOn({ ...v0, scale: 50 }, 1, 1, [0, 0, 20, 40]).scale).toBe(50);
  });

  it('scale bar picks 1-2-5 lengths that fit', () => {
    expect(scaleBar(0.5, 120)).toEqual({ um: 200, px: 100, label: '200 µm' });
    expect(scaleBar(0.05, 140).label).toBe('2 mm');
    expect(scaleBar(1000, 140).label).toBe('100 nm');
    fc.assert(fc.property(fc.double({ min: 1e-4, max: 1e4, noNaN: true }), (s) => {
      const b = scaleBar(s, 140);
      expect(b.px).toBeLessThanOrEqual(140 + 1e-9);
      expect(b.px).toBeGreaterThan(140 / 5 - 1e-9);
    }));
  });
});
