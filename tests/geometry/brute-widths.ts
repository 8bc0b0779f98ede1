/**
 * Brute-force widths of a Manhattan opening with integer vertices, for checking the compressed lattice
 * (lib/geometry/manhattan-*.ts) in tests and benches. Independent of it: a uniform grid of spacing 1/2 dbu over the
 * bbox (every perpendicular foot and vertex of integer edges is a grid point, so the grid distance transform is the
 * exact distance there), D by the dense transform of distance.ts (checked against scipy in widths.test.ts), and the
 * self-centred condition checked directly: a grid point that is a local maximum of D among its 8 neighbours and that
 * no grid point with a larger D covers (|b − c| ≤ D(b)). Cost grows with (2·bbox)², so shapes are kept small (a few
 * hundred dbu).
 *
 * Exactness: D is exact at grid points. Candidates that are not true local maxima of D (probed in 64 directions at
 * 0.01–0.2 dbu on the exact distance to the edges) are skipped: such a point is never self-centred. maxWidth is
 * flagged exact when its grid point is a true local maximum and no search from the other grid maxima beats it (else
 * it is the refined off-grid maximum, good to the compass search's convergence); minWidth is exact unless its point is covered only by disks centred between grid points (a coverage margin
 * under a grid step).
 */
import { squaredDistanceTransform } from '@/lib/geometry';

export interface BruteWidths {
  minWidth: number;
  maxWidth: number;
  maxExact: boolean;
}

/** Where the last bruteWidths found its narrowest self-centred point (debugging aid). */
export const lastMinAt: [number, number] = [0, 0];

/** Exact distance from (x, y) to the segments of the rings (flat x,y lists). */
function edgeDistance(rings: number[][], x: number, y: number): number {
  let best = Infinity;
  for (const r of rings) {
    const n = r.length / 2;
    for (let k = 0; k < n; k++) {
      const ax = r[2 * k]!, ay = r[2 * k + 1]!, bx = r[(2 * k + 2) % r.length]!, by = r[(2 * k + 3) % r.length]!;
      const dx = bx - ax, dy = by - ay, l2 = dx * dx + dy * dy;
      let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
      t = Math.max(0, Math.min(1, t));
      best = Math.min(best, Math.hypot(x - ax - t * dx, y - ay - t * dy));
    }
  }
  return best;
}

function isTrueLocalMax(rings: number[][], x: number, y: number, d: number): boolean {
  for (const rad of [0.01, 0.05, 0.2]) {
    for (let k = 0; k < 64; k++) {
      const a = (k * Math.PI) / 32;
      if (edgeDistance(rings, x + rad * Math.cos(a), y + rad * Math.sin(a)) > d + 1e-9) return false;
    }
  }
  return true;
}

/** Nonzero winding at (x, y) (vertical edges crossing the ray to the right). */
function insideAt(rings: number[][], x: number, y: number): boolean {
  let w = 0;
  for (const r of rings) {
    for (let k = 0; k < r.length; k += 2) {
      const ax = r[k]!, ay = r[k + 1]!, bx = r[(k + 2) % r.length]!, by = r[(k + 3) % r.length]!;
      if (ax === bx && ax > x && Math.min(ay, by) < y && y < Math.max(ay, by)) w += by > ay ? 1 : -1;
    }
  }
  return w !== 0;
}

/**
 * @param rings rings of one opening (nonzero fill, integer dbu), bbox lower-left at (0, 0)
 */
