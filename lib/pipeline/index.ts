/**
 * Analysis pipeline (pure part: no Node, DB or server imports). Node-only pieces are imported by path:
 * `lib/pipeline/grid-file-node` (map files on disk) and `lib/pipeline/worker` (piscina worker entry).
 */
export {
  analysisSettingsSchema,
  parseAnalysisSettings,
  resolveLimits,
  resolveKernel,
  choosePixelUm,
  niceCeil,
  lengthGcdUm,
  DEFAULT_DENSITY_WINDOWS,
  FLAG_KINDS,
  FLAG_SEVERITIES,
  SETTINGS_VERSION,
  type AnalysisSettings,
  type AnalysisSettingsInput,
  type DensityWindowSetting,
  type FieldIssue,
  type FlagKind,
  type LayerRef,
  type ParseSettingsResult,
  type ResolvedKernel,
  type ResolvedLimits,
  type Severity,
} from './settings';
export {
  DEFAULT_SEVERITY,
  featureFlags,
  windowDensityFlags,
  densityGradientFlags,
  requiredAspectRatio,
  compareFlags,
  exceedance,
  emptyFlagCounts,
  FlagCollector,
  type Flag,
  type FlagCounts,
  type FlagUnit,
  type FeatureCheckInput,
  type RangeExcursion,
  type SeverityMap,
  type WindowSetInput,
} from './flags';
export { encodeGrid, decodeGrid, GridFileError, GRID_KINDS, GRID_MAGIC, type GridKind, type GridMap, type GridGeometry, type GridUnit } from './grid-file';
export { mapFileName } from './map-files';
export { runAnalysis, ANALYSIS_STAGES, dieDensity, dieRegionCoverage, type AnalysisHooks, type AnalysisResult, type AnalysisStage } from './run-analysis';
export type { AnalysisSummary, DepthSummary, WindowSummary } from './summary';
export type { FeatureResult, ModelKind } from './predict-features';
export { predictFeatureTable } from './predict-features';
export {
  concatFeatureResultTables,
  featureResultAt,
  featureResultList,
  noFeatureResults,
  MODEL_KINDS,
  RESULT_F64_COLUMNS,
  type FeatureResultTable,
} from './feature-results';
export { featureRisk, RISK_CAP } from './result-maps';
export { AnalysisAbortedError, AnalysisInputError, isAbortError, type AnalysisInputErrorCode } from './errors';
