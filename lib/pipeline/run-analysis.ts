/**
 * The product's main job, as one pure function over in-memory data: flattened layout + settings + process model →
 * summary, per-feature results, flags and result maps. No Node, DB or server imports: the worker, the check
 * command and tests all call this.
 *
 * Stages, always in this order (ANALYSIS_STAGES): coverage → window-density → effective-density → features →
 * local-width → prediction → maps → flags → summary. `onProgress(stage, fraction)` is called when each stage starts,
 * a few times inside the long ones, and once more with ('done', 1); `fraction` is the overall progress 0..1 and
 * never decreases. `signal` and `isCancelled` are checked between stages and every few thousand features; an abort
 * throws AnalysisAbortedError (name 'AbortError'). When features run on two threads, the local-width map is computed
 * during the features stage (while the second thread works) and the local-width stage is then empty.
 * Per-opening data stays in columns (FeatureTable, FeatureResultTable): a million objects would cost seconds of
 * garbage collection; `features` builds objects only when read.
 */
import { localWidthFromCoverage, windowDensity, type FeatureTable, type Grid, type WindowDensity } from '../geometry';
import { featureTableInThreads } from '../geometry/parallel-features';
import { openRegionsInThreads } from '../geometry/parallel-union';
import { coverageInThreads } from '../geometry/parallel-raster';
import { secondCoreFree, type TaskThread } from '../threads/sync-helper';
import { startAnalysisHelper } from './analysis-helper';
import type { ProcessModel } from '../etch';
import type { FlatLayout } from '../layout/types';
import { AnalysisAbortedError } from './errors';
import { dieFrame, layerName, selectEtchLayers } from './etch-layers';
import { densityGradientFlags, FlagCollector, windowDensityFlags, type Flag, type WindowSetInput } from './flags';
import { offerTableFlags } from './table-flags';
import type { GridMap } from './grid-file';
import { featureResultList, type FeatureResultTable } from './feature-results';
import { type FeatureResult } from './predict-features';
import { predictInThreads } from './parallel-predict';
import { featureRisk, paintColumnsOf, type FeatureMaps } from './result-maps';
import { effectiveOffloaded, paintOffloaded } from './offload';
import { resolveKernel, resolveLimits, type AnalysisSettings } from './settings';
import { buildSummary, type AnalysisSummary } from './summary';
import { runStreamedStages, type StreamedFeatures } from './streamed-stages';
import { noFeatureResults } from './feature-results';
import { calibratedRangeOf } from './predict-features';

export const ANALYSIS_STAGES = [
  { stage: 'coverage', weight: 0.15 },
  { stage: 'window-density', weight: 0.1 },
  { stage: 'effective-density', weight: 0.15 },
  { stage: 'features', weight: 0.15 },
  { stage: 'local-width', weight: 0.1 },
  { stage: 'prediction', weight: 0.2 },
  { stage: 'maps', weight: 0.05 },
  { stage: 'flags', weight: 0.05 },
  { stage: 'summary', weight: 0.05 },
] as const;
export type AnalysisStage = (typeof ANALYSIS_STAGES)[number]['stage'] | 'done';

export interface AnalysisHooks {
  onProgress?(stage: AnalysisStage, fraction: number): void;
  signal?: AbortSignal;
  /**
   * Polled at the same check points as `signal`. For worker threads: runAnalysis is synchronous, so messages and
   * AbortSignal events cannot arrive while it runs; a flag in shared memory (Atomics.load) can.
   */
  isCancelled?(): boolean;
  /**
   * A running helper thread for the stages that split their work (analysis-helper.ts; the caller closes it), null
   * for one thread. Default: runAnalysis starts one for a big layout and closes it at the end. A caller that starts
   * it before reading the layout hides the thread's start-up behind the read.
   */
  helper?: TaskThread | null;
}

/** Below this many etch-layer polygons the helper thread costs more to start than it saves. */
const MIN_HELPER_POLYGONS = 50_000;

