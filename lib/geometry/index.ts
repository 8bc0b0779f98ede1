/** Geometry engine: exact coverage, window and effective density, features, widths. Pure TS, worker-safe. */
export type { Box, Feature, FeatureKind, Grid, Polarity, WindowCell, WindowDensity } from './types';
export { ringArea, ringPerimeter, ringMoments } from './ring';
export { openRegions, openArea, setBbox, type OpenRegions, type OpenRegionsOptions } from './open-regions';
export { unionArea, layerSummary, type LayerSummaryRow } from './union-area';
export { coverageRaster, coverageRaster64, rasterizeOpenRegions, gridExtentDbu, type CoverageOptions } from './raster';
export { windowDensity, summedAreaTable, windowCount, type WindowDensityOptions } from './window-density';
export { effectiveDensity, convolve2d, densityKernel, reflectIndex, erf, KERNEL_RADIUS_IN_L, MIN_L_PIXELS, type EffectiveDensityOptions, type KernelShape } from './convolve';
export { squaredDistanceTransform, thicknessTransform } from './distance';
export { latticeInterior, type Lattice } from './lattice';
export { featureWidths, shapeKey, type WidthCache, type WidthOptions, type WidthResult } from './widths';
export { extractFeatures, featuresFromRegions, classifyFeature, numberFeatures, type FeatureOptions } from './features';
export { extractFeatureTable, featureTableFromRegions } from './features';
export {
  FEATURE_KINDS,
  FEATURE_F64_COLUMNS,
  FeatureTableBuilder,
  concatFeatureTables,
  emptyFeatureTable,
  featureAt,
  featureColumns,
  featureIdOrder,
  featureKindCode,
  featureList,
  featureTableOf,
  numberFeatureTable,
  permuteFeatureTable,
  sliceFeatureTable,
  trimFeatureTable,
  type FeatureRow,
  type FeatureTable,
} from './feature-table';
export { localWidthMap, localWidthFromCoverage } from './local-width';
export { FeatureIndex } from './feature-index';
export { gridForBox, alignedPixelUm, lengthGcd } from './grid';
export { convexInscribedRadius, isConvexRing } from './convex-width';
