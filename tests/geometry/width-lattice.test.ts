/**
 * The widths lattice path after issue 13: the run-based lattice passes (lattice-runs.ts) must give the dense passes'
 * answers bit for bit, and the ridge snap (ridge-snap.ts) must land on true local maxima of the distance to the
 * boundary, so openings off the exact Manhattan lattice get their analytic widths.
 */
import { describe, expect, it } from 'vitest';
import { extractFeatures, featureWidths, latticeInterior, openRegions, ringArea, ringPerimeter, squaredDistanceTransform, type Lattice } from '@/lib/geometry';
import { maximalDiskCentres } from '@/lib/geometry/distance';
import { interiorRuns, runDistanceTransform, runMaximalCentres } from '@/lib/geometry/lattice-runs';
import { distanceToEdges, edgeList } from '@/lib/geometry/edge-distance';
import { isLocalMaximum, snapToRidge, snapped } from '@/lib/geometry/ridge-snap';
import { makeSet, mulberry32, ngon, rect, type Ring } from './make-set';

const DBU = 0.001;
const flat = (rings: Ring[]) => {
  const coords = Float64Array.from(rings.flat());
  const spans: [number, number][] = [];
  let s = 0;
  for (const r of rings) {
    spans.push([s, s + r.length / 2]);
    s += r.length / 2;
  }
  return { coords, spans };
};
const reversed = (r: Ring): Ring => {
  const out: number[] = [];
  for (let k = r.length - 2; k >= 0; k -= 2) out.push(r[k] as number, r[k + 1] as number);
  return out;
};

describe('run-based lattice passes = dense passes', () => {
  it('same interior nodes, squared distances and maximal-disk centres on seeded random ring sets', () => {
    const rnd = mulberry32(1313);
    for (let trial = 0; trial < 300; trial++) {
      const rings: Ring[] = [];
      // Ring counts vary up and down so the reused buffers are exercised below and at their capacity.
      const n = trial % 7 === 3 ? 1 : 1 + Math.floor(rnd() * (trial % 5 === 0 ? 12 : 4));
      for (let k = 0; k < n; k++) {
        const x = Math.floor(rnd() * 40) * 50, y = Math.floor(rnd() * 40) * 50;
        const kind = rnd();
        // Overlapping (winding 2), reversed (winding −1) and abutting rectangles, and some slanted polygons.
        let r = kind < 0.7 ? rect(x, y, x + 50 + Math.floor(rnd() * 40) * 50, y + 50 + Math.floor(rnd() * 12) * 50) : ngon(x + 600, y + 600, 300 + Math.floor(rnd() * 500), 3 + Math.floor(rnd() * 8), rnd());
        if (rnd() < 0.2) r = reversed(r);
        rings.push(r);
      }
      const { coords, spans } = flat(rings);
      let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
      for (let k = 0; k < coords.length; k += 2) {
        x0 = Math.min(x0, coords[k]!);
        x1 = Math.max(x1, coords[k]!);
        y0 = Math.min(y0, coords[k + 1]!);
        y1 = Math.max(y1, coords[k + 1]!);
      }
      // Steps that put nodes exactly on edges (multiples of 25 on a 50 grid) and steps that do not.
      const step = trial % 2 === 0 ? 25 * (1 + Math.floor(rnd() * 4)) : 7 + rnd() * 90;
      const lat: Lattice = { x0, y0, step, nx: Math.ceil((x1 - x0) / step - 1e-9) + 1, ny: Math.ceil((y1 - y0) / step - 1e-9) + 1 };
      const dense = latticeInterior(coords, spans, lat);
      const denseD2 = squaredDistanceTransform(dense, lat.nx, lat.ny);
      const denseCentres = maximalDiskCentres(denseD2, lat.nx, lat.ny);
      const runs = interiorRuns(coords, spans, lat);
      expect(Array.from(runs.mask)).toEqual(Array.from(dense));
      let count = 0;
      for (let j = 0; j < lat.ny; j++) for (let r = runs.rowRun[j]!; r < runs.rowRun[j + 1]!; r++) count += runs.runs[2 * r + 1]! - runs.runs[2 * r]! + 1;
      expect(count).toBe(dense.reduce((s, v) => s + v, 0));
      const d2 = runDistanceTransform(runs, lat.nx, lat.ny);
      // Identical numbers, not merely close: the width results must not move (common practice, no source).
      expect(Array.from(d2)).toEqual(Array.from(denseD2));
      expect(Array.from(runMaximalCentres(runs, d2, lat.nx, lat.ny))).toEqual(denseCentres);
    }
  });
});

