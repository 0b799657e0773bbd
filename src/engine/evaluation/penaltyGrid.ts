/**
 * The penalties a cross-validation path tries: log-spaced between two ends, or given one by one.
 *
 * Policy (one line each):
 * - Log-spaced: `count` values from `from` to `to` (both > 0), equal steps of log10, each rounded to
 *   4 significant digits (so the path's penalties can be typed back exactly).
 * - Given: any penalties >= 0, each at most once; sorted ascending.
 * - At most MAX_PENALTIES penalties (each costs one fit per fold).
 */
import { problem } from "../messages";

/** Most penalties of one path. */
export const MAX_PENALTIES = 50;

/**
 * Log-spaced penalties (see the policy above).
 * Method: a geometric grid, as is usual for the ridge parameter (Friedman, Hastie & Tibshirani 2010,
 * "Regularization paths for generalized linear models via coordinate descent", J. Stat. Softw. 33(1),
 * section 2.5: a sequence decreasing on the log scale).
 * @throws OddsmithError BAD_OPTION_VALUE
 * @example logSpacedPenalties(0.01, 100, 5) // [0.01, 0.1, 1, 10, 100]
 */
export function logSpacedPenalties(from: number, to: number, count: number): number[] {
  if (!(from > 0 && to > from && Number.isFinite(to))) {
    throw problem("BAD_OPTION_VALUE", { name: "penalties", value: `${from} to ${to}`, expected: "Give two penalties above 0, the smaller first, e.g. penalties=0.01 to 100." });
  }
  if (!(Number.isInteger(count) && count >= 2 && count <= MAX_PENALTIES)) {
    throw problem("BAD_OPTION_VALUE", { name: "steps", value: count, expected: `Enter a whole number from 2 to ${MAX_PENALTIES}.` });
  }
  const a = Math.log10(from);
  const b = Math.log10(to);
  const out = Array.from({ length: count }, (_, i) => Number((10 ** (a + ((b - a) * i) / (count - 1))).toPrecision(4)));
  return [...new Set(out)];
}

/**
 * Check and sort penalties given one by one.
 * @throws OddsmithError BAD_OPTION_VALUE for a negative, non-finite or repeated penalty, or too many
 * @example givenPenalties([1, 0.1, 0]) // [0, 0.1, 1]
 */
export function givenPenalties(values: readonly number[]): number[] {
  if (values.length === 0 || values.length > MAX_PENALTIES) {
    throw problem("BAD_OPTION_VALUE", { name: "penalties", value: `${values.length} values`, expected: `Give 1 to ${MAX_PENALTIES} penalties.` });
  }
  for (const v of values) {
    if (!(Number.isFinite(v) && v >= 0)) throw problem("BAD_OPTION_VALUE", { name: "penalties", value: v, expected: "Each penalty is a number of 0 or more." });
  }
  const sorted = [...values].sort((x, y) => x - y);
  for (let i = 1; i < sorted.length; i++) {
    if (sorted[i] === sorted[i - 1]) throw problem("BAD_OPTION_VALUE", { name: "penalties", value: sorted[i], expected: "Give each penalty once." });
  }
  return sorted;
}
