/** Etch model: transport (ARDE), loading, depth over time, cyclic mode, calibration and width rules. */
export { holeTransmission, slotTransmission, transmission, clausingFactorBerman, type FeatureKind } from './transmission';
export { bottomNeutralFluxRatio } from './neutral-flux';
export { stripViewFactor, diskViewFactor, diskToDiskViewFactor } from './view-factor';
export {
  trenchIonCentreFraction,
  holeIonCentreFraction,
  trenchIonMeanFraction,
  holeIonMeanFraction,
  ionFluxRatio,
  cosineExponent,
  type IonAngularDistribution,
  type IonFluxSite,
} from './ion-flux';
export { globalLoadingFactor, localLoadingFactor, loadingFactor, type LoadingForm } from './loading';
export { ardeFactor, ionEnhancedRatio, createArdeEvaluators, type ArdeParameters, type ArdeEvaluator } from './rate';
export { depthAtTime, timeToDepthMin, timeBetweenDepthsMin, rateThresholdDepthUm, adaptiveIntegral, type RateFunction, type DepthAtTime } from './depth-integrator';
export { runCycles, scallopDepthUm, type CyclicRun, type CycleSteps } from './cyclic';
export {
  processModelSchema,
  parseProcessModel,
  formatModelIssues,
  type ProcessModel,
  type ProcessModelInput,
  type ModelIssue,
} from './process-model';
export { createFeaturePredictor, type FeaturePredictor } from './fast-predict';
export { densityLimits, densityLimitsToCsv, type DensityLimits, type DensityLimitRow, type DensityLimitsOptions } from './density-limits';
export { predictFeature, predictDepthUm, ETCH_CAUTION, NO_WARNINGS, type FeatureInput, type FeaturePrediction, type StopReason, type PredictOptions } from './predict';
export { parseCalibrationCsv, calibrationRowsToCsv, CalibrationCsvError, type CalibrationRow } from './calibration-csv';
export { parseCalibrationCsvReport, type CalibrationCsvIssue, type CalibrationCsvReport } from './calibration-csv';
export { createDepthUncertainty, modelCovariance, DEPTH_BAND_K, type DepthUncertainty, type UncertainParameter } from './uncertainty';
export {
  fitCalibration,
  underdeterminedReason,
  type CalibrationOptions,
  type CalibrationFit,
  type CalibrationRefusal,
  type FitParameter,
  type FittedValue,
  type CalibrationResidual,
} from './calibrate';
export { widthRules, widthRulesToCsv, widthRulesToJson, type WidthRules, type WidthRuleRow, type WidthRulesOptions } from './width-rules';
