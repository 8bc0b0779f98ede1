/**
 * Flag rules: pure functions from measured values and limits to `Flag`s with a plain-language explanation.
 * Nothing here computes geometry or runs the etch model; run-analysis feeds in what those produced.
 *
 * Every rule triggers only when its limit is strictly crossed (a value equal to the limit passes).
 * Default severities (a setting can override any kind, e.g. a density limit that is only a recommendation):
 *   error   — the mask as drawn is predicted to miss a stated target or breaks a stated rule:
 *             under-target-depth, over-etch-budget, aspect-ratio-above-limit, width-below-minimum,
 *             window-density-below-min, window-density-above-max.
 *   warning — worth a look but not a predicted failure: density-gradient-above-limit (neighbour caps are common
 *             practice, often recommended rather than required), outside-calibrated-range (the prediction is an
 *             extrapolation and may be wrong either way).
 *   info    — not used by default; available as an override.
 * Units: µm for lengths, aspect ratio = depth / width (dimensionless). Settings give densities as fractions 0..1;
 * density flags report them in percent (unit '%'), the way the summary and the messages show them.
 * Uncertainty: an under-target-depth flag whose limit lies within ±DEPTH_BAND_K·σ of the predicted depth (σ from the
 * calibration, FeatureCheckInput.depthSigmaUm) is marked `uncertain`: the data cannot tell whether it passes.
 * Ranking and collecting live in flag-collector.ts.
 */
import { DEPTH_BAND_K } from '../etch/uncertainty';
import type { FlagKind, ResolvedLimits, Severity } from './settings';

export type { FlagKind, Severity } from './settings';

export const DEFAULT_SEVERITY: Record<FlagKind, Severity> = {
  'under-target-depth': 'error',
  'over-etch-budget': 'error',
  'aspect-ratio-above-limit': 'error',
  'width-below-minimum': 'error',
  'window-density-below-min': 'error',
  'window-density-above-max': 'error',
  'density-gradient-above-limit': 'warning',
  'outside-calibrated-range': 'warning',
};

export type FlagUnit = 'µm' | '%' | 'fraction' | 'ratio';

export interface Flag {
  /** Stable across re-runs of the same layout and settings (so waivers can refer to it). */
  id: string;
  kind: FlagKind;
  severity: Severity;
  /** Region the flag is about, µm, [x0, y0, x1, y1]. */
  bboxUm: [number, number, number, number];
  /** The point to show (worst window centre, feature centroid), µm. */
  xUm: number;
  yUm: number;
  featureId?: number;
  /** Density window set the flag comes from (density flags only). */
  window?: { windowUm: number; stepUm: number };
  measured: number;
  limit: number;
  unit: FlagUnit;
  /** One or two plain sentences: what was found, why it matters, what to consider. */
  message: string;
  /** The limit lies within the prediction's uncertainty band: the flag may or may not be real. */
  uncertain?: boolean;
}

export type SeverityMap = Partial<Record<FlagKind, Severity>>;

function severityOf(kind: FlagKind, overrides: SeverityMap | undefined): Severity {
  return overrides?.[kind] ?? DEFAULT_SEVERITY[kind];
}

const fmt = (v: number, digits = 3): string => (Number.isFinite(v) ? String(Number(v.toPrecision(digits))) : String(v));
const pct = (v: number): string => `${fmt(v * 100)} %`;

// ---------------------------------------------------------------------------------------------------------------
// Per-feature rules

/** A value of the prediction outside the range the model was calibrated on. */
export interface RangeExcursion {
  quantity: 'width' | 'aspect-ratio' | 'density';
  value: number;
  min: number;
  max: number;
  unit: FlagUnit;
}

