/**
 * Choosing a penalty from a cross-validation path: the penalty with the lowest mean out-of-fold
 * log-loss, and the one-standard-error choice.
 *
 * Policy (one line each):
 * - Entries whose mean is not a number (a fold failed) take no part in the choice.
 * - Lowest: the smallest mean; a tie goes to the larger penalty (the simpler model).
 * - One standard error: the largest penalty whose mean is within one standard error of the lowest
 *   mean (mean <= lowest mean + its SE); with no SE (one fold value) it is the lowest.
 */
import { problem } from "../messages";

/** One entry of a path: a penalty with the mean and standard error of its fold scores. */
export interface PathPoint {
  penalty: number;
  mean: number;
  standardError: number;
}

/**
 * The lowest-mean and one-standard-error entries of a path (see the policy above).
 *
 * Method: the one-standard-error rule (Breiman, Friedman, Olshen & Stone 1984, Classification and
 * Regression Trees, section 3.4.3; Hastie, Tibshirani & Friedman, The Elements of Statistical
 * Learning, 2nd ed., 2009, section 7.10): the most regularized model whose error is within one
 * standard error of the best.
 *
 * @param points the path, in any order of penalties
 * @returns indices into `points`
 * @throws OddsmithError INTERNAL when no entry has a mean (callers check that some penalty has one)
 * @example choosePenalty([{ penalty: 0.1, mean: 0.50, standardError: 0.02 }, { penalty: 1, mean: 0.51, standardError: 0.02 }, { penalty: 10, mean: 0.6, standardError: 0.02 }])
 * // { lowest: 0, oneSe: 1 }
 */
export function choosePenalty(points: readonly PathPoint[]): { lowest: number; oneSe: number } {
  let lowest = -1;
  points.forEach((p, i) => {
    if (!Number.isFinite(p.mean)) return;
    if (lowest < 0 || p.mean < points[lowest].mean || (p.mean === points[lowest].mean && p.penalty > points[lowest].penalty)) lowest = i;
  });
  if (lowest < 0) throw problem("INTERNAL", { doing: "choosing a penalty (no penalty has a score)" });
  const se = points[lowest].standardError;
  const bound = points[lowest].mean + (Number.isFinite(se) ? se : 0);
  let oneSe = lowest;
  points.forEach((p, i) => {
    if (Number.isFinite(p.mean) && p.mean <= bound && p.penalty > points[oneSe].penalty) oneSe = i;
  });
  return { lowest, oneSe };
}
