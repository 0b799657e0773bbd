/**
 * The validation step: every check of a fit's input lives here, and trainModel runs it once per fit
 * (validateColumns on the aligned ranges before the design is built, validateProblem once the rows
 * and classes are known). The fitters and the label reader call the same check functions, so a rule
 * and its message exist once.
 *
 * Policy (each rule is repeated in one line above the code that applies it):
 * - Labels, weights, offset and trials are single columns (SINGLE_COLUMN_NEEDED).
 * - Weights, offset, trials and grouped successes are numbers (NOT_A_NUMBER at the first text cell).
 * - A weight is finite and >= 0 (BAD_WEIGHT); a missing weight skips its row instead.
 * - Grouped counts: 0 <= successes <= trials, both finite (BAD_TRIALS).
 * - An offset is finite (NOT_FINITE_VALUE).
 * - Aligned ranges select the same number of rows, header included (RANGE_SHAPE_MISMATCH); a range
 *   that only ends earlier (trailing blanks trimmed) is taken as blank below its end.
 * - Classes: a numeric label column with more than MAX_NUMERIC_CLASSES values, or more than two with
 *   a fraction, is a measurement (TOO_MANY_CLASSES); more than MAX_CLASSES labels is an identifier
 *   column (TOO_MANY_LABELS); fewer than two classes cannot be classified (ONE_CLASS_ONLY; grouped
 *   counts: all successes or all failures).
 * - Two-class-only options (firth, the profile interval, an offset) with multi-class labels are
 *   BAD_OPTION_VALUE, named as the user wrote them.
 * - A fit estimates at most MAX_PARAMETERS coefficients (equations x terms; TOO_MANY_PARAMETERS): a
 *   Newton step costs about rows x coefficients^2 + coefficients^3 operations (measured: 500
 *   coefficients over 2,000 rows take 2-3 s; 1,000 terms with a penalty 11 s, 2,000 terms 33 s, more
 *   run out of memory).
 * - Row numbers in messages are 1-based rows of the range as selected (header row = row 1); callers
 *   without a range (the fitters) pass a row numbering of their own.
 */
import { listNames, problem } from "../messages";
import { rangeRow, type NumericColumn, type Table, type TableColumn } from "./table";

/** Most coefficients (equations x terms) one fit may estimate; see the policy above. */
export const MAX_PARAMETERS = 500;

/**
 * Most classes any label column may have. A softmax fit has (K - 1) x terms coefficients and its
 * Newton step costs about rows x ((K - 1) x terms)^2 operations: measured here, 50 classes over
 * 1,000 rows of two predictors take under 1 s, 100 classes over 2,000 rows about 7 s, 300 classes
 * 25 s, and thousands of classes would not finish.
 */
export const MAX_CLASSES = 50;

/** A numeric label column with more distinct values than this is a measurement, not classes. */
export const MAX_NUMERIC_CLASSES = 10;

/** Class names of a grouped (successes out of trials) binary fit. */
export const GROUPED_CLASSES = ["failure", "success"] as const;

/** 1-based position of 0-based data row i in the user's range. */
export type RowNumbering = (i: number) => number;

/** Labels, weights, offset and trials are one column each. */
export function requireSingleColumn(t: Table): void {
  if (t.columns.length !== 1) throw problem("SINGLE_COLUMN_NEEDED", { argument: t.argument, columns: t.columns.length });
}

/** A numeric single column (weights, offset, trials, successes); text is NOT_A_NUMBER at its cell. */
export function requireNumericColumn(t: Table): NumericColumn {
  requireSingleColumn(t);
  const c = t.columns[0];
  if (c.kind === "text") {
    const i = c.missing.findIndex((m) => m === 0);
    throw problem("NOT_A_NUMBER", { argument: t.argument, row: rangeRow(t, i), column: 1, value: c.values[i] });
  }
  return c;
}

/**
 * Weights are finite and >= 0. A row is missing where `missing` marks it or, without a mask, where
 * the value is NaN; missing rows are skipped by the caller, not refused.
 */
export function checkWeights(values: Float64Array, rowOf: RowNumbering, missing: Uint8Array | null = null): void {
  for (let i = 0; i < values.length; i++) {
    const w = values[i];
    if (missing ? missing[i] === 1 : Number.isNaN(w)) continue;
    if (!(w >= 0) || !Number.isFinite(w)) throw problem("BAD_WEIGHT", { row: rowOf(i), value: w });
  }
}

/** Grouped counts: 0 <= successes <= trials, both finite; rows missing either are skipped. */
export function checkTrials(successes: Float64Array, trials: Float64Array, rowOf: RowNumbering): void {
  for (let i = 0; i < trials.length; i++) {
    const y = successes[i];
    const t = trials[i];
    if (Number.isNaN(y) || Number.isNaN(t)) continue;
    if (!(t >= 0) || !Number.isFinite(t) || !(y >= 0) || y > t) throw problem("BAD_TRIALS", { row: rowOf(i), successes: y, trials: t });
  }
}

/** An offset is finite; NaN is a missing value (the row is skipped). */
export function checkOffset(values: Float64Array, rowOf: RowNumbering): void {
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!Number.isNaN(v) && !Number.isFinite(v)) throw problem("NOT_FINITE_VALUE", { argument: "offset", row: rowOf(i), column: "offset", value: v });
  }
}

/**
 * Aligned ranges select the same rows: their selected row counts (before trailing blank rows are
 * trimmed) agree, or each covers every data row. The first range names the expected count.
 */
