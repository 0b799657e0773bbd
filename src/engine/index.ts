/**
 * The engine's public surface: everything code outside src/engine (cell functions, task pane, fit
 * cache, preview) may use. Internal modules are free to change behind it; add an export here only
 * when an outside caller needs it.
 */
export { sourcesOf } from "./basis";
export type { BasisColumn, RowNote } from "./basis/common";
export { TRANSFORM_NAMES, applyRecipe, fitRecipe, parseRecipe } from "./basis/recipe";
export type { RecipeState } from "./basis/recipe";
export { nearBoundaryRows } from "./boundary";
export type { BoundaryReview } from "./boundary";
export { agreeHeaders } from "./data/alignRanges";
export { compareText, matchClass, readLabels } from "./data/labels";
export type { LabelInfo } from "./data/labels";
export { isBlankCell, parseNumericText, rangeRow, readTable } from "./data/table";
export type { HeaderEvidence, Table, TableColumn } from "./data/table";
export { INTERCEPT_TERM } from "./inference";
export { wasmKernels } from "./kernels/wasmKernels";
export { MESSAGES, OddsmithError, formatMessage, listNames, problem } from "./messages";
export type { CellErrorKind, MessageCode } from "./messages";
export { accuracy } from "./metrics/accuracy";
export { brierScore } from "./metrics/brierScore";
export { calibrationTable } from "./metrics/calibrationTable";
export { confusionCounts } from "./metrics/confusionCounts";
export { confusionMatrix } from "./metrics/confusionMatrix";
export { hosmerLemeshow } from "./metrics/hosmerLemeshow";
export type { HosmerLemeshowResult } from "./metrics/hosmerLemeshow";
export { logLoss } from "./metrics/logLoss";
export { multiclassAccuracy } from "./metrics/multiclassAccuracy";
export { multiclassBrierScore } from "./metrics/multiclassBrierScore";
export { multiclassLogLoss } from "./metrics/multiclassLogLoss";
export { rocAuc } from "./metrics/rocAuc";
export { scoreRows, trainModel } from "./model";
export type { ModelOptions, RowScores, TrainedModel } from "./model";
export { logSumExp, sigmoid } from "./numerics";
export type { CellValue, CoefficientRow, Diagnostic, ModelFit } from "./types";