describe('isLocalMaximum(edges, x, y, d)', () => {
  const edgesOf = (rings: Ring[]) => {
    const { coords, spans } = flat(rings);
    return edgeList(coords, spans);
  };
  it('accepts a trench centre line (plateau between facing edges), rejects a point off it', () => {
    const e = edgesOf([rect(0, 0, 10_000, 2_000)]);
    expect(isLocalMaximum(e, 5_000, 1_000, 1_000)).toBe(true); // analytical: midline of a 2 µm bar
    expect(isLocalMaximum(e, 5_000, 900, 900)).toBe(false);
  });
  it('accepts the centre of a cross (four concave corners) and rejects a neck between two corners', () => {
    // Cross of a 3 µm bar and a 4 µm bar: centre (10, 5.5) µm touches the four concave corners at hypot(2, 1.5) = 2.5 µm.
    const cross = edgesOf([[0, 4_000, 8_000, 4_000, 8_000, 0, 12_000, 0, 12_000, 4_000, 20_000, 4_000, 20_000, 7_000, 12_000, 7_000, 12_000, 20_000, 8_000, 20_000, 8_000, 7_000, 0, 7_000]]);
    expect(isLocalMaximum(cross, 10_000, 5_500, 2_500)).toBe(true);
    // Step shape [0,4]×[0,2] ∪ [2,6]×[2,4] µm: (3, 2) is 1 µm from the concave corners (2, 2) and (4, 2) and 2 µm from
    // the bottom and top edges — a saddle (moving up or down gets farther from both corners), not a maximum.
    const step = edgesOf([[0, 0, 4_000, 0, 4_000, 2_000, 6_000, 2_000, 6_000, 4_000, 2_000, 4_000, 2_000, 2_000, 0, 2_000]]);
    expect(distanceToEdges(step, 3_000, 2_000)).toBe(1_000);
    expect(isLocalMaximum(step, 3_000, 2_000, 1_000)).toBe(false);
  });
});

