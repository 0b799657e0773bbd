/**
 * Oddsmith's cell functions (namespace ODDS).
 *
 * This file only declares the functions Excel sees. Their JSDoc IS the metadata (functions.json is
 * generated from it by CustomFunctionsMetadataPlugin) and the user's tooltip. Each body calls a pure
 * adapter (2-D arrays in, 2-D array out) through `runCell`, which turns a thrown problem into a cell
 * error with its catalogue message. The preview workbench calls the same adapters through registry.ts.
 *
 * Metadata rules kept here (see docs/platform-notes): top-level `function` declarations only; the
 * description comes BEFORE @customfunction; ranges are typed `any[][]`; an omitted optional argument
 * arrives as null (TypeScript defaults never apply); ids never change once published.
 */
/* eslint-disable @typescript-eslint/no-explicit-any */
import { runCell } from "./cellError";
import { CELL_FUNCTIONS_BY_NAME as F } from "./registry";

/**
 * Fits a logistic (two classes) or softmax (three or more classes) classifier and spills its coefficient table: coefficient, standard error, z, p, interval and odds ratio (relative-risk ratio for several classes) per term.
 * @customfunction FIT FIT
 * @helpurl https://localhost:3000/help.html#fit
 * @param labels Label column: one class per row (text, numbers or TRUE/FALSE), with or without a header.
 * @param predictors Predictor columns, one row per label; a header row names the terms. Text columns become indicator terms.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "positive=yes; level=0.9; firth=true".
 * @returns Coefficient table with a header row.
 */
export function fit(labels: any[][], predictors: any[][], options?: any[][]): any[][] {
  return runCell(F.FIT.doing, () => F.FIT.adapter(labels, predictors, options ?? null));
}

/**
 * Probabilities from a fitted classifier: for each training row (aligned with the input, blank where a row was skipped) or for new rows. One column (positive class) for two classes, one column per class otherwise.
 * @customfunction PROB PROB
 * @helpurl https://localhost:3000/help.html#prob
 * @param labels Label column used for fitting.
 * @param predictors Predictor columns used for fitting.
 * @param [new_rows] Rows to score, with the same header names as the predictors. Leave out to score the training rows.
 * @param [options] Settings as text "name=value; ..." or a two-column range.
 * @returns Probabilities with a header row naming the class.
 */
export function prob(labels: any[][], predictors: any[][], new_rows?: any[][], options?: any[][]): any[][] {
  return runCell(F.PROB.doing, () => F.PROB.adapter(labels, predictors, new_rows ?? null, options ?? null));
}

/**
 * Predicted class of each training row (aligned with the input) or of new rows: for two classes the positive class when its probability reaches the threshold, otherwise the most probable class.
 * @customfunction CLASS CLASS
 * @helpurl https://localhost:3000/help.html#class
 * @param labels Label column used for fitting.
 * @param predictors Predictor columns used for fitting.
 * @param [new_rows] Rows to classify, with the same header names as the predictors. Leave out to classify the training rows.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "threshold=0.3".
 * @returns Predicted classes with a header row.
 */
export function predictClass(labels: any[][], predictors: any[][], new_rows?: any[][], options?: any[][]): any[][] {
  return runCell(F.CLASS.doing, () => F.CLASS.adapter(labels, predictors, new_rows ?? null, options ?? null));
}

/**
 * Distance of each row to the decision boundary: |probability - threshold| for two classes, the gap between the two largest class probabilities otherwise. Small margins mark borderline rows.
 * @customfunction MARGIN MARGIN
 * @helpurl https://localhost:3000/help.html#margin
 * @param labels Label column used for fitting.
 * @param predictors Predictor columns used for fitting.
 * @param [new_rows] Rows to measure, with the same header names as the predictors. Leave out to use the training rows.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "threshold=0.3".
 * @returns Margins with a header row.
 */
