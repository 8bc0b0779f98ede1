/**
 * Checks of the shortcuts that skip work: isolated polygons bypass the clipper boolean in the tiled union
 * (open-regions.ts), congruent copies share one width measurement (widths.ts shape cache), and feature work
 * split into shards merges back to the same result.
 */
import { describe, expect, it } from 'vitest';
import { extractFeatures, featuresFromRegions, featureWidths, numberFeatures, openRegions, ringArea, shapeKey, type Box, type WidthCache } from '@/lib/geometry';
import { makeSet, mulberry32, ngon, rect, translate, type Ring } from './make-set';

const DBU = 0.001;
const unionArea = (rings: Ring[], tileDbu?: number) => {
  const r = openRegions(makeSet(rings), DBU, { tileDbu });
  let a = 0;
  for (let k = 0; k < r.ringCount; k++) a += ringArea(r.coords, 2 * (r.ringOffsets[k] as number), 2 * (r.ringOffsets[k + 1] as number));
  return a;
};

describe('openRegions isolated-polygon fast path', () => {
  it('an isolated rectangle crossing tile lines keeps its area and is stitched into one feature', () => {
    for (const tileDbu of [700, 1_000, 4_096, undefined]) {
      expect(unionArea([rect(150, 250, 9_850, 3_050)], tileDbu)).toBe(9_700 * 2_800); // analytical
      const f = extractFeatures(makeSet([rect(150, 250, 9_850, 3_050)]), DBU, { tileDbu });
      expect(f).toHaveLength(1);
      expect(f[0]!.perimeterUm).toBeCloseTo(2 * (9.7 + 2.8), 9); // analytical, tile seams removed
      expect(f[0]!.minWidthUm).toBeCloseTo(2.8, 12); // analytical short side (2 800 dbu × 0.001 µm)
      expect(f[0]!.maxWidthUm).toBeCloseTo(2.8, 12);
    }
  });

  it('a rectangle touching a tile line only along an edge adds nothing to that tile', () => {
    // Tile 1000: the rectangle's right edge lies on x = 1000. Area is the analytical 600 × 400 either way.
    expect(unionArea([rect(400, 100, 1_000, 500)], 1_000)).toBe(600 * 400);
  });

  it('a self-intersecting star is not passed through: nonzero union fills the centre once', () => {
    // Regular pentagram {5/2} of circumradius R drawn as one 5-point ring. Under the nonzero rule its union is
    // the star outline, a decagon of tip radius R and notch radius R·cos 72°/cos 36° (analytical, regular star
    // polygon geometry): area = 5·R·r·sin 36°.
    const R = 100_000;
    const star: Ring = [];
    for (let k = 0; k < 5; k++) {
      const a = Math.PI / 2 + (4 * Math.PI * k) / 5;
      star.push(Math.round(500_000 + R * Math.cos(a)), Math.round(500_000 + R * Math.sin(a)));
    }
    const r = (R * Math.cos((2 * Math.PI) / 5)) / Math.cos(Math.PI / 5);
    const expected = 5 * R * r * Math.sin(Math.PI / 5);
    expect(Math.abs(unionArea([star], 1_000_000) / expected - 1)).toBeLessThan(1e-4); // vertices rounded to 1 dbu
    // ringArea of the raw ring counts the centre pentagon twice: the fast path must not have emitted it as is.
    expect(Math.abs(Math.abs(ringArea(star)) / expected - 1)).toBeGreaterThan(0.05);
  });

  it('isolated convex polygons pass through with the same area as the drawn ring, any orientation', () => {
    const cw = (r: Ring): Ring => {
      const o: number[] = [];
      for (let k = r.length - 2; k >= 0; k -= 2) o.push(r[k] as number, r[k + 1] as number);
      return o;
    };
    const hex = ngon(5_000, 5_000, 2_000, 24, 0.1);
    expect(unionArea([hex], 100_000)).toBe(Math.abs(ringArea(hex))); // shoelace of the drawn ring (analytical)
    expect(unionArea([cw(hex)], 100_000)).toBe(Math.abs(ringArea(hex)));
  });
});

