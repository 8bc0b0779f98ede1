/**
 * Which flag marks to draw in a view: one mark per screen cell, the most severe (then best-ranked) winning, so a
 * dense cluster stays readable. Cells are screen pixels, so zooming in splits a cluster: two flags whose
 * positions differ by d µm fall in different cells once d · scale exceeds two cells, hence every flag with its
 * own position is drawn at some zoom (the viewer's zoom limit is 1e4 px/µm). Flags at exactly one position share
 * one mark; `merged` counts them so the tooltip can say so. The selected flag is always drawn.
 */
import { layoutToScreen, type View } from './view-transform';

/** Mark cell size in px: finer while few flags are in view, coarser where hundreds would bury the map. */
export const cellPxFor = (inView: number) => (inView > 300 ? 22 : 9);
const MARGIN_PX = 20;

export interface ThinnedMarks {
  /** Flag indices drawn, most severe first. */
  drawn: Uint32Array;
  /** Screen position of each drawn mark. */
  sx: Float32Array;
  sy: Float32Array;
  /** How many flags in view each drawn mark stands for (1 = only itself). */
  merged: Uint32Array;
  /** Flags inside the view (with a small margin). */
  inView: number;
}

/** Flag indices by severity (errors first), rank order kept within one: a counting sort, done once per flag set. */
export function severityOrder(severity: ArrayLike<number>, count: number): Uint32Array {
  const start = [0, 0, 0, 0];
  for (let i = 0; i < count; i++) start[Math.min(2, severity[i] as number) + 1]! += 1;
  start[2]! += start[1]!;
  start[3]! += start[2]!;
  const out = new Uint32Array(count);
  for (let i = 0; i < count; i++) out[start[Math.min(2, severity[i] as number)]!++] = i;
  return out;
}

/**
 * Marks for view `v`. `order` (severityOrder of the same flags) saves its sort on every call; the scene keeps it
 * per flag set, so a view change costs two passes of arithmetic over the flags and no allocation per flag.
 */
export function thinMarks(v: View, x: ArrayLike<number>, y: ArrayLike<number>, severity: ArrayLike<number>, count: number, selected = -1, order?: Uint32Array): ThinnedMarks {
  const [ox, oy] = layoutToScreen(v, 0, 0);
  const s = v.scale;
  const x0 = -MARGIN_PX;
  const y0 = -MARGIN_PX;
  const x1 = v.width + MARGIN_PX;
  const y1 = v.height + MARGIN_PX;
  // layoutToScreen is affine with y flipped: screen = origin + scale · (x, −y).
  let inView = 0;
  for (let i = 0; i < count; i++) {
    const a = ox + s * (x[i] as number);
    const b = oy - s * (y[i] as number);
    if (a > x0 && b > y0 && a < x1 && b < y1) inView++;
  }
  const cell = cellPxFor(inView);
  const gx = Math.ceil((v.width + 2 * MARGIN_PX) / cell) + 1;
  const gy = Math.ceil((v.height + 2 * MARGIN_PX) / cell) + 1;
  const owner = new Int32Array(gx * gy).fill(-1);
  const drawn: number[] = [];
  const merged: number[] = [];
  const sx: number[] = [];
  const sy: number[] = [];
  const place = (i: number, force: boolean) => {
    const a = ox + s * (x[i] as number);
    const b = oy - s * (y[i] as number);
    if (!(a > x0 && b > y0 && a < x1 && b < y1)) return;
    const c = Math.floor((a - x0) / cell) + gx * Math.floor((b - y0) / cell);
    const o = owner[c]!;
    if (o >= 0 && !force) {
      merged[o]! += 1;
      return;
    }
    if (o < 0) owner[c] = drawn.length;
    drawn.push(i);
    merged.push(1);
    sx.push(a);
    sy.push(b);
  };
  if (selected >= 0 && selected < count) place(selected, true);
  // Errors first, then warnings, then info; within one, input (rank) order.
  const ord = order && order.length === count ? order : severityOrder(severity, count);
  for (let k = 0; k < count; k++) {
    const i = ord[k]!;
    if (i !== selected) place(i, false);
  }
  return { drawn: Uint32Array.from(drawn), sx: Float32Array.from(sx), sy: Float32Array.from(sy), merged: Uint32Array.from(merged), inView };
}

/** Drawn mark nearest to (sx, sy) within `radiusPx`, as its slot in `t.drawn`; −1 when none. Earlier slots (more severe) win ties. */
export function hitThinned(t: ThinnedMarks, sx: number, sy: number, radiusPx = 10): number {
  let best = -1;
  let bestD = radiusPx * radiusPx;
  for (let k = 0; k < t.drawn.length; k++) {
    const d = (t.sx[k]! - sx) ** 2 + (t.sy[k]! - sy) ** 2;
    if (d < bestD || (best < 0 && d === bestD)) {
      bestD = d;
      best = k;
    }
  }
  return best;
}