describe('snapToRidge(edges, x, y, d, reach, maxMove)', () => {
  it('lands on the largest disk of a Manhattan frame corner (analytical, 1e-9 dbu)', () => {
    // Frame: outer 20 µm, wall 3 µm. Corner disk touches both outer edges and the inner corner (3, 3) µm:
    // radius t with t√2 + t = 3√2 → t = 3√2/(1+√2) µm, centre (t, t) (derived by hand).
    const { coords, spans } = flat([rect(0, 0, 20_000, 20_000), reversed(rect(3_000, 3_000, 17_000, 17_000))]);
    const e = edgeList(coords, spans);
    const t = (3_000 * Math.SQRT2) / (1 + Math.SQRT2);
    const x = t + 30, y = t - 20;
    const d = distanceToEdges(e, x, y);
    expect(snapToRidge(e, x, y, d, 200, d)).toBe(true);
    expect(Math.abs(snapped[2]! - t)).toBeLessThan(1e-9);
    expect(Math.hypot(snapped[0]! - t, snapped[1]! - t)).toBeLessThan(1e-6);
  });

  it('lands on the nearest certified maximum (the plateau it starts on), not a larger vertex within reach', () => {
    // Trench [0, 5000] × [0, 1000] opening into a pad [5000, 6000] × [0, 2000] (bottom edges flush), derived by hand
    // from the definitions in widths.ts (common practice, no source). The trench's midline y = 500 is a plateau of
    // D = 500. Beside it, in the pad, a medial-axis vertex touches the bottom y = 0, the pad's right wall x = 6000 and
    // the reflex corner (5000, 1000): centre (6000 − r, r), (1000 − r)·√2 = r → r = 1000√2/(1 + √2) = 1000(2 − √2)
    // = 585.786 dbu, a certified maximum (site directions π/2, π, 7π/4: no gap of π). From (4950, 510), D = 490 (the
    // trench top), both lie within the move bound D: the plateau point (4950, 500) 10 dbu away, the vertex
    // (5414.2, 585.8) 470 dbu away. The narrowest-centre polish must stay on the plateau (r = 500); the maxWidth
    // climbs (`largest`) take the vertex.
    const e = edgeList(Float64Array.from([0, 0, 6_000, 0, 6_000, 2_000, 5_000, 2_000, 5_000, 1_000, 0, 1_000]), [[0, 6]]);
    const [x, y] = [4_950, 510];
    const d = distanceToEdges(e, x, y);
    expect(d).toBe(490);
    const r = 1_000 * (2 - Math.SQRT2);
    expect(snapToRidge(e, x, y, d, 600, d)).toBe(true);
    expect(Math.abs(snapped[2]! - 500)).toBeLessThan(1e-9);
    expect(Math.hypot(snapped[0]! - 4_950, snapped[1]! - 500)).toBeLessThan(1e-6);
    expect(snapToRidge(e, x, y, d, 600, d, true)).toBe(true);
    expect(Math.abs(snapped[2]! - r)).toBeLessThan(1e-9);
    expect(Math.hypot(snapped[0]! - (6_000 - r), snapped[1]! - r)).toBeLessThan(1e-6);
  });

  it('a trench + via opening (sampled lattice, polished narrowest centre): minWidth the trench width', () => {
    // One opening of the 1M-polygon bench layout (bench/make-files.ts mixedLayer), in its bbox frame: trench
    // [0, 24639] × [3009, 4580] whose right end joins a 16-gon via (centre (24500, 1659), corner radius 1659). Derived by
    // hand from the definitions in widths.ts (common practice, no source): the trench midline y = 3794.5 is a plateau
    // of D = 1571/2 = 785.5 dbu; a disk larger than that containing a midline point far from the via does not fit
    // between the trench edges, so those points are self-centred and minWidth = 1571 dbu (the via and the junction
    // are wider). Not Manhattan, so the sampled lattice measures it and polishes the narrowest node: taking the largest
    // certified maximum within the polish's two steps it landed on a junction vertex, 1618.08 dbu.
    const xy = Float64Array.from([24929, 57, 25330, 222, 25673, 486, 25937, 829, 26102, 1230, 26159, 1659, 26102, 2088, 25937, 2488, 25673, 2832, 25330, 3096, 24929, 3261, 24639, 3300, 24639, 4580, 0, 4580, 0, 3009, 23558, 3009, 23327, 2832, 23063, 2488, 22898, 2088, 22841, 1659, 22898, 1230, 23063, 830, 23327, 486, 23670, 222, 24071, 57, 24500, 0]);
    const n = xy.length / 2;
    const w = featureWidths(xy, [[0, n]], [0, 0, 26159, 4580], Math.abs(ringArea(xy, 0, 2 * n)), ringPerimeter(xy, 0, 2 * n));
    expect(w.exact).toBe(false);
    expect(Math.abs(w.minWidth - 1571)).toBeLessThan(1e-6);
  });

  it('never lowers D, never moves farther than allowed, and ends on a local maximum (seeded random unions)', () => {
    const rnd = mulberry32(77);
    let landed = 0;
    for (let trial = 0; trial < 200; trial++) {
      const rings: Ring[] = [];
      for (let k = 0; k < 3; k++) {
        const x = Math.floor(rnd() * 8_000), y = Math.floor(rnd() * 8_000);
        rings.push(rnd() < 0.5 ? rect(x, y, x + 800 + Math.floor(rnd() * 9_000), y + 800 + Math.floor(rnd() * 1_500)) : rect(x, y, x + 800 + Math.floor(rnd() * 1_500), y + 800 + Math.floor(rnd() * 9_000)));
      }
      // The union's rings (one tile), as the feature path measures them.
      const reg = openRegions(makeSet(rings), DBU, { tileDbu: 1e9 });
      const spans: [number, number][] = [];
      for (let r = 0; r < reg.ringCount; r++) spans.push([reg.ringOffsets[r]!, reg.ringOffsets[r + 1]!]);
      const e = edgeList(reg.coords, spans);
      for (let p = 0; p < 5; p++) {
        let x = rnd() * 20_000, y = rnd() * 20_000;
        if (!inside(rings, x, y)) continue;
        // Climb near a local maximum first (plain compass search), as the widths searches do before snapping.
        let h = 200;
        while (h > 2) {
          const d0 = distanceToEdges(e, x, y);
          let moved = false;
          for (let k = 0; k < 8 && !moved; k++) {
            const qx = x + h * Math.cos((k * Math.PI) / 4), qy = y + h * Math.sin((k * Math.PI) / 4);
            if (h < d0 && distanceToEdges(e, qx, qy) > d0) {
              x = qx;
              y = qy;
              moved = true;
            }
          }
          if (!moved) h /= 2;
        }
        const d = distanceToEdges(e, x, y);
        const room = d * (0.05 + 0.95 * rnd());
        if (!snapToRidge(e, x, y, d, 16, room)) continue;
        landed++;
        const [sx, sy, sd] = [snapped[0]!, snapped[1]!, snapped[2]!];
        expect(sd).toBeGreaterThanOrEqual(d);
        expect(Math.hypot(sx - x, sy - y)).toBeLessThan(room);
        expect(distanceToEdges(e, sx, sy)).toBe(sd);
        // Local maximum: no probe around it is farther from the edges (32 directions, 0.1 to 100 dbu away).
        for (const r of [0.1, 1, 10, 100]) {
          for (let k = 0; k < 32; k++) {
            const qx = sx + r * Math.cos((k * Math.PI) / 16), qy = sy + r * Math.sin((k * Math.PI) / 16);
            if (r < sd) expect(distanceToEdges(e, qx, qy)).toBeLessThanOrEqual(sd + 1e-9 * sd);
          }
        }
      }
    }
    expect(landed).toBeGreaterThan(50);
  });
});

