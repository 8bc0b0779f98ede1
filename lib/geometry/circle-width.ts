/**
 * Polygonised circles. Layout tools draw a round via or hole as an N-gon whose vertices lie on the circle, snapped
 * to the drawing grid. Its largest inscribed disk has the apothem R·cos(π/N), so a 5 µm via drawn as a 32-gon
 * would measure 4.976 µm and fail a 5 µm minimum-width rule it was drawn to meet. Such a polygon is measured as
 * the diameter of the circle through its vertices instead, within the drawing grid tolerance.
 *
 * Recognised (all must hold): one convex ring with at least MIN_CIRCLE_VERTICES corners (vertices on a straight
 * edge, e.g. added by tile cuts, are ignored), every corner's distance from the corners' centroid within
 * √2·g of their mean (g = the drawing grid: gcd of the vertex coordinates, at least 1 dbu; snapping one vertex
 * moves it by at most √2/2·g), and no central angle between neighbouring corners above 1.5× the mean (a regular
 * polygonisation, not a rounded slot). The diameter 2 × mean corner radius is rounded to the grid. Octagons and other coarse polygons are below the vertex minimum and keep
 * their inscribed width: at N = 8 the two readings differ by 8 %, and an octagonal via is usually meant as drawn.
 */

/** Fewest corners for a convex ring to count as a polygonised circle (cos(π/16) = 0.981). */
export const MIN_CIRCLE_VERTICES = 16;

function gcd(a: number, b: number): number {
  a = Math.abs(a);
  b = Math.abs(b);
  while (b > 1e-9) [a, b] = [b, a % b];
  return a;
}

/**
 * If ring coords[s..e) (point indices, any orientation) is a polygonised circle, its diameter and the
 * tolerance (both in input units); otherwise null.
 */
export function polygonisedCircle(coords: ArrayLike<number>, s: number, e: number): { diameter: number; tolerance: number } | null {
  const n = e - s;
  if (n < MIN_CIRCLE_VERTICES) return null;
  // Corners: drop vertices whose turn is far below the mean turn 2π/n (points on an edge, e.g. tile cuts).
  const meanTurn = (2 * Math.PI) / n;
  const cx: number[] = [];
  const cy: number[] = [];
  let g = 0;
  const x0 = coords[2 * s] as number, y0 = coords[2 * s + 1] as number;
  for (let k = 0; k < n; k++) {
    const a = s + ((k + n - 1) % n), b = s + k, c = s + ((k + 1) % n);
    const bx = coords[2 * b] as number, by = coords[2 * b + 1] as number;
    const ux = bx - (coords[2 * a] as number), uy = by - (coords[2 * a + 1] as number);
    const vx = (coords[2 * c] as number) - bx, vy = (coords[2 * c + 1] as number) - by;
    const turn = Math.abs(Math.atan2(ux * vy - uy * vx, ux * vx + uy * vy));
    g = gcd(gcd(g, bx - x0), by - y0);
    if (turn < 0.2 * meanTurn) continue;
    cx.push(bx);
    cy.push(by);
  }
  const m = cx.length;
  if (m < MIN_CIRCLE_VERTICES) return null;
  let mx = 0, my = 0;
  for (let k = 0; k < m; k++) {
    mx += cx[k] as number;
    my += cy[k] as number;
  }
  mx /= m;
  my /= m;
  const r = new Float64Array(m);
  let rMean = 0;
  for (let k = 0; k < m; k++) rMean += (r[k] = Math.hypot((cx[k] as number) - mx, (cy[k] as number) - my));
  rMean /= m;
  const grid = Math.max(1, g);
  const tolerance = Math.SQRT2 * grid;
  for (let k = 0; k < m; k++) if (Math.abs((r[k] as number) - rMean) > tolerance) return null;
  // Corners in angular order one way round (a ring with all corners on a circle is then convex) and regularly
  // spaced: the largest central angle between neighbouring corners at most 1.5× the mean.
  let maxGap = 0;
  let sign = 0;
  for (let k = 0; k < m; k++) {
    const j = (k + 1) % m;
    const a1 = Math.atan2((cy[k] as number) - my, (cx[k] as number) - mx);
    const a2 = Math.atan2((cy[j] as number) - my, (cx[j] as number) - mx);
    let d = a2 - a1;
    if (d > Math.PI) d -= 2 * Math.PI;
    if (d < -Math.PI) d += 2 * Math.PI;
    const sg = d > 0 ? 1 : -1;
    if (sign === 0) sign = sg;
    else if (sg !== sign) return null;
    if (Math.abs(d) > maxGap) maxGap = Math.abs(d);
  }
  if (maxGap > (1.5 * 2 * Math.PI) / m) return null;
  // Drawn diameters lie on the drawing grid; the mean radius of snapped corners is off by a fraction of a grid step,
  // which must not turn a 5 µm via into 4.9997 µm against a 5 µm rule.
  return { diameter: grid * Math.round((2 * rMean) / grid), tolerance: 2 * tolerance };
}