export function margin(labels: any[][], predictors: any[][], new_rows?: any[][], options?: any[][]): any[][] {
  return runCell(F.MARGIN.doing, () => F.MARGIN.adapter(labels, predictors, new_rows ?? null, options ?? null));
}

/**
 * Fit statistics as a two-column table: rows used and skipped, classes, iterations, convergence, log-likelihood, deviance, AIC, BIC, pseudo-R2, likelihood-ratio test, log-loss, Brier score, accuracy, AUC and every diagnostic in words.
 * @customfunction REPORT REPORT
 * @helpurl https://localhost:3000/help.html#report
 * @param labels Label column used for fitting.
 * @param predictors Predictor columns used for fitting.
 * @param [options] Settings as text "name=value; ..." or a two-column range.
 * @returns Two columns: statistic and value.
 */
export function report(labels: any[][], predictors: any[][], options?: any[][]): any[][] {
  return runCell(F.REPORT.doing, () => F.REPORT.adapter(labels, predictors, options ?? null));
}

/**
 * Log-loss (mean negative log-likelihood) of predicted probabilities against the actual labels. Lower is better.
 * @customfunction LOGLOSS LOGLOSS
 * @helpurl https://localhost:3000/help.html#logloss
 * @param labels Actual classes, one per row.
 * @param probabilities Predicted probabilities: one column (positive class) for two classes, or one column per class with a header row naming the classes.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "positive=yes".
 * @returns The log-loss.
 */
export function logLoss(labels: any[][], probabilities: any[][], options?: any[][]): any[][] {
  return runCell(F.LOGLOSS.doing, () => F.LOGLOSS.adapter(labels, probabilities, options ?? null));
}

/**
 * Area under the ROC curve of predicted probabilities against two-class labels, with a DeLong confidence interval.
 * @customfunction AUC AUC
 * @helpurl https://localhost:3000/help.html#auc
 * @param labels Actual classes (two), one per row.
 * @param probabilities Predicted probability of the positive class, one per row.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "positive=yes; level=0.9".
 * @returns AUC, lower and upper interval ends, with a header row.
 */
export function auc(labels: any[][], probabilities: any[][], options?: any[][]): any[][] {
  return runCell(F.AUC.doing, () => F.AUC.adapter(labels, probabilities, options ?? null));
}

/**
 * Confusion counts of actual against predicted classes at a threshold, with sensitivity, specificity, precision and accuracy.
 * @customfunction CONFUSION CONFUSION
 * @helpurl https://localhost:3000/help.html#confusion
 * @param labels Actual classes, one per row.
 * @param probabilities Predicted probabilities: one column (positive class) for two classes, or one column per class with a header row naming the classes.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "threshold=0.3; positive=yes".
 * @returns Count table and rates.
 */
export function confusion(labels: any[][], probabilities: any[][], options?: any[][]): any[][] {
  return runCell(F.CONFUSION.doing, () => F.CONFUSION.adapter(labels, probabilities, options ?? null));
}

/**
 * Calibration table: rows grouped by predicted probability, with mean predicted and observed rates per group, and the Hosmer-Lemeshow test.
 * @customfunction CALIBRATION CALIBRATION
 * @helpurl https://localhost:3000/help.html#calibration
 * @param labels Actual classes (two), one per row.
 * @param probabilities Predicted probability of the positive class, one per row.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "groups=10; positive=yes".
 * @returns One row per group and the test result.
 */
export function calibration(labels: any[][], probabilities: any[][], options?: any[][]): any[][] {
  return runCell(F.CALIBRATION.doing, () => F.CALIBRATION.adapter(labels, probabilities, options ?? null));
}

/**
 * Probabilities from a coefficient table already on the sheet (for example the output of ODDS.FIT, edited or copied), so a model can live in cells.
 * @customfunction SCORE SCORE
 * @helpurl https://localhost:3000/help.html#score
 * @param coefficients Coefficient table with a header row holding at least "term" and "coefficient" (and "class" for several classes).
 * @param rows Rows to score, with a header row whose names match the terms.
 * @returns Probabilities with a header row naming the class.
 */