export interface AnalysisResult {
  summary: AnalysisSummary;
  /** Per-opening results as columns, one row per extracted opening in feature id order (what the worker writes). */
  featureTable: FeatureResultTable;
  /**
   * The same rows as objects, built on first read (one object per opening: for tests, JSON output and small
   * layouts; the pipeline itself never reads it).
   */
  readonly features: FeatureResult[];
  /** Worst first, at most settings.maxListedFlags (summary.flags counts all). */
  flags: Flag[];
  /** coverage, window-density (one per window set), effective-density, local-width, aspect-ratio, predicted-depth, risk. */
  maps: GridMap[];
}

/** Tracks stage timing and overall progress. */
class StageClock {
  private startFraction = 0;
  private current: { stage: AnalysisStage; weight: number; t0: number } | null = null;
  readonly timingsMs: Record<string, number> = {};
  constructor(private readonly hooks: AnalysisHooks) {}

  begin(stage: (typeof ANALYSIS_STAGES)[number]['stage']): void {
    this.end();
    this.checkAbort(stage);
    const weight = ANALYSIS_STAGES.find((s) => s.stage === stage)?.weight ?? 0;
    this.current = { stage, weight, t0: performance.now() };
    this.hooks.onProgress?.(stage, this.startFraction);
  }

  /** Progress inside the current stage (0..1); also an abort check point. */
  within(part: number): void {
    if (!this.current) return;
    this.checkAbort(this.current.stage);
    this.hooks.onProgress?.(this.current.stage, Math.min(1, this.startFraction + this.current.weight * Math.min(1, Math.max(0, part))));
  }

  private end(): void {
    if (!this.current) return;
    this.timingsMs[this.current.stage] = Math.round((performance.now() - this.current.t0) * 10) / 10;
    this.startFraction = Math.min(1, this.startFraction + this.current.weight);
    this.current = null;
  }

  finish(): void {
    this.end();
    this.hooks.onProgress?.('done', 1);
  }

  checkAbort(stage: string): void {
    if (this.hooks.signal?.aborted || this.hooks.isCancelled?.()) throw new AnalysisAbortedError(stage);
  }
}

/**
 * Coverage and features computed elsewhere (the tiled analysis, lib/pipeline/tiled): they must equal what the
 * coverage and features stages would give. `layout` then only supplies the header (units, names, bbox).
 */
export interface PrecomputedStages {
  coverage: Float32Array;
  /**
   * Openings with ids in the untiled order (stitched by the tiled analysis): one table, or chunks read back from a
   * spill file (streamed-stages.ts; the result's featureTable is then empty and the rows go to `onResults`).
   */
  features: FeatureTable | StreamedFeatures;
  /** Polygons of the etch layers (what selectEtchLayers would count). */
  polygonCount: number;
}

export function runAnalysis(layout: FlatLayout, settings: AnalysisSettings, model: ProcessModel, hooks: AnalysisHooks = {}, precomputed?: PrecomputedStages): AnalysisResult {
  const own = hooks.helper === undefined && !precomputed && etchPolygonCount(layout, settings) >= MIN_HELPER_POLYGONS ? startAnalysisHelper() : null;
  try {
    return analyse(layout, settings, model, hooks, precomputed, own ?? hooks.helper);
  } finally {
    own?.close();
  }
}

/** Polygons on the etch layers (0 when a layer is missing: selectEtchLayers then reports it). */
function etchPolygonCount(layout: FlatLayout, settings: AnalysisSettings): number {
  let n = 0;
  for (const ref of settings.etchLayers) n += layout.layers.find((s) => s.layer === ref.layer && s.datatype === ref.datatype)?.count ?? 0;
  return n;
}