describe('featureWidths shape cache', () => {
  // A non-convex, non-Manhattan shape (takes the lattice path): a 45° bar with a square foot.
  const shape: Ring = [0, 0, 6_000, 0, 6_000, 3_000, 21_000, 18_000, 18_000, 21_000, 3_000, 6_000, 0, 6_000];
  const measure = (ring: Ring, cache?: WidthCache) => {
    const xs = ring.filter((_, k) => k % 2 === 0), ys = ring.filter((_, k) => k % 2 === 1);
    const bbox: Box = [Math.min(...xs), Math.min(...ys), Math.max(...xs), Math.max(...ys)];
    const perim = ring.reduce((s, _, k) => (k % 2 ? s : s + Math.hypot((ring[(k + 2) % ring.length] as number) - (ring[k] as number), (ring[(k + 3) % ring.length] as number) - (ring[k + 1] as number))), 0);
    return featureWidths(Float64Array.from(ring), [[0, ring.length / 2]], bbox, ringArea(ring), perim, {}, cache);
  };

  it('keys translated copies (any start vertex) alike and mirrored copies apart', () => {
    const key = (r: Ring) => {
      const xs = r.filter((_, k) => k % 2 === 0), ys = r.filter((_, k) => k % 2 === 1);
      return shapeKey(r, [[0, r.length / 2]], [Math.min(...xs), Math.min(...ys), Math.max(...xs), Math.max(...ys)]);
    };
    const moved = translate(shape, 123_457, -98_765);
    const rotatedStart = [...moved.slice(6), ...moved.slice(0, 6)];
    expect(key(rotatedStart)).toBe(key(shape));
    const mirrored = shape.map((v, k) => (k % 2 === 0 ? -v : v));
    expect(key(mirrored)).not.toBe(key(shape));
  });

  it('a cached result equals a fresh measurement of the same shape elsewhere', () => {
    const cache = new Map();
    const first = measure(shape, cache);
    expect(cache.size).toBe(1);
    const moved = translate(shape, 250_000, 40_000);
    const fresh = measure(moved);
    const cached = measure(moved, cache);
    expect(cached).toBe(first); // served from the cache
    // The lattice widths are translation invariant up to float rounding (relative 1e-9, common practice, no source)
    expect(Math.abs(fresh.minWidth / first.minWidth - 1)).toBeLessThan(1e-9);
    expect(Math.abs(fresh.maxWidth / first.maxWidth - 1)).toBeLessThan(1e-9);
    expect(first.exact).toBe(false);
  });

  it('feature extraction gives translated copies the same widths', () => {
    const fs = extractFeatures(makeSet([shape, translate(shape, 60_000, 0), translate(shape, 0, 60_000)]), DBU);
    expect(fs).toHaveLength(3);
    expect(new Set(fs.map((f) => `${f.minWidthUm}/${f.maxWidthUm}`)).size).toBe(1);
  });
});

describe('featuresFromRegions shard option + numberFeatures', () => {
  it('shards measured separately and merged equal the unsharded features', () => {
    // Seeded clusters of overlapping rectangles and octagons across several union tiles.
    const rnd = mulberry32(99);
    const rings: Ring[] = [];
    for (let k = 0; k < 150; k++) {
      const x = Math.floor(rnd() * 200_000), y = Math.floor(rnd() * 200_000);
      if (k % 7 === 0) rings.push(ngon(x, y, 1_000 + Math.floor(rnd() * 3_000), 8));
      else rings.push(rect(x, y, x + 1_000 + Math.floor(rnd() * 20_000), y + 1_000 + Math.floor(rnd() * 4_000)));
    }
    const regions = openRegions(makeSet(rings), DBU, { tileDbu: 30_000 });
    const whole = featuresFromRegions(regions);
    for (const count of [2, 3]) {
      const parts = Array.from({ length: count }, (_, index) => featuresFromRegions(regions, { shard: { index, count } }));
      expect(parts.reduce((s, p) => s + p.length, 0)).toBe(whole.length);
      // Same features, same ids, same widths: sharding only splits the work (common practice, no source)
      expect(numberFeatures(parts.flat())).toEqual(whole);
    }
  });
});