export function bruteWidths(rings: number[][], bw: number, bh: number): BruteWidths {
  const nx = 2 * bw + 1, ny = 2 * bh + 1;
  // Cell (i, j) = [i/2, (i+1)/2] × [j/2, (j+1)/2] inside by the nonzero winding at its centre (vertical edges only
  // cross a horizontal ray).
  const cin = new Uint8Array((nx - 1) * (ny - 1));
  for (let j = 0; j + 1 < ny; j++) {
    const y = (j + 0.5) / 2;
    const cross: [number, number][] = [];
    for (const r of rings) {
      for (let k = 0; k < r.length; k += 2) {
        const ax = r[k]!, ay = r[k + 1]!, bx = r[(k + 2) % r.length]!, by = r[(k + 3) % r.length]!;
        if (ax === bx && Math.min(ay, by) < y && y < Math.max(ay, by)) cross.push([ax, by > ay ? 1 : -1]);
      }
    }
    cross.sort((p, q) => p[0] - q[0]);
    for (let i = 0; i + 1 < nx; i++) {
      const x = (i + 0.5) / 2;
      let w = 0;
      for (const [cx, d] of cross) if (cx < x) w += d;
      cin[j * (nx - 1) + i] = w !== 0 ? 1 : 0;
    }
  }
  const inside = new Uint8Array(nx * ny);
  for (let j = 1; j + 1 < ny; j++) {
    for (let i = 1; i + 1 < nx; i++) {
      const c = (a: number, b: number) => cin[b * (nx - 1) + a]!;
      if (c(i - 1, j - 1) && c(i, j - 1) && c(i - 1, j) && c(i, j)) inside[j * nx + i] = 1;
    }
  }
  const d2 = squaredDistanceTransform(inside, nx, ny);
  const D = new Float64Array(nx * ny);
  for (let q = 0; q < D.length; q++) D[q] = Math.sqrt(d2[q]!) / 2;
  // Largest D.
  let qmax = 0;
  for (let q = 0; q < D.length; q++) if (D[q]! > D[qmax]!) qmax = q;
  const xy = (q: number) => [(q % nx) / 2, Math.floor(q / nx) / 2] as const;
  const maxD = D[qmax]!;
  const [mx, my] = xy(qmax);
  // Candidates: 8-neighbour local maxima; coverers: points whose disk is not inside a neighbour's.
  const cands: number[] = [], cover: number[] = [];
  for (let j = 1; j + 1 < ny; j++) {
    for (let i = 1; i + 1 < nx; i++) {
      const q = j * nx + i, d = D[q]!;
      if (d === 0) continue;
      let localMax = true, maximal = true;
      for (let dj = -1; dj <= 1; dj++) {
        for (let di = -1; di <= 1; di++) {
          if (!di && !dj) continue;
          const e = D[q + dj * nx + di]!;
          if (e > d) localMax = false;
          if (e >= d + Math.hypot(di, dj) / 2 - 1e-12) maximal = false;
        }
      }
      if (localMax) cands.push(q);
      if (maximal) cover.push(q);
    }
  }
  // The largest disk may sit between grid points (a medial-axis vertex at reflex corners), < 0.36 dbu from one:
  // every grid local maximum within that of the best is refined by a 64-direction compass search on the exact
  // distance (halving steps down to 1e-10 dbu).
  const refineAt = (x: number, y: number, d: number): [number, number, number] => {
    for (let h = 0.5; h > 1e-10; ) {
      let moved = false;
      for (let k = 0; k < 64 && !moved; k++) {
        const px = x + h * Math.cos((k * Math.PI) / 32), py = y + h * Math.sin((k * Math.PI) / 32);
        const e = h < d ? edgeDistance(rings, px, py) : 0;
        if (e > d) {
          x = px;
          y = py;
          d = e;
          moved = true;
        }
      }
      if (!moved) h /= 2;
    }
    return [x, y, d];
  };
  let maxRefined = maxD;
  for (const c of cands) if (D[c]! >= maxD - 0.36) maxRefined = Math.max(maxRefined, refineAt(...xy(c), D[c]!)[2]);
  cands.sort((a, b) => D[a]! - D[b]!);
  cover.sort((a, b) => D[b]! - D[a]!);
  const covered = (cx: number, cy: number, dc: number): boolean => {
    for (const b of cover) {
      const db = D[b]!;
      if (db <= dc + 1e-12) return false;
      const [bx, by] = xy(b);
      if ((bx - cx) ** 2 + (by - cy) ** 2 <= db * db + 1e-9) return true;
    }
    return false;
  };
  // Disks only a little larger than D(c) can cover c from centres in a sliver the grid misses (beyond the mouth of a
  // stub shorter than its width, say): before a point is accepted, centres on a 1/20 dbu grid within reach are tried.
  const fineCovered = (cx: number, cy: number, dc: number): boolean => {
    const R = maxRefined, s = 0.05;
    let bx = 0, by = 0, bm = -Infinity, bd = 0;
    for (let py = Math.max(0, cy - R); py <= Math.min(bh, cy + R); py += s) {
      for (let px = Math.max(0, cx - R); px <= Math.min(bw, cx + R); px += s) {
        const e2 = (px - cx) ** 2 + (py - cy) ** 2;
        if (e2 > R * R) continue;
        const d = edgeDistance(rings, px, py);
        if (!(d > dc + 1e-9) || !insideAt(rings, px, py)) continue;
        if (e2 <= d * d) return true;
        if (d - Math.sqrt(e2) > bm) [bx, by, bm, bd] = [px, py, d - Math.sqrt(e2), d];
      }
    }
    // The sliver can be thinner than that grid: the best point's margin D(p) − |p − c| climbed by compass search over
    // centres with D(p) > D(c) (64 directions, moves shorter than D(p) so they stay inside).
    if (bm === -Infinity) return false;
    for (let h = s; h > 1e-9; ) {
      let moved = false;
      for (let k = 0; k < 64 && !moved && h < bd; k++) {
        const px = bx + h * Math.cos((k * Math.PI) / 32), py = by + h * Math.sin((k * Math.PI) / 32);
        const d = edgeDistance(rings, px, py);
        const m = d - Math.hypot(px - cx, py - cy);
        if (d > dc + 1e-9 && m > bm) {
          [bx, by, bm, bd] = [px, py, m, d];
          moved = true;
        }
      }
      if (bm >= 0) return true;
      if (!moved) h /= 2;
    }
    return false;
  };
  // Grid candidates in increasing D. One that is a true local maximum and uncovered is self-centred; one that is not
  // a local maximum of D is never self-centred (a point a little uphill covers it), but the maximum it climbs to
  // (between grid points) may be.
  let minD = maxRefined;
  for (const c of cands) {
    const dc = D[c]!;
    if (dc >= minD) break;
    const [cx, cy] = xy(c);
    if (covered(cx, cy, dc)) continue;
    if (isTrueLocalMax(rings, cx, cy, dc)) {
      if (fineCovered(cx, cy, dc)) continue;
      minD = dc;
      lastMinAt[0] = cx;
      lastMinAt[1] = cy;
      break;
    }
    const [vx, vy, dv] = refineAt(cx, cy, dc);
    if (dv < minD && !covered(vx, vy, dv) && !fineCovered(vx, vy, dv)) {
      minD = dv;
      lastMinAt[0] = vx;
      lastMinAt[1] = vy;
    }
  }
  return { minWidth: 2 * minD, maxWidth: 2 * maxRefined, maxExact: isTrueLocalMax(rings, mx, my, maxD) && maxRefined === maxD };
}
