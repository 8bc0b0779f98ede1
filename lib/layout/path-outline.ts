/**
 * Outline of a GDSII PATH as one polygon ring (dbu, in the same frame as the centre line).
 *
 * Conventions (Calma GDSII Stream Format Manual 6.0, PATHTYPE):
 * - type 0: flush ends; type 2: ends extended by half the width; type 4: ends extended by BGNEXTN / ENDEXTN
 *   (may be negative); type 1: round ends, a half disc of radius half-width centred on each end point.
 * - Joins are mitred: each side of the outline is the offset line of the centre line, and consecutive offset
 *   segments meet at their intersection. Miter limit (our choice, the manual gives none): when the miter point
 *   would lie farther than MITER_LIMIT × half-width from the vertex (turns sharper than about 168.5°), the join is
 *   bevelled instead, so a near-reversal cannot throw a spike across the layout.
 * - Round-end tolerance: the half disc is replaced by an inscribed polygon whose chords deviate from the circle by
 *   at most max(0.25 dbu, 0.2 % of the half-width) (an even number of chords, at most 256, per end, so the
 *   point straight ahead of the end point is a vertex and the bounding box is exact); snapping vertices to the dbu grid
 *   later adds ≤ 0.71 dbu. The outline's area is therefore slightly below the ideal πr²/2 per end.
 * - Repeated consecutive points are dropped. A path that collapses to one point or has zero width yields no
 *   polygon (it has no area).
 */

export const MITER_LIMIT = 10;
const MAX_ARC_SEGMENTS = 256;

/** Number of chords used for one round end of half-width `hw` (dbu). */
export function roundEndSegments(hw: number): number {
  if (hw <= 0) return 0;
  const tol = Math.max(0.25, 0.002 * hw);
  if (tol >= hw) return 2;
  const step = 2 * Math.acos(1 - tol / hw);
  // Even, so the point straight ahead of the end is a vertex and the bounding box is exact.
  const n = Math.min(MAX_ARC_SEGMENTS, Math.max(2, Math.ceil(Math.PI / step)));
  return n + (n & 1);
}

export interface PathSpec {
  halfWidth: number;
  pathtype: number;
  /** Extension at the start / end for type 4 (dbu); ignored for other types. */
  bgnExt: number;
  endExt: number;
}

/**
 * Append the outline of centre line `xy` (interleaved, `n` points) to `out` (interleaved). Returns the number of
 * points appended (0 when the path has no area).
 */
export function pathOutline(xy: ArrayLike<number>, n: number, spec: PathSpec, out: number[]): number {
  const hw = spec.halfWidth;
  // Drop repeated points.
  const px: number[] = [];
  const py: number[] = [];
  for (let i = 0; i < n; i++) {
    const x = xy[2 * i] as number;
    const y = xy[2 * i + 1] as number;
    const m = px.length;
    if (m > 0 && px[m - 1] === x && py[m - 1] === y) continue;
    px.push(x);
    py.push(y);
  }
  const m = px.length;
  if (m < 2 || !(hw > 0)) return 0;
  const ux: number[] = [];
  const uy: number[] = [];
  for (let i = 0; i + 1 < m; i++) {
    const dx = (px[i + 1] as number) - (px[i] as number);
    const dy = (py[i + 1] as number) - (py[i] as number);
    const len = Math.hypot(dx, dy);
    ux.push(dx / len);
    uy.push(dy / len);
  }
  let e0 = 0;
  let e1 = 0;
  if (spec.pathtype === 2) e0 = e1 = hw;
  else if (spec.pathtype === 4) {
    e0 = spec.bgnExt;
    e1 = spec.endExt;
  }
  const sx = (px[0] as number) - (ux[0] as number) * e0;
  const sy = (py[0] as number) - (uy[0] as number) * e0;
  const ex = (px[m - 1] as number) + (ux[m - 2] as number) * e1;
  const ey = (py[m - 1] as number) + (uy[m - 2] as number) * e1;
  const start = out.length;
  const round = spec.pathtype === 1;
  const segs = round ? roundEndSegments(hw) : 0;

  // One side of the outline (side = +1 left, −1 right), walking the points in the given order.
  const side = (sign: number, forward: boolean) => {
    for (let k = 0; k < m; k++) {
      const i = forward ? k : m - 1 - k;
      const x = i === 0 ? sx : i === m - 1 ? ex : (px[i] as number);
      const y = i === 0 ? sy : i === m - 1 ? ey : (py[i] as number);
      if (i === 0 || i === m - 1) {
        const s = i === 0 ? 0 : m - 2;
        out.push(x - sign * (uy[s] as number) * hw, y + sign * (ux[s] as number) * hw);
        continue;
      }
      // Normals of the incoming and outgoing segments, on this side.
      const n1x = -sign * (uy[i - 1] as number);
      const n1y = sign * (ux[i - 1] as number);
      const n2x = -sign * (uy[i] as number);
      const n2y = sign * (ux[i] as number);
      const c = 1 + n1x * n2x + n1y * n2y;
      const ratio = c > 1e-12 ? Math.sqrt(2 / c) : Infinity;
      if (ratio <= MITER_LIMIT) {
        out.push(x + (hw * (n1x + n2x)) / c, y + (hw * (n1y + n2y)) / c);
      } else if (forward) {
        out.push(x + hw * n1x, y + hw * n1y, x + hw * n2x, y + hw * n2y);
      } else {
        out.push(x + hw * n2x, y + hw * n2y, x + hw * n1x, y + hw * n1y);
      }
    }
  };
  // Half disc around (cx, cy) from angle a0 clockwise by π, interior chord points only.
  const arc = (cx: number, cy: number, a0: number) => {
    for (let k = 1; k < segs; k++) {
      const a = a0 - (Math.PI * k) / segs;
      out.push(cx + hw * Math.cos(a), cy + hw * Math.sin(a));
    }
  };
  side(1, true);
  if (round) arc(ex, ey, Math.atan2(ux[m - 2] as number, -(uy[m - 2] as number)));
  side(-1, false);
  if (round) arc(sx, sy, Math.atan2(-(ux[0] as number), uy[0] as number));
  return (out.length - start) / 2;
}

/** Point count `pathOutline` will produce for these inputs (used to size buffers before flattening). */
export function pathOutlinePointCount(xy: ArrayLike<number>, n: number, spec: PathSpec): number {
  const tmp: number[] = [];
  return pathOutline(xy, n, spec, tmp);
}