export function score(coefficients: any[][], rows: any[][]): any[][] {
  return runCell(F.SCORE.doing, () => F.SCORE.adapter(coefficients, rows));
}

/**
 * Builds non-linear basis columns (polynomials, splines and other transforms) from data columns following a recipe, with a header row naming each new column.
 * @customfunction BASIS BASIS
 * @helpurl https://localhost:3000/help.html#basis
 * @param data Columns to transform, with a header row.
 * @param recipe The transforms as text, e.g. "age: ns(4); income: log + z; region: levels".
 * @param [training_data] Columns the recipe was fitted on (knots, centres, scales); leave out to fit on data.
 * @returns Basis columns with a header row.
 */
export function basis(data: any[][], recipe: any[][], training_data?: any[][]): any[][] {
  return runCell(F.BASIS.doing, () => F.BASIS.adapter(data, recipe, training_data ?? null));
}

// ---- Evaluation functions (issue 13) ----

/**
 * Chooses a decision threshold for two-class probabilities: least expected cost for a cost ratio of false positives to false negatives, a target sensitivity, or a review budget of rows; spills the confusion counts at it.
 * @customfunction CUTOFF CUTOFF
 * @helpurl https://localhost:3000/help.html#cutoff
 * @param labels Actual classes (two), one per row.
 * @param probabilities Predicted probability of the positive class, one per row.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "cost=0.25", "sensitivity=0.9" or "budget=50".
 * @returns The rule, the threshold, rows flagged, expected cost, the 2 x 2 counts and rates.
 */
export function cutoff(labels: any[][], probabilities: any[][], options?: any[][]): any[][] {
  return runCell(F.CUTOFF.doing, () => F.CUTOFF.adapter(labels, probabilities, options ?? null));
}

/**
 * Average marginal effects of a two-class fit on the positive-class probability: the slope dP/dx for number columns, the change from 0 to 1 for 0/1 columns and from the reference level for text levels, with delta-method standard errors, z, p and interval.
 * @customfunction EFFECTS EFFECTS
 * @helpurl https://localhost:3000/help.html#effects
 * @param labels Label column (two classes): one class per row, with or without a header.
 * @param predictors Predictor columns, one row per label; a header row names the terms. Text columns become indicator terms.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "positive=yes; indicators=slope".
 * @returns One row per term with the effect, standard error, z, p and interval, then notes.
 */
export function effects(labels: any[][], predictors: any[][], options?: any[][]): any[][] {
  return runCell(F.EFFECTS.doing, () => F.EFFECTS.adapter(labels, predictors, options ?? null));
}

// ---- Portable model (issue 14) ----

/**
 * Writes the fitted model as plain formulas that need no add-in: lists what to enter in which cell (inputs, indicator and basis columns, linear predictors, probabilities with an overflow-safe sigmoid or softmax, the class) and the coefficient table the formulas read.
 * @customfunction FORMULAS FORMULAS
 * @helpurl https://localhost:3000/help.html#formulas
 * @param labels Label column used for fitting.
 * @param predictors Predictor columns used for fitting (may be the output of ODDS.BASIS).
 * @param [options] Fit options and where things go, e.g. "predictors_at=Data!A1; at=Data!H1".
 * @param [recipe] The basis recipe that made predictor columns from data, so they are written from the raw columns.
 * @param [data] The raw columns the recipe reads, with a header row.
 * @returns Three columns: cell, content to enter there, and a note.
 */
export function formulas(labels: any[][], predictors: any[][], options?: any[][], recipe?: any[][], data?: any[][]): any[][] {
  return runCell(F.FORMULAS.doing, () => F.FORMULAS.adapter(labels, predictors, options ?? null, recipe ?? null, data ?? null));
}