export function checkAlignedRows(tables: Table[]): void {
  const selected = tables.map((t) => t.rows + t.trimmedRows);
  const n = Math.max(...tables.map((t) => t.rows));
  for (let k = 1; k < tables.length; k++) {
    if (selected[k] !== selected[0] && !(selected[k] >= n && selected[0] >= n)) {
      throw problem("RANGE_SHAPE_MISMATCH", {
        argument: tables[k].argument,
        got: selected[k],
        expectedArgument: tables[0].argument,
        expected: selected[0],
      });
    }
  }
}

/**
 * The distinct labels of the usable rows make classes: not a measurement, not an identifier column,
 * at least two. `numeric` gives the value of each label of a numeric column (null for text).
 */
export function checkClassCount(sorted: string[], usable: number, numeric: ((label: string) => number) | null): void {
  if (numeric) {
    const anyFraction = sorted.some((k) => !Number.isInteger(numeric(k)));
    // A numeric label column with > 10 distinct values, or > 2 with a fraction, is a measurement.
    if (sorted.length > MAX_NUMERIC_CLASSES || (anyFraction && sorted.length > 2)) {
      throw problem("TOO_MANY_CLASSES", { count: sorted.length, rows: usable });
    }
  }
  // More than MAX_CLASSES distinct labels is an identifier or free-text column, not classes.
  if (sorted.length > MAX_CLASSES) throw problem("TOO_MANY_LABELS", { count: sorted.length, rows: usable, limit: MAX_CLASSES });
  // Fewer than two classes among the usable rows cannot be classified.
  if (sorted.length < 2) throw problem("ONE_CLASS_ONLY", { label: sorted.length === 1 ? sorted[0] : "" });
}

/** Grouped counts need both outcomes: all successes or all failures cannot be classified. */
export function checkGroupedOutcomes(successes: number, total: number): void {
  if (successes === 0 || successes === total) {
    throw problem("ONE_CLASS_ONLY", { label: successes === 0 ? GROUPED_CLASSES[0] : GROUPED_CLASSES[1] });
  }
}

/** A fit estimates at most MAX_PARAMETERS coefficients (checked before any O(p^2) memory is taken). */
export function checkModelSize(terms: number, equations: number): void {
  if (terms * equations > MAX_PARAMETERS) {
    const detail = equations === 1 ? `${terms} terms` : `${equations} class equations of ${terms} terms each`;
    throw problem("TOO_MANY_PARAMETERS", { parameters: terms * equations, detail, limit: MAX_PARAMETERS });
  }
}

/** What a multi-class fit was asked for that only a two-class fit offers. */
export interface TwoClassRequests {
  firth?: boolean;
  intervalMethod?: "wald" | "profile";
  offset: boolean;
}

/** Two-class-only options are refused for multi-class labels, named as the user wrote them. */
export function checkTwoClassOptions(requests: TwoClassRequests, classes: string[]): void {
  const refuse = (name: string, value: string, what: string) =>
    problem("BAD_OPTION_VALUE", {
      name,
      value,
      expected: `${what} is available for two-class labels only, and the label column has ${classes.length} classes (${listNames(classes)}).`,
    });
  if (requests.firth) throw refuse("firth", "TRUE", "Bias reduction");
  if (requests.intervalMethod === "profile") throw refuse("interval", "profile", "The profile-likelihood interval");
  if (requests.offset) throw refuse("offset", "a column", "An offset");
}

/** The extra columns of a fit, each checked and typed. */
export interface ValidColumns {
  label: TableColumn;
  weights: NumericColumn | null;
  offset: NumericColumn | null;
  trials: NumericColumn | null;
  /** The labels read as success counts (with trials only). */
  successes: NumericColumn | null;
}

/**
 * First phase of the validation step, on the aligned tables (labels, predictors, then the extra
 * ranges named in `extras`, in that order): shapes, single columns, numbers, weights and counts.
 */
export function validateColumns(tables: Table[], extras: readonly ("weights" | "offset" | "trials")[]): ValidColumns {
  // (Row counts were checked by the aligned read, checkAlignedRows, before padding.)
  const [labelTable, predTable] = tables;
  requireSingleColumn(labelTable);
  const byName = new Map<string, NumericColumn>();
  extras.forEach((key, k) => byName.set(key, requireNumericColumn(tables[2 + k])));
  const weights = byName.get("weights") ?? null;
  const offset = byName.get("offset") ?? null;
  const trials = byName.get("trials") ?? null;
  const rowOf: RowNumbering = (i) => rangeRow(predTable, i);
  if (weights) checkWeights(weights.values.subarray(0, predTable.rows), rowOf, weights.missing);
  // (An offset's non-finite numbers are refused by readTable already: NOT_FINITE_VALUE at the cell.)
  const successes = trials ? requireNumericColumn(labelTable) : null;
  if (trials && successes) checkTrials(successes.values.subarray(0, predTable.rows), trials.values, rowOf);
  return { label: labelTable.columns[0], weights, offset, trials, successes };
}

/** What the second phase needs to know about the problem once its rows and classes are known. */
export interface ProblemShape {
  /** Terms per equation (predictor terms plus the intercept). */
  terms: number;
  /** Class names ([failure, success] for grouped counts). */
  classes: string[];
  /** Grouped counts: weighted successes and trials over the fitted rows. */
  grouped?: { successes: number; total: number };
  form: "reference" | "symmetric";
  requests: TwoClassRequests;
}

/**
 * Second phase of the validation step: two outcomes present, two-class-only options, model size.
 * (The label reader has already refused too few or too many classes for ungrouped labels.)
 */
export function validateProblem(shape: ProblemShape): void {
  if (shape.grouped) checkGroupedOutcomes(shape.grouped.successes, shape.grouped.total);
  const k = shape.classes.length;
  if (k > 2) checkTwoClassOptions(shape.requests, shape.classes);
  checkModelSize(shape.terms, k <= 2 ? 1 : shape.form === "symmetric" ? k : k - 1);
}
