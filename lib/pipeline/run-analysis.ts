/**
 * The product's main job, as one pure function over in-memory data: flattened layout + settings + process model →
 * summary, per-feature results, flags and result maps. No Node, DB or server imports: the worker, the check
 * command and tests all call this.
 *
 * Stages, always in this order (ANALYSIS_STAGES): coverage → window-density → effective-density → features →
 * local-width → prediction → maps → flags → summary. `onProgress(stage, fraction)` is called when each stage starts,
 * a few times inside the long ones, and once more with ('done', 1); `fraction` is the overall progress 0..1 and
 * never decreases. `signal` and `isCancelled` are checked between stages and every few thousand features; an abort
 * throws AnalysisAbortedError (name 'AbortError').
 */
import { effectiveDensity, localWidthFromCoverage, openRegions, rasterizeOpenRegions, windowDensity, type Feature, type Grid, type WindowDensity } from '../geometry';
import { featuresInThreads } from '../geometry/parallel-features';
import type { ProcessModel } from '../etch';
import type { FlatLayout } from '../layout/types';
import { AnalysisAbortedError } from './errors';
import { dieFrame, layerName, selectEtchLayers } from './etch-layers';
import { densityGradientFlags, FlagCollector, featureFlagsInto, windowDensityFlags, type FeatureCheckInput, type Flag, type WindowSetInput } from './flags';
import type { GridMap } from './grid-file';
import { predictFeatures, type FeatureResult } from './predict-features';
import { featureRisk, paintFeatureMaps } from './result-maps';
import { resolveKernel, resolveLimits, type AnalysisSettings } from './settings';
import { buildSummary, type AnalysisSummary } from './summary';

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
}

export interface AnalysisResult {
  summary: AnalysisSummary;
  /** One entry per extracted opening, in feature id order. */
  features: FeatureResult[];
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
  features: Feature[];
  /** Polygons of the etch layers (what selectEtchLayers would count). */
  polygonCount: number;
}

export function runAnalysis(layout: FlatLayout, settings: AnalysisSettings, model: ProcessModel, hooks: AnalysisHooks = {}, precomputed?: PrecomputedStages): AnalysisResult {
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
  const regions = set ? openRegions(set, layout.dbuUm, { polarity, regionDbu }) : null;
  clock.within(0.7); // cancel check point between the union and the raster (each can take seconds)
  const coverage = regions ? Float32Array.from(rasterizeOpenRegions(regions, grid)) : (precomputed as PrecomputedStages).coverage;
  const globalDensity = dieDensity(coverage, grid, frame.dieBboxUm);

  clock.begin('window-density');
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
  const effective = effectiveDensity(coverage, grid, { lengthUm: kernel.lengthUm, kernel: kernel.kind, outside: kernel.outside });

  clock.begin('features');
  const features = regions ? featuresInThreads(regions, { polarity, regionDbu }) : (precomputed as PrecomputedStages).features; // two threads on big layouts, same result

  clock.begin('local-width');
  const localWidth = localWidthFromCoverage(coverage, grid);

  clock.begin('prediction');
  const results = predictFeatures(features, effective, grid, predictionModel, {
    exposedFraction: globalDensity,
    onTick: (done, total) => clock.within(total > 0 ? done / total : 1),
  });

  clock.begin('maps');
  const risks = new Float64Array(results.length);
  for (let k = 0; k < results.length; k++) risks[k] = featureRisk(results[k] as FeatureResult, limits);
  const painted = paintFeatureMaps(results, risks, coverage, grid);

  clock.begin('flags');
  const collector = new FlagCollector(settings.maxListedFlags);
  const sev = settings.severities;
  for (const w of windows) {
    const input: WindowSetInput = { ...w, dieBboxUm: frame.dieBboxUm };
    collector.add(windowDensityFlags(input, limits, sev));
    collector.add(densityGradientFlags(input, limits.maxGradient, sev));
  }
  // One input object refilled per opening: the collector builds a kept flag (copying what it needs) inside offer(),
  // so nothing holds on to it, and a million openings do not cost a million short-lived objects.
  const input: FeatureCheckInput = { featureId: 0, shape: '', modelKind: 'trench', bboxUm: [0, 0, 0, 0], centroidUm: [0, 0], widthUm: 0, depthUm: 0, overEtchUm: 0, excursions: [], depthSigmaUm: null };
  for (let k = 0; k < results.length; k++) {
    if (k % 4096 === 0) clock.within(k / Math.max(1, results.length));
    const r = results[k] as FeatureResult;
    input.featureId = r.id;
    input.shape = r.shape;
    input.modelKind = r.modelKind;
    input.bboxUm = r.bboxUm;
    input.centroidUm = r.centroidUm;
    input.widthUm = r.widthUm;
    input.depthUm = r.depthUm;
    input.overEtchUm = r.overEtchUm;
    input.excursions = r.excursions;
    input.depthSigmaUm = r.depthSigmaUm;
    featureFlagsInto(collector, input, limits, sev);
  }
  const flags = collector.list();

  clock.begin('summary');
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
  return { summary, features: results, flags, maps };
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
  painted: ReturnType<typeof paintFeatureMaps>,
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
