/**
 * How flags look on the canvas: shape and colour by severity, so they read without colour (shape) and with
 * common colour-vision deficiencies (Okabe & Ito's palette, 2008: vermillion, orange, sky blue).
 */
export type MarkFlag = {
  id: string;
  key: string;
  kind: string;
  severity: 'error' | 'warning' | 'info';
  xUm: number;
  yUm: number;
  bboxUm: [number, number, number, number];
  message: string;
  measured: number;
  limit: number;
  unit: string;
};

export type MarkShape = 'triangle' | 'diamond' | 'circle';

const STYLES: Record<MarkFlag['severity'], { shape: MarkShape; color: number; css: string; size: number; rank: number; label: string }> = {
  error: { shape: 'triangle', color: 0xd55e00, css: '#d55e00', size: 8, rank: 0, label: 'error (triangle)' },
  warning: { shape: 'diamond', color: 0xe69f00, css: '#e69f00', size: 7, rank: 1, label: 'warning (diamond)' },
  info: { shape: 'circle', color: 0x56b4e9, css: '#56b4e9', size: 6, rank: 2, label: 'info (circle)' },
};

export const markStyle = (s: MarkFlag['severity']) => STYLES[s] ?? STYLES.info;

/** Nearest mark within `radiusPx` of screen point (sx, sy), given a layout→screen map. */
export function hitMark(flags: MarkFlag[], toScreen: (x: number, y: number) => [number, number], sx: number, sy: number, radiusPx = 10): MarkFlag | null {
  let best: MarkFlag | null = null;
  let bestD = radiusPx * radiusPx;
  for (const f of flags) {
    const [x, y] = toScreen(f.xUm, f.yUm);
    const d = (x - sx) ** 2 + (y - sy) ** 2;
    if (d <= bestD || (d === bestD && best && markStyle(f.severity).rank < markStyle(best.severity).rank)) {
      bestD = d;
      best = f;
    }
  }
  return best;
}
