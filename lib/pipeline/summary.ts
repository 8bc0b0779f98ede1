/**
 * The summary of one analysis: the figures stored in the database and printed by the check command. Plain JSON
 * (no typed arrays) so it can cross a worker boundary and be stored as is.
 */
import type { WindowDensity } from '../geometry';
import type { ProcessModel } from '../etch';
import type { FlatLayout } from '../layout/types';
import { CAUTIONS, CAUTION_SHORT } from '../methods/cautions';
import { methodBlock, type MethodBlockLine } from '../methods/method-block';
import type { DieFrame } from './etch-layers';
import type { FlagCounts, FlagKind, Severity } from './flags';
import { FEATURE_KINDS } from '../geometry';
import { EXCURSION_BITS, MODEL_KINDS, type FeatureResultTable } from './feature-results';
import type { AnalysisSettings, ResolvedKernel, ResolvedLimits } from './settings';

export interface WindowSummary {
  windowUm: number;
  stepUm: number;
  originUm: [number, number];
  edge: 'full' | 'clipped';
  nx: number;
  ny: number;
  min: number;
  max: number;
  mean: number;
  /** Lower-left corner of the least / most dense window, µm. */
  minAtUm: [number, number];
  maxAtUm: [number, number];
  maxGradient: number;
  method: { origin: string; denominator: string; edgePolicy: string };
}

export interface DepthSummary {
  minUm: number;
  maxUm: number;
  /** max − min over all openings, µm: the spread that over-etch must absorb. */
  spreadUm: number;
  /** Area-weighted mean depth over openings, µm. */
  meanUm: number;
  reachingTarget: number;
  byModelKind: Partial<Record<'trench' | 'hole', { count: number; minUm: number; maxUm: number }>>;
}

export interface AnalysisSummary {
  layout: { format: string; libraryName: string; topCell: string; dbuUm: number; etchLayers: string[]; polygonCount: number; dieBboxUm: [number, number, number, number]; dieAreaUm2: number };
  grid: { x0Um: number; y0Um: number; pixelUm: number; nx: number; ny: number };
  globalDensity: number;
  windows: WindowSummary[];
  effectiveDensity: { kernel: string; lengthUm: number; outside: string; min: number; max: number };
  features: { count: number; byShape: Record<string, number> };
  /** null when the etch layers have no openings. */
  depth: DepthSummary | null;
  flags: { total: number; listed: number; bySeverity: Record<Severity, number>; counts: FlagCounts };
  model: { name: string; version: string; calibrationDate: string | null };
  limits: ResolvedLimits;
  /** Distinct extrapolation / model warnings, with how many openings each concerns. */
  extrapolation: { message: string; count: number }[];
  method: MethodBlockLine[];
  cautions: readonly string[];
  caution: string;
  settings: AnalysisSettings;
  timingsMs: Record<string, number>;
  /** Present when the layout was too large to read whole and the analysis ran tile by tile (same results). */
  tiled?: TiledRunSummary;
}

/** How a tiled analysis ran (lib/pipeline/worker-tiled.ts). */
export interface TiledRunSummary {
  tiles: number;
  tileUm: number;
  marginUm: number;
  /** Re-reads around openings wider than the margin. */
  rereads: number;
  /** Worker threads for the tiles (0: the analysis thread itself); on the queue, tile jobs in flight at once. */
  threads: number;
  /** Where the tile jobs ran: this thread, worker threads, or tile workers of the `tiles` queue. */
  via?: 'inline' | 'threads' | 'queue';
  /** The layout file's size and the whole-read size it exceeded, bytes. */
  fileBytes: number;
  wholeReadBytes: number;
  /** Why this tile size (memory budget arithmetic). */
  reason: string;
}

/** Name, version and calibration date of a model, read tolerantly (older models may lack them). */
export function modelIdentity(model: ProcessModel): AnalysisSummary['model'] {
  const m = model as { name?: unknown; version?: unknown; calibration?: { date?: unknown } };
  return {
    name: typeof m.name === 'string' && m.name ? m.name : 'unnamed model',
    version: m.version === undefined || m.version === null ? 'unversioned' : String(m.version),
    calibrationDate: typeof m.calibration?.date === 'string' ? m.calibration.date : null,
  };
}

export interface SummaryInput {
  layout: FlatLayout;
  etchLayerNames: string[];
  polygonCount: number;
  frame: DieFrame;
  settings: AnalysisSettings;
  limits: ResolvedLimits;
  model: ProcessModel;
  globalDensity: number;
  windows: WindowDensity[];
  effective: Float32Array;
  kernel: ResolvedKernel;
  results: FeatureResultTable;
  flagCounts: FlagCounts;
  flagTotal: number;
  flagsListed: number;
  timingsMs: Record<string, number>;
}

function depthSummary(t: FeatureResultTable): DepthSummary | null {
  if (t.count === 0) return null;
  let minUm = Infinity, maxUm = -Infinity, weighted = 0, area = 0, reaching = 0;
  const byModelKind: DepthSummary['byModelKind'] = {};
  const areas = t.features.areaUm2;
  for (let k = 0; k < t.count; k++) {
    const d = t.depthUm[k] as number;
    minUm = Math.min(minUm, d);
    maxUm = Math.max(maxUm, d);
    weighted += d * (areas[k] as number);
    area += areas[k] as number;
    if (t.reachesTarget[k]) reaching++;
    const mk = byModelKind[MODEL_KINDS[t.modelKind[k] as number] as 'trench' | 'hole'] ??= { count: 0, minUm: Infinity, maxUm: -Infinity };
    mk.count++;
    mk.minUm = Math.min(mk.minUm, d);
    mk.maxUm = Math.max(mk.maxUm, d);
  }
  return { minUm, maxUm, spreadUm: maxUm - minUm, meanUm: area > 0 ? weighted / area : minUm, reachingTarget: reaching, byModelKind };
}

