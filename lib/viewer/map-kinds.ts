/** What each result map means on screen: label, unit text and the default colour-scale limits. */
import type { ScaleName } from './color-scale';

export type MapKindInfo = { label: string; unit: string; scale: ScaleName; fixed?: [number, number]; note?: string };

export const MAP_KINDS: Record<string, MapKindInfo> = {
  coverage: { label: 'Open area per pixel', unit: 'fraction', scale: 'viridis', fixed: [0, 1] },
  'window-density': { label: 'Window density', unit: 'fraction', scale: 'viridis', fixed: [0, 1] },
  'effective-density': { label: 'Effective density', unit: 'fraction', scale: 'viridis' },
  'local-width': { label: 'Local width', unit: 'µm', scale: 'viridis' },
  'aspect-ratio': { label: 'Aspect ratio', unit: 'depth / width', scale: 'viridis' },
  'predicted-depth': { label: 'Predicted depth', unit: 'µm', scale: 'viridis' },
  'depth-margin': { label: 'Depth margin', unit: 'µm (depth − target)', scale: 'cividis', note: 'negative = short of the target' },
  'depth-uncertainty': { label: 'Depth uncertainty (1 σ)', unit: 'µm', scale: 'viridis', note: "from the calibration fit's parameter covariance" },
  risk: { label: 'Risk', unit: 'score (1 = at a limit)', scale: 'magma', fixed: [0, 2], note: '≥ 1 means a limit is reached' },
};

export const mapKindInfo = (kind: string): MapKindInfo => MAP_KINDS[kind] ?? { label: kind, unit: '', scale: 'viridis' };

/**
 * What tells maps of one kind apart, in the words the summary uses: a stored name "window-density-100um-50um" reads
 * "100/50 µm" (window/step); any other suffix is shown as it is; "" when the name is the kind.
 */
export function mapVariantLabel(name: string, kind: string): string {
  if (name === kind) return '';
  const rest = name.startsWith(`${kind}-`) ? name.slice(kind.length + 1) : name;
  const win = /^(\d+(?:\.\d+)?)um-(\d+(?:\.\d+)?)um$/.exec(rest);
  return win ? `${win[1]}/${win[2]} µm` : rest;
}

/** Value of a row-major grid (row 0 at the bottom) at layout point (x, y) µm; NaN outside. */
export function sampleAt(values: ArrayLike<number>, g: { x0Um: number; y0Um: number; pixelUm: number; nx: number; ny: number }, x: number, y: number): number {
  const i = Math.floor((x - g.x0Um) / g.pixelUm);
  const j = Math.floor((y - g.y0Um) / g.pixelUm);
  if (i < 0 || j < 0 || i >= g.nx || j >= g.ny) return Number.NaN;
  return values[j * g.nx + i] as number;
}

export function formatValue(v: number, unit: string): string {
  if (!Number.isFinite(v)) return '—';
  const a = Math.abs(v);
  const s = a !== 0 && (a < 1e-3 || a >= 1e5) ? v.toExponential(3) : v.toPrecision(4);
  return unit === 'fraction' ? `${(v * 100).toPrecision(3)} %` : s;
}