/** What the per-feature rules look at (produced by run-analysis from the feature and its prediction). */
export interface FeatureCheckInput {
  featureId: number;
  /** Geometric class from feature extraction ('trench', 'round-hole', ...). */
  shape: string;
  /** How the etch model treated it. */
  modelKind: 'trench' | 'hole';
  bboxUm: [number, number, number, number];
  centroidUm: [number, number];
  /** Width used for the prediction (trench width or hole diameter/side), µm. */
  widthUm: number;
  /** Predicted depth at the end of the etch, µm. */
  depthUm: number;
  /** Depth etched into the stop layer after reaching it (≥ 0; 0 without a stop layer), µm. */
  overEtchUm: number;
  /** Calibration excursions of this prediction; empty when inside the calibrated range or when the model has none. */
  excursions: RangeExcursion[];
  /** Standard deviation of depthUm from the calibration, µm; null/absent without one. */
  depthSigmaUm?: number | null;
}

/** Aspect ratio the opening must reach to meet the target: target depth / width. */
export function requiredAspectRatio(targetDepthUm: number, widthUm: number): number {
  return widthUm > 0 ? targetDepthUm / widthUm : Number.POSITIVE_INFINITY;
}

/**
 * Receives flags as they are found. `offer` gets the ranking facts first and builds the Flag (message included)
 * only if it wants to keep it, so millions of openings that all fail do not cost millions of messages. `build` must be
 * called inside `offer` or not at all: callers may reuse the input they pass for the next opening.
 */
export interface FlagSink {
  offer(id: string, kind: FlagKind, severity: Severity, measured: number, limit: number, build: () => Flag): void;
}

export function featureFlags(f: FeatureCheckInput, limits: ResolvedLimits, severities?: SeverityMap): Flag[] {
  const out: Flag[] = [];
  featureFlagsInto({ offer: (_id, _k, _s, _m, _l, build) => out.push(build()) }, f, limits, severities);
  return out;
}

/** featureFlags, delivering to a sink (see FlagSink). */
const where = (f: FeatureCheckInput) => `Opening #${f.featureId} (${f.shape}, ${fmt(f.widthUm)} µm wide)`;

/** Offers one per-feature flag; the Flag and its message are built only if the sink keeps it. */
function emitFeatureFlag(
  sink: FlagSink,
  f: FeatureCheckInput,
  severities: SeverityMap | undefined,
  kind: FlagKind,
  measured: number,
  limit: number,
  unit: FlagUnit,
  message: () => string,
  id = `${kind}:f${f.featureId}`,
  uncertain = false,
): void {
  const severity = severityOf(kind, severities);
  sink.offer(id, kind, severity, measured, limit, () => ({
    id,
    kind,
    severity,
    // A copy: callers refill one input per opening.
    bboxUm: [f.bboxUm[0], f.bboxUm[1], f.bboxUm[2], f.bboxUm[3]],
    xUm: f.centroidUm[0],
    yUm: f.centroidUm[1],
    featureId: f.featureId,
    measured,
    limit,
    unit,
    message: message(),
    ...(uncertain ? { uncertain: true } : {}),
  }));
}

