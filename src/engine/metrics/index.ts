/**
 * Model-evaluation metrics for labels and probabilities of any origin (Oddsmith fits or elsewhere).
 * One function per file; inputs are typed arrays (0/1 Float64Array labels for binary metrics,
 * Int32Array class indices plus one probability column per class for multi-class ones) with optional
 * case weights. Bad input throws an OddsmithError from the message catalogue.
 */
export { logLoss, type LogLossOptions, type LogLossResult } from "./logLoss";
export { multiclassLogLoss } from "./multiclassLogLoss";
export { brierScore, type BrierOptions, type MeanScore } from "./brierScore";
export { multiclassBrierScore } from "./multiclassBrierScore";
export { accuracy } from "./accuracy";
export { multiclassAccuracy } from "./multiclassAccuracy";
export { confusionCounts, type ConfusionCounts, type ThresholdOptions } from "./confusionCounts";
export { confusionMatrix, type ConfusionMatrix, type MulticlassOptions } from "./confusionMatrix";
export { rocAuc, type RocAucOptions, type RocAucResult } from "./rocAuc";
export { rocCurve, type RocCurve, type RocCurveOptions } from "./rocCurve";
export {
  calibrationTable,
  CALIBRATION_GROUPING_RULE,
  type CalibrationGroup,
  type CalibrationTable,
  type CalibrationTableOptions,
} from "./calibrationTable";
export { hosmerLemeshow, type HosmerLemeshowOptions, type HosmerLemeshowResult } from "./hosmerLemeshow";
export {
  calibrationSlope,
  type CalibrationCoefficient,
  type CalibrationSlopeOptions,
  type CalibrationSlopeResult,
} from "./calibrationSlope";
export { PROBABILITY_SUM_TOLERANCE } from "./checkMulticlassInputs";
