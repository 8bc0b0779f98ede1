/**
 * Largest inscribed disk of a convex polygon (Chebyshev centre): bisection on the radius r, each step clipping the
 * polygon's bounding box by the m half-planes moved inward by r (Sutherland–Hodgman). O(m²) per step, 60 steps
 * reach float64 resolution. For a convex opening every other disk centre lies in a larger disk, so the minimum
 * and maximum width (widths.ts definitions) are both 2r.
 */

/** True when the single ring turns one way only (collinear points allowed). */
export function isConvexRing(coords: ArrayLike<number>, s: number, e: number): boolean {
  let sign = 0;
  const n = e - s;
  for (let k = 0; k < n; k++) {
    const a = s + k, b = s + ((k + 1) % n), c = s + ((k + 2) % n);
    const cross =
      ((coords[2 * b] as number) - (coords[2 * a] as number)) * ((coords[2 * c + 1] as number) - (coords[2 * b + 1] as number)) -
      ((coords[2 * b + 1] as number) - (coords[2 * a + 1] as number)) * ((coords[2 * c] as number) - (coords[2 * b] as number));
    if (cross === 0) continue;
    const sg = cross > 0 ? 1 : -1;
    if (sign === 0) sign = sg;
    else if (sg !== sign) return false;
  }
  return sign !== 0;
}

/** Radius of the largest disk inside a convex ring (input units). */
export function convexInscribedRadius(coords: ArrayLike<number>, s: number, e: number): number {
  const n = e - s;
  // Inward unit normals and offsets: inside ⇔ nx·x + ny·y ≥ c (orientation-independent via the signed area).
  let area2 = 0;
  for (let k = 0; k < n; k++) {
    const a = s + k, b = s + ((k + 1) % n);
    area2 += (coords[2 * a] as number) * (coords[2 * b + 1] as number) - (coords[2 * b] as number) * (coords[2 * a + 1] as number);
  }
  const orient = area2 > 0 ? 1 : -1;
  const lines: number[] = [];
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (let k = 0; k < n; k++) {
    const a = s + k, b = s + ((k + 1) % n);
    const ax = coords[2 * a] as number, ay = coords[2 * a + 1] as number;
    const dx = (coords[2 * b] as number) - ax, dy = (coords[2 * b + 1] as number) - ay;
    const len = Math.hypot(dx, dy);
    x0 = Math.min(x0, ax); y0 = Math.min(y0, ay); x1 = Math.max(x1, ax); y1 = Math.max(y1, ay);
    if (len === 0) continue;
    const nx = (-dy / len) * orient, ny = (dx / len) * orient;
    lines.push(nx, ny, nx * ax + ny * ay);
  }
  // Sutherland–Hodgman between two preallocated buffers (this runs 60 times per hole).
  const cap = 4 * (4 + lines.length / 3) + 8; // a clip adds at most one vertex; margin for float noise
  let poly = new Float64Array(cap), next = new Float64Array(cap);
  const feasible = (r: number): boolean => {
    poly[0] = x0; poly[1] = y0; poly[2] = x1; poly[3] = y0; poly[4] = x1; poly[5] = y1; poly[6] = x0; poly[7] = y1;
    let len = 8;
    for (let l = 0; l < lines.length && len >= 6; l += 3) {
      const nx = lines[l] as number, ny = lines[l + 1] as number, c = (lines[l + 2] as number) + r;
      let o = 0;
      for (let k = 0; k < len; k += 2) {
        const px = poly[k] as number, py = poly[k + 1] as number;
        const k2 = k + 2 < len ? k + 2 : 0;
        const qx = poly[k2] as number, qy = poly[k2 + 1] as number;
        const dp = nx * px + ny * py - c, dq = nx * qx + ny * qy - c;
        if (dp >= 0) {
          next[o++] = px;
          next[o++] = py;
        }
        if ((dp >= 0) !== (dq >= 0)) {
          const t = dp / (dp - dq);
          next[o++] = px + t * (qx - px);
          next[o++] = py + t * (qy - py);
        }
      }
      const tmp = poly;
      poly = next;
      next = tmp;
      len = o;
    }
    return len >= 6;
  };
  let lo = 0, hi = Math.min(x1 - x0, y1 - y0) / 2 + 1e-9;
  for (let it = 0; it < 60 && hi - lo > 1e-12 * hi; it++) {
    const mid = (lo + hi) / 2;
    if (feasible(mid)) lo = mid;
    else hi = mid;
  }
  return lo;
}
