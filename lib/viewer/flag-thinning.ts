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

export function thinMarks(v: View, x: ArrayLike<number>, y: ArrayLike<number>, severity: ArrayLike<number>, count: number, selected = -1): ThinnedMarks {
  const [ox, oy] = layoutToScreen(v, 0, 0);
  const s = v.scale;
  const px = new Float32Array(count);
  const py = new Float32Array(count);
  const inside = new Uint8Array(count);
  let inView = 0;
  for (let i = 0; i < count; i++) {
    // layoutToScreen is affine with y flipped: screen = origin + scale · (x, −y).
    const a = ox + s * (x[i] as number);
    const b = oy - s * (y[i] as number);
    px[i] = a;
    py[i] = b;
    if (a > -MARGIN_PX && b > -MARGIN_PX && a < v.width + MARGIN_PX && b < v.height + MARGIN_PX) {
      inside[i] = 1;
      inView++;
    }
  }
  const cell = cellPxFor(inView);
  const gx = Math.ceil((v.width + 2 * MARGIN_PX) / cell) + 1;
  const gy = Math.ceil((v.height + 2 * MARGIN_PX) / cell) + 1;
  const owner = new Int32Array(gx * gy).fill(-1);
  const drawn: number[] = [];
  const merged: number[] = [];
  const place = (i: number, force: boolean) => {
    const c = Math.floor((px[i]! + MARGIN_PX) / cell) + gx * Math.floor((py[i]! + MARGIN_PX) / cell);
    const o = owner[c]!;
    if (o >= 0 && !force) {
      merged[o]! += 1;
      return;
    }
    if (o < 0) owner[c] = drawn.length;
    drawn.push(i);
    merged.push(1);
  };
  if (selected >= 0 && selected < count && inside[selected]) place(selected, true);
  // Severity 0 (error) first, then warnings, then info; within one, input (rank) order.
  for (let sev = 0; sev <= 2; sev++) {
    for (let i = 0; i < count; i++) {
      if (!inside[i] || i === selected) continue;
      const si = Math.min(2, severity[i] as number);
      if (si === sev) place(i, false);
    }
  }
  const out: ThinnedMarks = { drawn: Uint32Array.from(drawn), sx: new Float32Array(drawn.length), sy: new Float32Array(drawn.length), merged: Uint32Array.from(merged), inView };
  drawn.forEach((i, k) => {
    out.sx[k] = px[i]!;
    out.sy[k] = py[i]!;
  });
  return out;
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