/** Nonzero-winding point test for axis-aligned counter-clockwise rectangles (the union is their OR). */
function inside(rings: Ring[], x: number, y: number): boolean {
  return rings.some((r) => x > r[0]! && x < r[2]! && y > r[1]! && y < r[5]!);
}

describe.each([
  { path: 'sampled lattice', opts: { uniformLattice: true }, exact: false },
  { path: 'compressed Manhattan lattice', opts: {}, exact: true },
])('widths of Manhattan openings off the exact lattice (vertices on a 1 nm grid), $path', ({ opts, exact }) => {
  // Odd dbu coordinates make the uniform exact Manhattan lattice too fine, so with `uniformLattice` these take the
  // sampled lattice path; by default the compressed lattice (manhattan-lines.ts) measures them exactly. The expected
  // values are derived by hand from the definitions in widths.ts.
  const one = (rings: Ring[]) => {
    const f = extractFeatures(makeSet(rings), DBU, opts);
    expect(f).toHaveLength(1);
    expect(f[0]!.widthExact).toBe(exact);
    return f[0]!;
  };

  it('T: bar 2.001 µm, stem 3.001 µm — minWidth the bar, maxWidth the junction disk', () => {
    const f = one([rect(0, 0, 20_001, 2_001), rect(9_000, 2_001, 12_001, 20_001)]);
    // Junction disk touches the bottom edge y = 0 and the concave corners (9000, 2001), (12001, 2001): centre
    // (10500.5, r) with 1500.5² + (2001 − r)² = r² → r = (1500.5² + 2001²) / 4002 dbu.
    const r = (1500.5 ** 2 + 2001 ** 2) / 4002;
    expect(Math.abs(f.maxWidthUm - 2 * r * DBU)).toBeLessThan(1e-9);
    expect(Math.abs(f.minWidthUm - 2.001)).toBeLessThan(1e-9); // bar plateau between y = 0 and y = 2001
  });

  it('L: arms 1.001 and 3.003 µm — minWidth the narrow arm, maxWidth the wide arm', () => {
    const f = one([rect(0, 0, 3_003, 30_001), rect(3_003, 0, 25_007, 1_001)]);
    expect(Math.abs(f.minWidthUm - 1.001)).toBeLessThan(1e-9); // narrow arm plateau
    expect(Math.abs(f.maxWidthUm - 3.003)).toBeLessThan(1e-9); // wide arm plateau (the corner adds no larger disk)
  });

  it('cross: bars 3.001 and 4.003 µm — minWidth 3.001, maxWidth the disk on the four concave corners', () => {
    const f = one([rect(0, 4_000, 20_001, 7_001), rect(8_000, 0, 12_003, 20_001)]);
    expect(Math.abs(f.minWidthUm - 3.001)).toBeLessThan(1e-9);
    expect(Math.abs(f.maxWidthUm - 2 * Math.hypot(2_001.5, 1_500.5) * DBU)).toBeLessThan(1e-9); // half-diagonal of the crossing
  });

  it('bottle: a 1.001 µm neck under a 1.401 µm body — the body plateau is the largest disk', () => {
    // Coarse lattice (step ≈ 0.22 µm): both arms get the same node distance (3 steps); seeds taken in node order
    // all sat in the neck and reported maxWidth 1.001. Analytical: body plateau 1401 dbu, neck plateau 1001 dbu.
    const f = one([rect(5_401, 1_801, 6_402, 6_001), rect(5_201, 6_001, 6_602, 12_401)]);
    expect(Math.abs(f.maxWidthUm - 1.401)).toBeLessThan(1e-9);
    expect(Math.abs(f.minWidthUm - 1.001)).toBeLessThan(1e-9);
  });

  it('comb: spine 2.001 µm, four teeth 1.003 µm — minWidth the teeth', () => {
    const rings: Ring[] = [rect(0, 0, 30_001, 2_001)];
    for (let k = 0; k < 4; k++) rings.push(rect(2_000 + 7_000 * k, 2_001, 3_003 + 7_000 * k, 12_007));
    const f = one(rings);
    expect(Math.abs(f.minWidthUm - 1.003)).toBeLessThan(1e-9); // tooth plateau
    // Largest disk: at a tooth root, touching the spine's bottom edge and the tooth's two concave corners:
    // centre (tooth middle, r), 501.5² + (2001 − r)² = r² → r = (501.5² + 2001²) / 4002 = 1063.3 dbu, more than the
    // spine half-width 1000.5, so the root disks are the largest (derived by hand).
    const r = (501.5 ** 2 + 2001 ** 2) / 4002;
    expect(Math.abs(f.maxWidthUm - 2 * r * DBU)).toBeLessThan(1e-9);
  });
});