function analyse(layout: FlatLayout, settings: AnalysisSettings, model: ProcessModel, hooks: AnalysisHooks, precomputed: PrecomputedStages | undefined, helper: TaskThread | null | undefined): AnalysisResult {
  const clock = new StageClock(hooks);
  const limits = resolveLimits(settings, model);
  const kernel = resolveKernel(settings, model);
  // Predictions use the analysis's target and tolerance, so margins and reachesTarget agree with the flags. The
  // model's maxAspectRatio stays as is: it is where the process physically stops, not a flag limit.
  const predictionModel: ProcessModel = { ...model, etch: { ...model.etch, targetDepthUm: limits.targetDepthUm, toleranceUm: limits.toleranceUm } };
  const set = precomputed ? null : selectEtchLayers(layout, settings.etchLayers);
  const frame = dieFrame(layout, settings);
  const { grid } = frame;
  const polarity = settings.polarity;

  clock.begin('coverage');
  const regionDbu = layout.bboxDbu ?? undefined;
  // One exact union of the etch layers serves coverage and features (it is the expensive part on big layouts).
  // The union and raster splits have a large fixed cost: only when the machine has a core to spare.
  const coverageHelper = helper && secondCoreFree() ? helper : null;
  const regions = set ? openRegionsInThreads(set, layout.dbuUm, { polarity, regionDbu }, coverageHelper) : null;
  clock.within(0.7); // cancel check point between the union and the raster (each can take seconds)
  const coverage = regions ? coverageInThreads(regions, grid, coverageHelper) : (precomputed as PrecomputedStages).coverage;
  const globalDensity = dieDensity(coverage, grid, frame.dieBboxUm);

  // Whole computations go to the helper only for big layouts (small ones are done before a message would arrive).
  const offloadTo = helper && set && set.count >= MIN_HELPER_POLYGONS ? helper : null;

  clock.begin('window-density');
  // The convolution runs on the helper thread while this thread computes the windows.
  const effectiveLater = effectiveOffloaded(offloadTo, coverage, grid, { lengthUm: kernel.lengthUm, kernel: kernel.kind, outside: kernel.outside });
  const regionCoverage = dieRegionCoverage(grid, frame.dieBboxUm);
  const windows: WindowDensity[] = settings.densityWindows.map((w, n) => {
    clock.within(n / settings.densityWindows.length);
    return windowDensity(coverage, grid, {
      windowUm: w.windowUm,
      stepUm: w.stepUm,
      // No origin given: the geometry engine uses the grid's lower-left corner, which is the die's.
      ...(settings.windowOriginUm ? { originUm: settings.windowOriginUm } : {}),
      edge: settings.windowEdge,
      ...(regionCoverage ? { regionCoverage } : {}),
      regionName: 'the die extent (layout bounding box)',
    });
  });

  clock.begin('effective-density');
  const effective = effectiveLater();

  clock.begin('features');
  // Two threads on big layouts, same result. The local-width map (needs only the coverage) is computed on this
  // thread while the worker starts and takes chunks; its time then counts under 'features'. A tiled run brings its
  // stitched openings instead (precomputed).
  let localWidth: Float32Array | null = null;
  const given = precomputed?.features;
  const streamed = given && 'forEachChunk' in given ? given : null;
  const featureTable = regions
    ? featureTableInThreads(regions, { polarity, regionDbu }, {}, () => (localWidth = localWidthFromCoverage(coverage, grid)), helper)
    : (given as FeatureTable);

  clock.begin('local-width');
  localWidth ??= localWidthFromCoverage(coverage, grid);

  if (streamed) {
    // Prediction, maps, flags and summary tallies in one pass over the chunks (timed as 'prediction').
    clock.begin('prediction');
    const collector = new FlagCollector(settings.maxListedFlags);
    addWindowFlags(collector, windows, frame.dieBboxUm, limits, settings.severities);
    const out = runStreamedStages(
      streamed,
      { effective, coverage, grid, model: predictionModel, exposedFraction: globalDensity, limits, severities: settings.severities, maxListedFlags: settings.maxListedFlags, onTick: (done, total) => clock.within(total > 0 ? done / total : 1) },
      collector,
    );
    clock.begin('flags');
    const flags = collector.list(out.resolve);
    clock.begin('summary');
    const maps = buildMaps(grid, coverage, windows, effective, localWidth, out.painted, { kernelLengthUm: kernel.lengthUm, kernel: kernel.kind, modelName: model.name, modelVersion: model.version });
    const summary = buildSummary({ layout, etchLayerNames: settings.etchLayers.map(layerName), polygonCount: (precomputed as PrecomputedStages).polygonCount, frame, settings, limits, model, globalDensity, windows, effective, kernel, results: out.tally, flagCounts: collector.counts, flagTotal: collector.total, flagsListed: flags.length, timingsMs: clock.timingsMs });
    clock.finish();
    summary.timingsMs = { ...clock.timingsMs };
    const none = noFeatureResults(calibratedRangeOf(predictionModel));
    return { summary, featureTable: none, features: [], flags, maps };
  }

  clock.begin('prediction');
  const results = predictInThreads(featureTable, effective, grid, predictionModel, {
    exposedFraction: globalDensity,
    onTick: (done, total) => clock.within(total > 0 ? done / total : 1),
  }, helper ?? null);

  clock.begin('maps');
  const n = results.count;
  const risks = new Float64Array(offloadTo ? new SharedArrayBuffer(8 * n) : new ArrayBuffer(8 * n));
  const riskInput = { depthUm: 0, overEtchUm: 0, widthUm: 0 };
  for (let k = 0; k < n; k++) {
    riskInput.depthUm = results.depthUm[k] as number;
    riskInput.overEtchUm = results.overEtchUm[k] as number;
    riskInput.widthUm = results.widthUm[k] as number;
    risks[k] = featureRisk(riskInput, limits);
  }
  // Painted on the helper thread while this thread collects the flags.
  const paintedLater = paintOffloaded(offloadTo, paintColumnsOf(results), risks, coverage, grid);

  clock.begin('flags');
  const collector = new FlagCollector(settings.maxListedFlags);
  const sev = settings.severities;
  addWindowFlags(collector, windows, frame.dieBboxUm, limits, sev);
  const resolve = offerTableFlags(collector, results, limits, sev, (k) => clock.within(k / Math.max(1, n)));
  const flags = collector.list(resolve);

  clock.begin('summary');
  const painted = paintedLater();
  const maps = buildMaps(grid, coverage, windows, effective, localWidth, painted, { kernelLengthUm: kernel.lengthUm, kernel: kernel.kind, modelName: model.name, modelVersion: model.version });
  const summary = buildSummary({
    layout,
    etchLayerNames: settings.etchLayers.map(layerName),
    polygonCount: set ? set.count : (precomputed as PrecomputedStages).polygonCount,
    frame,
    settings,
    limits,
    model,
    globalDensity,
    windows,
    effective,
    kernel,
    results,
    flagCounts: collector.counts,
    flagTotal: collector.total,
    flagsListed: flags.length,
    timingsMs: clock.timingsMs,
  });
  clock.finish();
  summary.timingsMs = { ...clock.timingsMs };
  let list: FeatureResult[] | undefined;
  return {
    summary,
    featureTable: results,
    get features() {
      return (list ??= featureResultList(results));
    },
    flags,
    maps,
  };
}

