/**
 * A one-line description of what an analysis checked, so two analyses of the same revision can be told apart
 * in lists ("layers 1/0 · windows 100/50, 700/70 µm · target 80 µm · density 20–60 %"). Pure; runs in the browser.
 */
type LooseSettings = {
  etchLayers?: { layer: number; datatype: number }[];
  polarity?: string;
  densityWindows?: { windowUm: number; stepUm: number }[];
  kernel?: { kind?: string | null; lengthUm?: number | null };
  limits?: { targetDepthUm?: number | null; minDensity?: number | null; maxDensity?: number | null; minWidthUm?: number | null; maxAspectRatio?: number | null };
};

const num = (v: number) => String(Number(v.toPrecision(4)));
const pct = (v: number) => num(v * 100);

export function describeSettings(raw: unknown): string {
  const s = (raw && typeof raw === 'object' ? raw : {}) as LooseSettings;
  const parts: string[] = [];
  if (s.etchLayers?.length) parts.push(`layers ${s.etchLayers.map((l) => `${l.layer}/${l.datatype}`).join(' ')}${s.polarity === 'dark' ? ' (dark field)' : ''}`);
  if (s.densityWindows?.length) parts.push(`windows ${s.densityWindows.map((w) => `${num(w.windowUm)}/${num(w.stepUm)}`).join(', ')} µm`);
  if (s.kernel?.kind && s.kernel.lengthUm) parts.push(`${s.kernel.kind} kernel ${num(s.kernel.lengthUm)} µm`);
  const l = s.limits ?? {};
  if (l.targetDepthUm != null) parts.push(`target ${num(l.targetDepthUm)} µm`);
  if (l.minDensity != null || l.maxDensity != null) {
    parts.push(`density ${l.minDensity != null ? pct(l.minDensity) : '0'}–${l.maxDensity != null ? pct(l.maxDensity) : '100'} %`);
  } else {
    parts.push('no density limits');
  }
  if (l.minWidthUm != null) parts.push(`min width ${num(l.minWidthUm)} µm`);
  if (l.maxAspectRatio != null) parts.push(`AR ≤ ${num(l.maxAspectRatio)}`);
  return parts.join(' · ');
}
