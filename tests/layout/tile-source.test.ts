/**
 * The in-memory tile source, the reference every on-disk tile source must match: a tile returns exactly the
 * polygons whose bbox meets the closed box, whole (product contract in lib/layout/tile-source.ts; no outside
 * source applies — it is a selection rule).
 */
import { describe, expect, it } from 'vitest';
import { inMemoryTileSource } from '@/lib/layout/tile-source';
import type { FlatLayout } from '@/lib/layout/types';

const rect = (x0: number, y0: number, x1: number, y1: number) => [x0, y0, x1, y0, x1, y1, x0, y1];

function layout(): FlatLayout {
  const polys = [rect(0, 0, 10, 10), rect(20, 0, 30, 10), rect(9, 50, 41, 60)];
  const coords = Float64Array.from(polys.flat());
  const offsets = Uint32Array.from([0, 4, 8, 12]);
  return {
    format: 'gdsii', libraryName: 'T', dbuUm: 0.001, userUnitUm: 1, topCell: 'TOP', cellCount: 1,
    layers: [{ layer: 1, datatype: 0, coords, offsets, count: 3 }, { layer: 2, datatype: 0, coords: Float64Array.from(rect(0, 0, 5, 5)), offsets: Uint32Array.from([0, 4]), count: 1 }],
    labels: [], bboxDbu: [0, 0, 41, 60],
  };
}

describe('inMemoryTileSource', () => {
  it('reports the header of the whole layout', () => {
    const src = inMemoryTileSource(layout());
    expect(src.header.layers).toEqual([{ layer: 1, datatype: 0, polygons: 3, points: 12 }, { layer: 2, datatype: 0, polygons: 1, points: 4 }]);
    expect(src.header.bboxDbu).toEqual([0, 0, 41, 60]);
  });

  it('returns whole polygons whose bbox meets the closed box, of the asked layers only', () => {
    const src = inMemoryTileSource(layout());
    const t = src.readTile([10, 0, 19, 55], [{ layer: 1, datatype: 0 }]);
    expect(t.layers).toHaveLength(1);
    const set = t.layers[0]!;
    expect(set.count).toBe(2); // touches the first square at x = 10 (closed box) and the bar from y = 50
    expect(Array.from(set.coords)).toEqual([...rect(0, 0, 10, 10), ...rect(9, 50, 41, 60)]);
    expect(t.bboxDbu).toEqual([0, 0, 41, 60]);
    expect(src.readTile([100, 100, 200, 200], [{ layer: 1, datatype: 0 }]).layers).toHaveLength(0);
  });
});