function addWindowFlags(collector: FlagCollector, windows: WindowDensity[], dieBboxUm: [number, number, number, number], limits: ReturnType<typeof resolveLimits>, sev: AnalysisSettings['severities']): void {
  for (const w of windows) {
    const input: WindowSetInput = { ...w, dieBboxUm };
    collector.add(windowDensityFlags(input, limits, sev));
    collector.add(densityGradientFlags(input, limits.maxGradient, sev));
  }
}

/**
 * Fraction of each pixel inside the die, or null when the grid fits the die exactly (then the grid extent is the
 * die and the geometry engine's default denominator is right).
 */
export function dieRegionCoverage(grid: Grid, dieBboxUm: [number, number, number, number]): Float32Array | null {
  const { x0Um, y0Um, pixelUm: p, nx, ny } = grid;
  const [dx0, dy0, dx1, dy1] = dieBboxUm;
  const tol = 1e-9 * p;
  if (x0Um + nx * p <= dx1 + tol && y0Um + ny * p <= dy1 + tol) return null;
  const inside = (lo: number, a: number, b: number) => Math.max(0, Math.min(lo + p, b) - Math.max(lo, a)) / p;
  const out = new Float32Array(nx * ny);
  for (let j = 0; j < ny; j++) {
    const fy = inside(y0Um + j * p, dy0, dy1);
    for (let i = 0; i < nx; i++) out[j * nx + i] = fy * inside(x0Um + i * p, dx0, dx1);
  }
  return out;
}

