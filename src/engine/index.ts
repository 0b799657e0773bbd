/**
 * The engine's public surface: everything code outside src/engine (cell functions, task pane, fit
 * cache, preview) may use. Internal modules are free to change behind it; add an export here only
 * when an outside caller needs it.
 */
export { sourcesOf } from "./basis";
export type { BasisColumn, RowNote } from "./basis/common";
export { TRANSFORM_NAMES, applyRecipe, fitRecipe, parseRecipe } from "./basis/recipe";
export { estimateRecipeColumns } from "./basis/recipeSize";
export { FIRTH_WORK_LIMIT } from "./data/fitWork";
export type { RecipeState } from "./basis/recipe";
export { nearBoundaryRows } from "./boundary";
export type { BoundaryReview } from "./boundary";
export { agreeHeaders } from "./data/alignRanges";
export { compareText, MAX_CLASSES, matchClass, readLabels } from "./data/labels";
export type { LabelInfo } from "./data/labels";
export { errorLiteral, isBlankCell, parseNumericText, rangeRow, readTable } from "./data/table";
export type { HeaderEvidence, Table, TableColumn } from "./data/table";
export { INTERCEPT_TERM } from "./inference";
export { wasmKernels } from "./kernels/wasmKernels";
export { ENGINE_MESSAGES, OddsmithError, fillTemplate, listNames } from "./messages";
export type { CellErrorKind, MessageEntry, MessageCode as EngineMessageCode } from "./messages";
export { accuracy } from "./metrics/accuracy";
export { brierScore } from "./metrics/brierScore";
export { calibrationSlope } from "./metrics/calibrationSlope";
export type { CalibrationSlopeResult } from "./metrics/calibrationSlope";
export { CALIBRATION_GROUPING_RULE, calibrationTable } from "./metrics/calibrationTable";
export type { CalibrationTable } from "./metrics/calibrationTable";
export { confusionCounts } from "./metrics/confusionCounts";
export type { ConfusionCounts } from "./metrics/confusionCounts";
export { confusionMatrix } from "./metrics/confusionMatrix";
export { hosmerLemeshow } from "./metrics/hosmerLemeshow";
export type { HosmerLemeshowResult } from "./metrics/hosmerLemeshow";
export { logLoss } from "./metrics/logLoss";
export { multiclassAccuracy } from "./metrics/multiclassAccuracy";
export { multiclassBrierScore } from "./metrics/multiclassBrierScore";
export { multiclassLogLoss } from "./metrics/multiclassLogLoss";
export { rocAuc } from "./metrics/rocAuc";
export type { RocAucResult } from "./metrics/rocAuc";
export { rocCurve } from "./metrics/rocCurve";
export type { RocCurve } from "./metrics/rocCurve";
export { scoreRows, trainModel } from "./model";
export type { ModelOptions, RowScores, TrainedModel } from "./model";
export { logSumExp, sigmoid } from "./numerics";
export type { CellValue, CoefficientRow, Diagnostic, ModelFit } from "./types";
export { chooseThreshold } from "./evaluation/chooseThreshold";
export type { ThresholdChoice, ThresholdRule } from "./evaluation/chooseThreshold";
export { crossValidate, crossValidationSteps, DEFAULT_FOLDS, DEFAULT_SEED } from "./evaluation/crossValidate";
export type { CrossValidationRequest, CrossValidationResult, CvStep, PenaltyScores } from "./evaluation/crossValidate";
export { CELL_BUDGET, PANE_BUDGET } from "./evaluation/cvWork";
export type { WorkBudget } from "./evaluation/cvWork";
export { tableBasisColumns } from "./evaluation/foldPredictors";
export type { FoldSummary } from "./evaluation/foldSummary";
export type { HeldOutScores } from "./evaluation/heldOutScores";
export { choosePenalty } from "./evaluation/penaltyChoice";
export { givenPenalties, logSpacedPenalties, MAX_PENALTIES } from "./evaluation/penaltyGrid";
export { MAX_FOLDS, MIN_FOLDS } from "./evaluation/stratifiedFolds";
export { EFFECTS_WORK_LIMIT, averageMarginalEffects } from "./evaluation/marginalEffects";
export type { AverageEffectsOptions, MarginalEffect, MarginalEffects } from "./evaluation/marginalEffects";