/** featureFlags, delivering to a sink (see FlagSink). No closure or string for an opening that passes every rule. */
export function featureFlagsInto(sink: FlagSink, f: FeatureCheckInput, limits: ResolvedLimits, severities?: SeverityMap): void {
  const minDepth = limits.targetDepthUm - limits.toleranceUm;
  if (f.depthUm < minDepth) {
    const band = f.depthSigmaUm ? DEPTH_BAND_K * f.depthSigmaUm : 0;
    const uncertain = band > 0 && f.depthUm + band >= minDepth;
    emitFeatureFlag(
      sink,
      f,
      severities,
      'under-target-depth',
      f.depthUm,
      minDepth,
      'µm',
      () =>
        `${where(f)} is predicted to reach ${fmt(f.depthUm)} µm${band > 0 ? ` (± ${fmt(band)} µm, 95 % band from the calibration)` : ''}, short of the ` +
        `${fmt(limits.targetDepthUm)} µm target by ${fmt(limits.targetDepthUm - f.depthUm)} µm (tolerance ${fmt(limits.toleranceUm)} µm). ` +
        (uncertain
          ? 'Uncertain: the limit lies inside the prediction\u2019s uncertainty band, so the calibration data cannot tell whether it reaches the target; measure a test structure of this width. '
          : '') +
        `Narrow and densely packed openings etch slower; consider widening it, or a longer etch if the wider openings can take the extra over-etch.`,
      undefined,
      uncertain,
    );
  }

  const budget = limits.stopOverEtchBudgetUm;
  if (budget !== null && f.overEtchUm > budget) {
    emitFeatureFlag(sink, f, severities, 'over-etch-budget', f.overEtchUm, budget, 'µm', () =>
      `${where(f)} reaches the stop layer early and etches ${fmt(f.overEtchUm)} µm into it by the end of the etch, beyond the ` +
      `${fmt(budget)} µm budget. Wide openings reach the stop first; expect notching or footing there — ` +
      `narrow it or even out the widths on this layer.`,
    );
  }

  const ar = requiredAspectRatio(limits.targetDepthUm, f.widthUm);
  if (ar > limits.maxAspectRatio) {
    emitFeatureFlag(sink, f, severities, 'aspect-ratio-above-limit', ar, limits.maxAspectRatio, 'ratio', () =>
      `${where(f)} needs an aspect ratio of ${fmt(ar)}:1 to reach ${fmt(limits.targetDepthUm)} µm, above the process limit of ` +
      `${fmt(limits.maxAspectRatio)}:1. Beyond it the etch may slow sharply or stop; widen the opening.`,
    );
  }

  const minWidth = limits.minWidthUm;
  if (minWidth !== null && f.widthUm < minWidth) {
    emitFeatureFlag(sink, f, severities, 'width-below-minimum', f.widthUm, minWidth, 'µm', () => `${where(f)} is narrower than the ${fmt(minWidth)} µm minimum width rule for this layer.`);
  }

  for (const e of f.excursions) {
    if (e.value >= e.min && e.value <= e.max) continue;
    const below = e.value < e.min;
    const label = e.quantity === 'aspect-ratio' ? 'aspect ratio' : e.quantity === 'density' ? 'effective density' : 'width';
    const show = (v: number) => (e.unit === 'fraction' ? pct(v) : e.unit === 'µm' ? `${fmt(v)} µm` : `${fmt(v)}:1`);
    // Densities are reported in percent like every other density flag.
    const asPct = e.unit === 'fraction';
    emitFeatureFlag(
      sink,
      f,
      severities,
      'outside-calibrated-range',
      asPct ? e.value * 100 : e.value,
      (below ? e.min : e.max) * (asPct ? 100 : 1),
      asPct ? '%' : e.unit,
      () =>
        `${where(f)}: its ${label} of ${show(e.value)} is ${below ? 'below' : 'above'} the range the model was calibrated on ` +
        `(${show(e.min)} to ${show(e.max)}), so its predicted depth is an extrapolation. Add test structures of this size to the calibration.`,
      `outside-calibrated-range:f${f.featureId}:${e.quantity}`,
    );
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Window density rules

/** One set of density windows as produced by the geometry engine, plus where the windows sit. */
export interface WindowSetInput {
  windowUm: number;
  stepUm: number;
  /** Lower-left corner of window (0,0), µm. Window (i,j) starts at origin + (i·step, j·step). */
  originUm: [number, number];
  nx: number;
  ny: number;
  /** Row-major j*nx+i; NaN = no window there (skipped). */
  values: ArrayLike<number>;
  /** Die extent windows are clipped to for display, µm [x0, y0, x1, y1]. */
  dieBboxUm: [number, number, number, number];
}

function windowBox(w: WindowSetInput, i: number, j: number): [number, number, number, number] {
  const x0 = w.originUm[0] + i * w.stepUm;
  const y0 = w.originUm[1] + j * w.stepUm;
  const [dx0, dy0, dx1, dy1] = w.dieBboxUm;
  return [Math.max(x0, dx0), Math.max(y0, dy0), Math.min(x0 + w.windowUm, dx1), Math.min(y0 + w.windowUm, dy1)];
}

/**
 * Connected groups (4-neighbour) of marked windows. Returns the window indices of each group; iterative (explicit
 * stack) so a die full of offending windows cannot overflow the call stack.
 */
export function markedGroups(marked: Uint8Array, nx: number, ny: number): number[][] {
  const seen = new Uint8Array(marked.length);
  const groups: number[][] = [];
  for (let start = 0; start < marked.length; start++) {
    if (!marked[start] || seen[start]) continue;
    const group: number[] = [];
    const stack = [start];
    seen[start] = 1;
    while (stack.length > 0) {
      const k = stack.pop() as number;
      group.push(k);
      const i = k % nx;
      const j = (k - i) / nx;
      const next = [i > 0 ? k - 1 : -1, i < nx - 1 ? k + 1 : -1, j > 0 ? k - nx : -1, j < ny - 1 ? k + nx : -1];
      for (const n of next) {
        if (n >= 0 && marked[n] && !seen[n]) {
          seen[n] = 1;
          stack.push(n);
        }
      }
    }
    groups.push(group);
  }
  return groups;
}

function groupBox(w: WindowSetInput, group: number[]): [number, number, number, number] {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  for (const k of group) {
    const b = windowBox(w, k % w.nx, Math.floor(k / w.nx));
    x0 = Math.min(x0, b[0]); y0 = Math.min(y0, b[1]); x1 = Math.max(x1, b[2]); y1 = Math.max(y1, b[3]);
  }
  return [x0, y0, x1, y1];
}

const windowLabel = (w: WindowSetInput) => `${fmt(w.windowUm)} µm window (step ${fmt(w.stepUm)} µm)`;

/**
 * Windows below minDensity / above maxDensity. Neighbouring offending windows are reported as one flag whose bbox
 * covers them all and whose measured value and point are those of the worst window in the group.
 */
export function windowDensityFlags(w: WindowSetInput, limits: Pick<ResolvedLimits, 'minDensity' | 'maxDensity'>, severities?: SeverityMap): Flag[] {
  const out: Flag[] = [];
  const n = w.nx * w.ny;
  const rules: { kind: FlagKind; limit: number | null; bad: (v: number) => boolean; worse: (a: number, b: number) => boolean }[] = [
    { kind: 'window-density-below-min', limit: limits.minDensity, bad: (v) => v < (limits.minDensity as number), worse: (a, b) => a < b },
    { kind: 'window-density-above-max', limit: limits.maxDensity, bad: (v) => v > (limits.maxDensity as number), worse: (a, b) => a > b },
  ];
  for (const rule of rules) {
    if (rule.limit === null) continue;
    const marked = new Uint8Array(n);
    for (let k = 0; k < n; k++) {
      const v = w.values[k] as number;
      if (!Number.isNaN(v) && rule.bad(v)) marked[k] = 1;
    }
    for (const group of markedGroups(marked, w.nx, w.ny)) {
      let worst = group[0] as number;
      for (const k of group) if (rule.worse(w.values[k] as number, w.values[worst] as number)) worst = k;
      const i = worst % w.nx;
      const j = Math.floor(worst / w.nx);
      const b = windowBox(w, i, j);
      const v = w.values[worst] as number;
      const below = rule.kind === 'window-density-below-min';
      const count = group.length === 1 ? 'One window' : `${group.length} neighbouring windows`;
      out.push({
        id: `${rule.kind}:w${w.windowUm}/${w.stepUm}:${i},${j}`,
        kind: rule.kind,
        severity: severityOf(rule.kind, severities),
        bboxUm: groupBox(w, group),
        xUm: (b[0] + b[2]) / 2,
        yUm: (b[1] + b[3]) / 2,
        window: { windowUm: w.windowUm, stepUm: w.stepUm },
        measured: v * 100,
        limit: rule.limit * 100,
        unit: '%',
        message:
          `${count} of the ${windowLabel(w)} ${group.length === 1 ? 'has' : 'have'} open-area density ${below ? 'below' : 'above'} the ` +
          `${pct(rule.limit)} ${below ? 'minimum' : 'maximum'} (worst ${pct(v)}). ` +
          (below
            ? 'Sparse regions etch faster than the rest (less local loading); consider dummy openings.'
            : 'Dense regions etch slower and heat the wafer and erode the mask; consider removing or splitting large open areas.'),
      });
    }
  }
  return out;
}

/**
 * Density gradient: absolute density difference between two neighbouring windows (one step apart along x or y).
 * Pairs above maxGradient mark both windows; each connected group gives one flag at the midpoint of its worst pair.
 */
export function densityGradientFlags(w: WindowSetInput, maxGradient: number | null, severities?: SeverityMap): Flag[] {
  if (maxGradient === null) return [];
  const n = w.nx * w.ny;
  const marked = new Uint8Array(n);
  const worstAt = new Float64Array(n).fill(-1); // largest difference of a pair the window takes part in
  const partner = new Int32Array(n).fill(-1);
  const consider = (a: number, b: number) => {
    const va = w.values[a] as number;
    const vb = w.values[b] as number;
    if (Number.isNaN(va) || Number.isNaN(vb)) return;
    const d = Math.abs(va - vb);
    if (!(d > maxGradient)) return;
    marked[a] = 1;
    marked[b] = 1;
    if (d > (worstAt[a] as number)) { worstAt[a] = d; partner[a] = b; }
    if (d > (worstAt[b] as number)) { worstAt[b] = d; partner[b] = a; }
  };
  for (let j = 0; j < w.ny; j++) {
    for (let i = 0; i < w.nx; i++) {
      const k = j * w.nx + i;
      if (i + 1 < w.nx) consider(k, k + 1);
      if (j + 1 < w.ny) consider(k, k + w.nx);
    }
  }
  const out: Flag[] = [];
  for (const group of markedGroups(marked, w.nx, w.ny)) {
    let worst = group[0] as number;
    for (const k of group) if ((worstAt[k] as number) > (worstAt[worst] as number)) worst = k;
    const other = partner[worst] as number;
    const a = Math.min(worst, other);
    const bb = windowBox(w, other % w.nx, Math.floor(other / w.nx));
    const bw = windowBox(w, worst % w.nx, Math.floor(worst / w.nx));
    const d = worstAt[worst] as number;
    out.push({
      id: `density-gradient-above-limit:w${w.windowUm}/${w.stepUm}:${a % w.nx},${Math.floor(a / w.nx)}`,
      kind: 'density-gradient-above-limit',
      severity: severityOf('density-gradient-above-limit', severities),
      bboxUm: groupBox(w, group),
      // midpoint between the centres of the worst pair
      xUm: (bw[0] + bw[2] + bb[0] + bb[2]) / 4,
      yUm: (bw[1] + bw[3] + bb[1] + bb[3]) / 4,
      window: { windowUm: w.windowUm, stepUm: w.stepUm },
      measured: d * 100,
      limit: maxGradient * 100,
      unit: '%',
      message:
        `Open-area density of the ${windowLabel(w)} changes by ${pct(d)} between neighbouring windows, more than the ` +
        `${pct(maxGradient)} allowed. Etch rate follows local density, so depth changes across this boundary; ` +
        `consider evening out the pattern here.`,
    });
  }
  return out;
}

export { compareFlags, emptyFlagCounts, exceedance, exceedanceOf, FlagCollector, type FlagCounts } from './flag-collector';