/**
 * Open area / die area. Everything open lies inside the die by construction (clear: the die is the bounding box
 * of all shapes; dark: the open region is the die minus the shapes), so pixels reaching past the die's edge carry
 * no open area there and the sum over the grid is the die's open area.
 */
export function dieDensity(coverage: Float32Array, grid: Grid, dieBboxUm: [number, number, number, number]): number {
  let open = 0;
  for (let k = 0; k < coverage.length; k++) open += coverage[k] as number;
  const dieArea = (dieBboxUm[2] - dieBboxUm[0]) * (dieBboxUm[3] - dieBboxUm[1]);
  return Math.min(1, (open * grid.pixelUm * grid.pixelUm) / dieArea);
}

function windowGeometry(w: WindowDensity): Grid {
  // One pixel per window, centred on the window's centre: pixel (i, j) is centred at origin + i·step + window/2.
  return { x0Um: w.originUm[0] + w.windowUm / 2 - w.stepUm / 2, y0Um: w.originUm[1] + w.windowUm / 2 - w.stepUm / 2, pixelUm: w.stepUm, nx: w.nx, ny: w.ny };
}

function buildMaps(
  grid: Grid,
  coverage: Float32Array,
  windows: WindowDensity[],
  effective: Float32Array,
  localWidth: Float32Array,
  painted: FeatureMaps,
  meta: { kernelLengthUm: number; kernel: string; modelName: unknown; modelVersion: unknown },
): GridMap[] {
  const model = { model: meta.modelName ?? null, modelVersion: meta.modelVersion ?? null };
  return [
    { kind: 'coverage', unit: 'fraction', grid, meta: {}, values: coverage },
    ...windows.map(
      (w): GridMap => ({
        kind: 'window-density',
        unit: 'fraction',
        grid: windowGeometry(w),
        meta: { windowUm: w.windowUm, stepUm: w.stepUm, originUm: w.originUm, edge: w.edge, pixelIsWindowCentre: true, nan: 'no window area' },
        values: Float32Array.from(w.values),
      }),
    ),
    { kind: 'effective-density', unit: 'fraction', grid, meta: { kernel: meta.kernel, lengthUm: meta.kernelLengthUm }, values: effective },
    { kind: 'local-width', unit: 'um', grid, meta: { zero: 'outside openings' }, values: localWidth },
    { kind: 'aspect-ratio', unit: 'ratio', grid, meta: { ...model, nan: 'no opening', definition: 'predicted depth / width' }, values: painted.aspectRatio },
    { kind: 'predicted-depth', unit: 'um', grid, meta: { ...model, nan: 'no opening' }, values: painted.predictedDepth },
    { kind: 'risk', unit: 'score', grid, meta: { ...model, nan: 'no opening', scale: '1 = at a limit' }, values: painted.risk },
    ...(painted.depthSigma ? [{ kind: 'depth-uncertainty', unit: 'um', grid, meta: { ...model, nan: 'no opening', definition: 'standard deviation of the predicted depth from the calibration covariance; 95 % band = ±1.96 σ' }, values: painted.depthSigma } satisfies GridMap] : []),
  ];
}
