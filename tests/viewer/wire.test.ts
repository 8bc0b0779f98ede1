import { describe, expect, it } from 'vitest';
import { decodeFeatures, encodeFeatures, FEATURE_WIRE_COLUMNS, FeatureWireError } from '@/lib/viewer/feature-wire';
import { buildPolygonIndex, queryPolygons } from '@/lib/viewer/polygon-index';
import { buildLayerMeshes } from '@/lib/viewer/polygon-mesh';
import { decodePolygons, encodePolygons, PolygonWireError } from '@/lib/viewer/polygon-wire';
import type { FlatLayout } from '@/lib/layout/types';

describe('TRFEAT1 feature columns', () => {
  it('round-trips every column', () => {
    const n = 5;
    const cols: Record<string, number[]> = {};
    FEATURE_WIRE_COLUMNS.forEach(([name], c) => (cols[name] = Array.from({ length: n }, (_, i) => (name === 'modelKind' || name === 'reachesTarget' ? i % 2 : i * 1.5 + c))));
    const back = decodeFeatures(encodeFeatures({ count: n, ...cols } as never));
    expect(back.count).toBe(n);
    expect(Array.from(back.widthUm)).toEqual(cols.widthUm);
    expect(Array.from(back.modelKind)).toEqual(cols.modelKind);
    expect(Array.from(back.featureId)).toEqual(cols.featureId!.map(Math.trunc));
  });
  it('names the problem in bad data', () => {
    expect(() => decodeFeatures(new Uint8Array(4))).toThrow(FeatureWireError);
    const ok = encodeFeatures({ count: 3, ...Object.fromEntries(FEATURE_WIRE_COLUMNS.map(([n]) => [n, [1, 2, 3]])) } as never);
    expect(() => decodeFeatures(ok.subarray(0, ok.length - 8))).toThrow(/truncated in column overEtchUm/);
  });
});

/** Square grid of w×w µm squares at pitch p on layer 1/0, plus one L-shaped polygon on layer 2/0. dbu = 0.001 µm. */
function layout(nx: number, w: number, p: number): FlatLayout {
  const coords: number[] = [];
  const offsets: number[] = [0];
  for (let j = 0; j < nx; j++) for (let i = 0; i < nx; i++) {
    const x = i * p * 1000, y = j * p * 1000, s = w * 1000;
    coords.push(x, y, x + s, y, x + s, y + s, x, y + s);
    offsets.push(coords.length / 2);
  }
  const L = [0, 0, 3000, 0, 3000, 1000, 1000, 1000, 1000, 3000, 0, 3000];
  return {
    format: 'csv', libraryName: 't', dbuUm: 0.001, userUnitUm: 1, topCell: 'TOP', cellCount: 1, labels: [], bboxDbu: [0, 0, nx * p * 1000, nx * p * 1000],
    layers: [
      { layer: 1, datatype: 0, coords: Float64Array.from(coords), offsets: Uint32Array.from(offsets), count: nx * nx },
      { layer: 2, datatype: 0, coords: Float64Array.from(L), offsets: Uint32Array.from([0, 6]), count: 1 },
    ],
  } as FlatLayout;
}