/**
 * Probabilities (or classes) of new rows from a model kept in the workbook by the Oddsmith pane, read from its stored description without refitting; recomputes when the rows change.
 * @customfunction KEPT KEPT
 * @helpurl https://localhost:3000/help.html#kept
 * @param model_cells The kept model's row on the sheet OddsmithModels, e.g. OddsmithModels!2:2 (its first cell and every part).
 * @param rows Rows to score, with a header row naming the columns the model was fitted on (raw data columns when it was fitted on basis columns).
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "show=class; threshold=0.3".
 * @returns Probabilities with a header row naming the class, or the predicted class.
 */
export function kept(model_cells: any[][], rows: any[][], options?: any[][]): any[][] {
  return runCell(F.KEPT.doing, () => F.KEPT.adapter(model_cells, rows, options ?? null));
}

// ---- Cross-validation (issue 13) ----

/**
 * Cross-validates the model ODDS.FIT would fit: k stratified folds fixed by a seed; spills the mean and standard error over the folds of log-loss, Brier score, AUC and accuracy, or a path over penalties with the lowest and one-standard-error choices, or each row's out-of-fold probability.
 * @customfunction FOLDS FOLDS
 * @helpurl https://localhost:3000/help.html#folds
 * @param labels Label column: one class per row, with or without a header.
 * @param predictors Predictor columns, one row per label; text columns become indicator terms learned in each fold.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "folds=5; seed=7", "penalties=0.01 to 100" or "show=out-of-fold".
 * @returns Scores with their standard errors, the penalty path, or per-row out-of-fold probabilities.
 */
export function folds(labels: any[][], predictors: any[][], options?: any[][]): any[][] {
  return runCell(F.FOLDS.doing, () => F.FOLDS.adapter(labels, predictors, options ?? null));
}

// ---- Held-out check (issue 13) ----

/**
 * Fits the model ODDS.FIT would fit on the training rows only (marked in a split column, or a seeded split stratified by class) and spills log-loss, Brier score, AUC, accuracy, calibration and counts on the held-out rows beside the training rows; or the held-out probabilities, or each row's role.
 * @customfunction HOLDOUT HOLDOUT
 * @helpurl https://localhost:3000/help.html#holdout
 * @param labels Label column: one class per row, with or without a header.
 * @param predictors Predictor columns, one row per label; text levels, scales and basis columns are learned from the training rows only.
 * @param [split] Split column, one cell per row: TRUE or 1 for a training row, FALSE or 0 for a held-out row, blank to leave the row out. Leave out for a seeded split (option holdout).
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "holdout=0.3; seed=7" or "show=held-out".
 * @returns Scores of the training and held-out rows side by side, or per-row probabilities or roles.
 */
export function holdout(labels: any[][], predictors: any[][], split?: any[][], options?: any[][]): any[][] {
  return runCell(F.HOLDOUT.doing, () => F.HOLDOUT.adapter(labels, predictors, split ?? null, options ?? null));
}

// ---- Group comparison (issue 13) ----

/**
 * Compares a two-class classifier across groups of rows (any column): per group the rows, observed rate, mean predicted probability, calibration-in-the-large, sensitivity, specificity and positive rate at the threshold, borderline rows, and ratios against a reference group.
 * @customfunction GROUPS GROUPS
 * @helpurl https://localhost:3000/help.html#groups
 * @param labels Actual classes (two), one per row.
 * @param probabilities_or_predictors Predicted probability of the positive class per row (as ODDS.PROB writes it); with the option fit=true, the predictor columns instead.
 * @param group The column that defines the groups, one value per row; it may or may not be a predictor.
 * @param [options] Settings as text "name=value; ..." or a two-column range, e.g. "threshold=0.3; versus=North" or "fit=true".
 * @returns One row per group with its figures and ratios, then the settings and notes.
 */
export function groups(labels: any[][], probabilities_or_predictors: any[][], group: any[][], options?: any[][]): any[][] {
  return runCell(F.GROUPS.doing, () => F.GROUPS.adapter(labels, probabilities_or_predictors, group, options ?? null));
}
