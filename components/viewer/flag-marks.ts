/**
 * How flags look on the canvas: shape and colour by severity, so they read without colour (shape) and with
 * common colour-vision deficiencies (Okabe & Ito's palette, 2008: vermillion, orange, sky blue).
 */
export type MarkSeverity = 'error' | 'warning' | 'info';

export type MarkShape = 'triangle' | 'diamond' | 'circle';

const STYLES: Record<MarkSeverity, { shape: MarkShape; color: number; css: string; size: number; rank: number; label: string }> = {
  error: { shape: 'triangle', color: 0xd55e00, css: '#d55e00', size: 8, rank: 0, label: 'error (triangle)' },
  warning: { shape: 'diamond', color: 0xe69f00, css: '#e69f00', size: 7, rank: 1, label: 'warning (diamond)' },
  info: { shape: 'circle', color: 0x56b4e9, css: '#56b4e9', size: 6, rank: 2, label: 'info (circle)' },
};

export const markStyle = (s: MarkSeverity) => STYLES[s] ?? STYLES.info;