describe('polygons in view', () => {
  const ix = buildPolygonIndex(layout(100, 2, 10)); // 10 000 squares over 1 mm
  it('returns exactly the polygons meeting the box, µm relative to the origin, and survives the wire', () => {
    const got = decodePolygons(encodePolygons(queryPolygons(ix, [0, 0, 25, 15], 1000)));
    // Squares at x = 0, 10, 20 and y = 0, 10 meet [0,25]×[0,15]; the L (0..3 µm) too.
    expect(got.total).toBe(7);
    expect(got.layers).toEqual([{ layer: 1, datatype: 0 }, { layer: 2, datatype: 0 }]);
    const xs: number[] = [];
    for (let r = 0; r < got.polyLayer.length; r++) if (got.polyLayer[r] === 0) xs.push(got.coords[2 * got.offsets[r]!]! + got.originX);
    expect(xs.sort((a, b) => a - b)).toEqual([0, 0, 10, 10, 20, 20]);
  });
  it('answers only a count when more than max would be returned', () => {
    const big = queryPolygons(ix, [0, 0, 1000, 1000], 500);
    expect(big.polyLayer.length).toBe(0);
    expect(big.total).toBeGreaterThan(500);
  });
  it('rejects inconsistent data with the offset', () => {
    const ok = encodePolygons(queryPolygons(ix, [0, 0, 25, 15], 1000));
    expect(() => decodePolygons(ok.subarray(0, ok.length - 4))).toThrow(PolygonWireError);
  });
  it('triangulates rectangles and the L into the right area', () => {
    const meshes = buildLayerMeshes(queryPolygons(ix, [0, 0, 25, 15], 1000));
    const areaOf = (m: (typeof meshes)[number]) => {
      let a = 0;
      for (let t = 0; t < m.fillIndices.length; t += 3) {
        const [i, j, k] = [m.fillIndices[t]!, m.fillIndices[t + 1]!, m.fillIndices[t + 2]!];
        const p = m.positions;
        a += Math.abs((p[2 * j]! - p[2 * i]!) * (p[2 * k + 1]! - p[2 * i + 1]!) - (p[2 * k]! - p[2 * i]!) * (p[2 * j + 1]! - p[2 * i + 1]!)) / 2;
      }
      return a;
    };
    expect(areaOf(meshes[0]!)).toBeCloseTo(6 * 4, 4);
    expect(areaOf(meshes[1]!)).toBeCloseTo(3 * 1 + 1 * 2, 4);
    expect(meshes[1]!.lineIndices.length).toBe(12);
  });
  it('fills a concave quad by its true area (not as a fan)', () => {
    const m = buildLayerMeshes({ total: 1, layers: [{ layer: 1, datatype: 0 }], originX: 0, originY: 0, polyLayer: Uint32Array.of(0), offsets: Uint32Array.of(0, 4), coords: Float32Array.of(4, 0, 1, 1, 0, 4, 0, 0) })[0]!; // a fan from (4,0) would cover 12
    let a = 0;
    const p = m.positions;
    for (let t = 0; t < m.fillIndices.length; t += 3) {
      const [i, j, k] = [m.fillIndices[t]!, m.fillIndices[t + 1]!, m.fillIndices[t + 2]!];
      a += Math.abs((p[2 * j]! - p[2 * i]!) * (p[2 * k + 1]! - p[2 * i + 1]!) - (p[2 * k]! - p[2 * i]!) * (p[2 * j + 1]! - p[2 * i + 1]!)) / 2;
    }
    // Shoelace area of (4,0) (1,1) (0,4) (0,0): |4·1−1·0 + 1·4−0·1 + 0·0−0·4 + 0·0−4·0| / 2 = 4.
    expect(a).toBeCloseTo(4, 6);
  });
});

describe('count estimate', () => {
  it('is an upper bound of the exact count, also with a die-sized polygon present', async () => {
    const { estimateCount } = await import('@/lib/viewer/polygon-index');
    const l = layout(60, 2, 10);
    // A die outline on its own layer, as real layouts have.
    l.layers.push({ layer: 0, datatype: 0, coords: Float64Array.from([0, 0, 600000, 0, 600000, 600000, 0, 600000]), offsets: Uint32Array.from([0, 4]), count: 1 });
    const ix = buildPolygonIndex(l);
    expect(ix.large.some((it) => it.maxX - it.minX >= 600)).toBe(true);
    for (const box of [[0, 0, 50, 50], [100, 100, 180, 130], [0, 0, 600, 600], [333, 17, 334, 400]] as [number, number, number, number][]) {
      const exact = ix.tree.search({ minX: box[0], minY: box[1], maxX: box[2], maxY: box[3] }).length;
      const est = estimateCount(ix, box);
      expect(est).toBeGreaterThanOrEqual(exact);
      expect(est).toBeLessThan(exact * 2 + 60); // and not absurdly larger for small boxes
    }
  });
});
