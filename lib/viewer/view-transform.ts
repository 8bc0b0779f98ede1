/**
 * Screen ↔ layout transform of the canvas viewer. Layout frame: µm, +x right, +y up (as lib/geometry). Screen
 * frame: CSS pixels from the canvas's top-left corner, +y down. A view is the layout point shown at the canvas
 * centre and a scale in px/µm; everything else follows from it, so pan/zoom/fit are small pure functions.
 */

export interface View {
  /** Layout point at the canvas centre, µm. */
  cx: number;
  cy: number;
  /** CSS pixels per µm (> 0). */
  scale: number;
  /** Canvas size, CSS pixels. */
  width: number;
  height: number;
}

export type BoxUm = [number, number, number, number];

export const MIN_SCALE = 1e-6;
export const MAX_SCALE = 1e4;

export function screenToLayout(v: View, sx: number, sy: number): [number, number] {
  return [v.cx + (sx - v.width / 2) / v.scale, v.cy - (sy - v.height / 2) / v.scale];
}

export function layoutToScreen(v: View, x: number, y: number): [number, number] {
  return [v.width / 2 + (x - v.cx) * v.scale, v.height / 2 - (y - v.cy) * v.scale];
}

/**
 * The affine map layout → screen as pixi/canvas expect it (a, b, c, d, tx, ty): screen = (a·x + c·y + tx, b·x + d·y + ty).
 * The y flip lives here so the scene can be built in layout µm.
 */
export function worldMatrix(v: View): { a: number; b: number; c: number; d: number; tx: number; ty: number } {
  return { a: v.scale, b: 0, c: 0, d: -v.scale, tx: v.width / 2 - v.cx * v.scale, ty: v.height / 2 + v.cy * v.scale };
}

/** Layout box in view [x0, y0, x1, y1]. */
export function visibleBox(v: View): BoxUm {
  const hw = v.width / 2 / v.scale;
  const hh = v.height / 2 / v.scale;
  return [v.cx - hw, v.cy - hh, v.cx + hw, v.cy + hh];
}

const clampScale = (s: number) => Math.min(MAX_SCALE, Math.max(MIN_SCALE, s));

/** Zoom by `factor` keeping the layout point under screen point (sx, sy) where it is. */
export function zoomAbout(v: View, sx: number, sy: number, factor: number): View {
  const scale = clampScale(v.scale * factor);
  const [x, y] = screenToLayout(v, sx, sy);
  // Solve for the centre that puts (x, y) back under (sx, sy) at the new scale.
  return { ...v, scale, cx: x - (sx - v.width / 2) / scale, cy: y + (sy - v.height / 2) / scale };
}

/** Move the content by (dx, dy) screen pixels (a drag). */
export function panBy(v: View, dx: number, dy: number): View {
  return { ...v, cx: v.cx - dx / v.scale, cy: v.cy + dy / v.scale };
}

/** The view that shows `box` whole, centred, with `marginPx` free on each side. */
export function fitView(box: BoxUm, width: number, height: number, marginPx = 16): View {
  const w = Math.max(box[2] - box[0], 1e-9);
  const h = Math.max(box[3] - box[1], 1e-9);
  const scale = clampScale(Math.min(Math.max(width - 2 * marginPx, 1) / w, Math.max(height - 2 * marginPx, 1) / h));
  return { cx: (box[0] + box[2]) / 2, cy: (box[1] + box[3]) / 2, scale, width, height };
}

/** Centre on (x, y), zooming in (never out) so that `box` spans at most about a third of the canvas. */
export function focusOn(v: View, x: number, y: number, box?: BoxUm): View {
  let scale = v.scale;
  if (box) {
    const w = Math.max(box[2] - box[0], 1e-9);
    const h = Math.max(box[3] - box[1], 1e-9);
    const wanted = Math.min(v.width / 3 / w, v.height / 3 / h);
    if (wanted > scale) scale = clampScale(wanted);
  }
  return { ...v, cx: x, cy: y, scale };
}

/**
 * Scale bar: the largest 1-2-5 × 10ⁿ µm length that fits in `maxPx` pixels. Label in nm, µm or mm.
 * @example scaleBar(0.5, 120) // { um: 200, px: 100, label: '200 µm' }
 */
export function scaleBar(scale: number, maxPx: number): { um: number; px: number; label: string } {
  const maxUm = maxPx / scale;
  const p = Math.pow(10, Math.floor(Math.log10(maxUm)));
  let um = p;
  for (const m of [5, 2, 1]) {
    if (m * p <= maxUm) {
      um = m * p;
      break;
    }
  }
  return { um, px: um * scale, label: formatLength(um) };
}

export function formatLength(um: number): string {
  const r = (x: number) => String(Number(x.toPrecision(6)));
  if (um >= 1000) return `${r(um / 1000)} mm`;
  if (um < 1) return `${r(um * 1000)} nm`;
  return `${r(um)} µm`;
}