describe('rotated L openings on the sampled lattice (narrowest centre)', () => {
  // An L of arms t1 (horizontal) and t2 (vertical), outer corner at the origin, arms 30 µm long, rotated about the
  // origin with vertices rounded to the 1 nm grid (so the walls converge by up to ~1e-4 rad). The narrower arm's
  // centre line is the narrowest self-centred centre: minWidth = min(t1, t2) (plane geometry, common practice, no
  // source). Rounding moves each wall by ≤ 0.71 nm, hence the 2 nm tolerance.
  const rotatedL = (t1: number, t2: number, deg: number) => {
    const c = Math.cos((deg * Math.PI) / 180), s = Math.sin((deg * Math.PI) / 180);
    const pts = [[0, 0], [30000, 0], [30000, t1], [t2, t1], [t2, 30000], [0, 30000]].map(([x, y]) => [Math.round(x! * c - y! * s), Math.round(x! * s + y! * c)]);
    const ring = pts.flat();
    const xs = pts.map((p) => p[0]!), ys = pts.map((p) => p[1]!);
    return featureWidths(Float64Array.from(ring), [[0, pts.length]], [Math.min(...xs), Math.min(...ys), Math.max(...xs), Math.max(...ys)], ringArea(ring), ringPerimeter(ring));
  };
  it('arms 3 and 4 µm at 5° and 40°: the 3 µm arm, not 4 µm (both arms tied on the lattice; the other start lands on a ridge whose walls converge by rounding)', () => {
    for (const deg of [5, 40]) expect(Math.abs(rotatedL(3000, 4000, deg).minWidth - 3000), `${deg}°`).toBeLessThan(2);
  });
  it('arms 1 and 4 µm at 4°: no lattice artefact beside the 1 µm arm’s corner (read 0.056 µm before)', () => {
    const w = rotatedL(1000, 4000, 4).minWidth;
    // Known limit: 0.843 µm today (a polish stalling beside the stub, above half its node's lattice radius); the
    // true value is 1 µm. Held here to what the artefact rule guarantees: at least half the arm, never above it.
    expect(w).toBeGreaterThan(500);
    expect(w).toBeLessThan(1002);
  });
});
