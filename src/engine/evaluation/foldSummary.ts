/**
 * Summary of a score across the folds of a cross-validation: mean and standard error.
 *
 * Policy: the plain mean of the fold values (folds are stratified and differ in size by at most one
 * row, so weighting by fold size changes little); a fold whose value is NaN makes the summary NaN
 * rather than being hidden by the others.
 */

/** Mean and standard error of one score across folds. */
export interface FoldSummary {
  mean: number;
  /** Sample SD of the fold values over sqrt(folds). */
  standardError: number;
  /** The value of each fold. */
  perFold: number[];
}

/**
 * Mean and standard error across folds: the plain mean of the fold values and their sample
 * standard deviation (n - 1) over sqrt(folds), the estimate behind the one-standard-error rule
 * (Hastie, Tibshirani & Friedman, The Elements of Statistical Learning, 2nd ed., 2009, section 7.10,
 * eq. 7.48 and figure 7.9). A fold whose value is NaN makes both NaN (not hidden by the others).
 * @example acrossFolds([0.5, 0.7]) // { mean: 0.6, standardError: 0.1, perFold: [0.5, 0.7] }
 */
export function acrossFolds(values: readonly number[]): FoldSummary {
  const k = values.length;
  if (k === 0 || values.some((v) => !Number.isFinite(v))) return { mean: NaN, standardError: NaN, perFold: values.slice() };
  let sum = 0;
  for (const v of values) sum += v;
  const mean = sum / k;
  let ss = 0;
  for (const v of values) ss += (v - mean) * (v - mean);
  const standardError = k > 1 ? Math.sqrt(ss / (k - 1)) / Math.sqrt(k) : NaN;
  return { mean, standardError, perFold: values.slice() };
}
