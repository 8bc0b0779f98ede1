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
  /** Per-opening results: a whole table, or a streamed analysis's tally of them. */
  results: FeatureResultTable | RowTally;
  flagCounts: FlagCounts;
  flagTotal: number;
  flagsListed: number;
  timingsMs: Record<string, number>;
}

/**
 * The summary's per-opening figures (depth range and mean, shapes, notes and excursions), added up over result
 * rows in row order: over a whole table at once, or chunk by chunk (a streamed analysis) with the same sums in the
 * same order, so both give the same figures. Chunks' `notes` index one growing list of note lists (`noteLists` of
 * the last chunk added must hold them all).
 */
export class RowTally {
  count = 0;
  private minUm = Infinity;
  private maxUm = -Infinity;
  private weighted = 0;
  private area = 0;
  private reaching = 0;
  private readonly byModelKind: DepthSummary['byModelKind'] = {};
  private readonly shapeCount = new Uint32Array(FEATURE_KINDS.length);
  private readonly shapeFirst: number[] = [];
  private readonly listCount: number[] = [];
  private readonly excursionCount = new Uint32Array(EXCURSION_BITS.length);
  // Keys in first-appearance order; counts added at the end.
  private readonly warnings = new Map<string, number>();
  private readonly listSeen: boolean[] = [];
  private excursionSeen = 0;
  private noteLists: readonly (readonly string[])[] = [];

  add(t: FeatureResultTable): void {
    this.noteLists = t.noteLists;
    const areas = t.features.areaUm2, kinds = t.features.kind;
    const { byModelKind, shapeCount, shapeFirst, listCount, listSeen, warnings, excursionCount } = this;
    for (let k = 0; k < t.count; k++) {
      const d = t.depthUm[k] as number;
      this.minUm = Math.min(this.minUm, d);
      this.maxUm = Math.max(this.maxUm, d);
      this.weighted += d * (areas[k] as number);
      this.area += areas[k] as number;
      if (t.reachesTarget[k]) this.reaching++;
      const mk = byModelKind[MODEL_KINDS[t.modelKind[k] as number] as 'trench' | 'hole'] ??= { count: 0, minUm: Infinity, maxUm: -Infinity };
      mk.count++;
      mk.minUm = Math.min(mk.minUm, d);
      mk.maxUm = Math.max(mk.maxUm, d);
      const s = kinds[k] as number;
      if (shapeCount[s]!++ === 0) shapeFirst.push(s);
      const li = t.notes[k] as number;
      if (li !== 0) {
        listCount[li] = (listCount[li] ?? 0) + 1;
        if (!listSeen[li]) {
          listSeen[li] = true;
          for (const w of t.noteLists[li] as readonly string[]) if (!warnings.has(w)) warnings.set(w, 0);
        }
      }
      const bits = t.excursions[k] as number;
      if (bits === 0) continue;
      for (let e = 0; e < EXCURSION_BITS.length; e++) {
        const [q, bit] = EXCURSION_BITS[e] as [string, number];
        if (!(bits & bit)) continue;
        excursionCount[e]!++;
        if (!(this.excursionSeen & bit)) {
          this.excursionSeen |= bit;
          const key = `${q} outside the calibrated range`;
          if (!warnings.has(key)) warnings.set(key, 0);
        }
      }
    }
    this.count += t.count;
  }

  depth(): DepthSummary | null {
    if (this.count === 0) return null;
    const { minUm, maxUm } = this;
    return { minUm, maxUm, spreadUm: maxUm - minUm, meanUm: this.area > 0 ? this.weighted / this.area : minUm, reachingTarget: this.reaching, byModelKind: this.byModelKind };
  }

  /**
   * Openings per shape, and each distinct note or excursion with how many openings it concerns, listed in the order
   * each first appears over the rows (so ties in the summary's count order come out as they always did).
   */
  tallies(): { byShape: Record<string, number>; warnings: Map<string, number> } {
    const warnings = new Map(this.warnings);
    for (let li = 1; li < this.noteLists.length; li++) {
      for (const w of this.noteLists[li] as readonly string[]) warnings.set(w, (warnings.get(w) ?? 0) + (this.listCount[li] ?? 0));
    }
    for (let e = 0; e < EXCURSION_BITS.length; e++) {
      const key = `${(EXCURSION_BITS[e] as [string, number])[0]} outside the calibrated range`;
      if (this.excursionCount[e]) warnings.set(key, (warnings.get(key) ?? 0) + (this.excursionCount[e] as number));
    }
    const byShape: Record<string, number> = {};
    for (const s of this.shapeFirst) byShape[FEATURE_KINDS[s] as string] = this.shapeCount[s] as number;
    return { byShape, warnings };
  }
}

export function buildSummary(x: SummaryInput): AnalysisSummary {
  let effMin = Infinity, effMax = -Infinity;
  for (let k = 0; k < x.effective.length; k++) {
    const v = x.effective[k] as number;
    if (v < effMin) effMin = v;
    if (v > effMax) effMax = v;
  }
  let tally = x.results;
  if (!(tally instanceof RowTally)) {
    const whole = new RowTally();
    whole.add(tally);
    tally = whole;
  }
  const { byShape, warnings } = tally.tallies();
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
    features: { count: tally.count, byShape },
    depth: tally.depth(),
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