/**
 * Openings per shape, and each distinct note or excursion with how many openings it concerns, listed in the order
 * each first appears over the rows (so ties in the summary's count order come out as they always did).
 */
function rowTallies(t: FeatureResultTable): { byShape: Record<string, number>; warnings: Map<string, number> } {
  const shapeCount = new Uint32Array(FEATURE_KINDS.length);
  const shapeFirst: number[] = [];
  const listCount = new Uint32Array(t.noteLists.length);
  const excursionCount = new Uint32Array(EXCURSION_BITS.length);
  // Keys in first-appearance order; counts added at the end.
  const warnings = new Map<string, number>();
  const listSeen = new Uint8Array(t.noteLists.length);
  let excursionSeen = 0;
  const kinds = t.features.kind;
  for (let k = 0; k < t.count; k++) {
    const s = kinds[k] as number;
    if (shapeCount[s]!++ === 0) shapeFirst.push(s);
    const li = t.notes[k] as number;
    if (li !== 0) {
      listCount[li]!++;
      if (!listSeen[li]) {
        listSeen[li] = 1;
        for (const w of t.noteLists[li] as readonly string[]) if (!warnings.has(w)) warnings.set(w, 0);
      }
    }
    const bits = t.excursions[k] as number;
    if (bits === 0) continue;
    for (let e = 0; e < EXCURSION_BITS.length; e++) {
      const [q, bit] = EXCURSION_BITS[e] as [string, number];
      if (!(bits & bit)) continue;
      excursionCount[e]!++;
      if (!(excursionSeen & bit)) {
        excursionSeen |= bit;
        const key = `${q} outside the calibrated range`;
        if (!warnings.has(key)) warnings.set(key, 0);
      }
    }
  }
  for (let li = 1; li < t.noteLists.length; li++) {
    for (const w of t.noteLists[li] as readonly string[]) warnings.set(w, (warnings.get(w) ?? 0) + (listCount[li] as number));
  }
  for (let e = 0; e < EXCURSION_BITS.length; e++) {
    const key = `${(EXCURSION_BITS[e] as [string, number])[0]} outside the calibrated range`;
    if (excursionCount[e]) warnings.set(key, (warnings.get(key) ?? 0) + (excursionCount[e] as number));
  }
  const byShape: Record<string, number> = {};
  for (const s of shapeFirst) byShape[FEATURE_KINDS[s] as string] = shapeCount[s] as number;
  return { byShape, warnings };
}

export function buildSummary(x: SummaryInput): AnalysisSummary {
  let effMin = Infinity, effMax = -Infinity;
  for (let k = 0; k < x.effective.length; k++) {
    const v = x.effective[k] as number;
    if (v < effMin) effMin = v;
    if (v > effMax) effMax = v;
  }
  const { byShape, warnings } = rowTallies(x.results);
  const bySeverity: Record<Severity, number> = { error: 0, warning: 0, info: 0 };
  for (const kind of Object.keys(x.flagCounts) as FlagKind[]) {
    for (const s of Object.keys(bySeverity) as Severity[]) bySeverity[s] += x.flagCounts[kind][s];
  }
  const model = modelIdentity(x.model);
  const windows: WindowSummary[] = x.windows.map((w) => ({
    windowUm: w.windowUm,
    stepUm: w.stepUm,
    originUm: w.originUm,
    edge: w.edge,
    nx: w.nx,
    ny: w.ny,
    min: w.min,
    max: w.max,
    mean: w.mean,
    minAtUm: [w.minAt.xUm, w.minAt.yUm],
    maxAtUm: [w.maxAt.xUm, w.maxAt.yUm],
    maxGradient: w.maxGradient.value,
    method: w.method,
  }));
  return {
    layout: {
      format: x.layout.format,
      libraryName: x.layout.libraryName,
      topCell: x.layout.topCell,
      dbuUm: x.layout.dbuUm,
      etchLayers: x.etchLayerNames,
      polygonCount: x.polygonCount,
      dieBboxUm: x.frame.dieBboxUm,
      dieAreaUm2: x.frame.dieAreaUm2,
    },
    grid: x.frame.grid,
    globalDensity: x.globalDensity,
    windows,
    effectiveDensity: { kernel: x.kernel.kind, lengthUm: x.kernel.lengthUm, outside: x.kernel.outside, min: effMin, max: effMax },
    features: { count: x.results.count, byShape },
    depth: depthSummary(x.results),
    flags: { total: x.flagTotal, listed: x.flagsListed, bySeverity, counts: x.flagCounts },
    model,
    limits: x.limits,
    extrapolation: [...warnings].map(([message, count]) => ({ message, count })).sort((a, b) => b.count - a.count),
    method: methodBlock({
      etchLayers: x.etchLayerNames,
      polarity: x.settings.polarity,
      dieBboxUm: x.frame.dieBboxUm,
      pixelUm: x.frame.grid.pixelUm,
      pixelAuto: x.settings.pixel.sizeUm === 'auto',
      windows: x.windows.map((w) => ({ windowUm: w.windowUm, stepUm: w.stepUm, originUm: w.originUm, method: w.method })),
      kernel: { kind: x.kernel.kind, lengthUm: x.kernel.lengthUm, outside: x.kernel.outside, fromModel: x.kernel.fromModel },
      model,
      globalDensity: x.globalDensity,
    }),
    cautions: CAUTIONS,
    caution: CAUTION_SHORT,
    settings: x.settings,
    timingsMs: x.timingsMs,
  };
}
