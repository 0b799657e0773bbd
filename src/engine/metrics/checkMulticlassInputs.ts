/**
 * Input checks shared by the multi-class metrics. Internal to src/engine/metrics (not re-exported).
 * Same policy as checkBinaryInputs: every row is checked (zero-weight rows too), the first bad row
 * stops the computation, messages give 1-based row positions and params carry the 0-based `index`.
 */

import { problem } from "../messages";

/**
 * Largest allowed |sum_k p_k - 1| per row. Probabilities computed by a softmax sum to 1 within a few
 * ulps; 1e-6 also accepts values copied with 7 significant digits while still catching a missing or
 * duplicated column (which moves the sum by a whole probability).
 */
export const PROBABILITY_SUM_TOLERANCE = 1e-6;

/** Validated multi-class inputs. */
export interface CheckedMulticlassInputs {
  rows: number;
  classes: number;
  totalWeight: number;
}

/**
 * Check class indices, one probability column per class and optional case weights.
 *
 * @param classes - true class of each row as an index 0..K-1 into `probabilities`
 * @param probabilities - K columns; column k holds each row's probability of class k
 * @param weights - optional case weights, finite and >= 0
 * @throws TOO_FEW_PROBABILITY_COLUMNS, EMPTY_RANGE, RANGE_SHAPE_MISMATCH, BAD_CLASS_INDEX,
 *   METRIC_MISSING_VALUE, BAD_PROBABILITY, PROBABILITIES_NOT_SUMMING, BAD_WEIGHT, ZERO_TOTAL_WEIGHT
 * @example checkMulticlassInputs(new Int32Array([0, 2]), [new Float64Array([.7, .1]),
 *   new Float64Array([.2, .1]), new Float64Array([.1, .8])], null) // { rows: 2, classes: 3, totalWeight: 2 }
 */
export function checkMulticlassInputs(
  classes: Int32Array,
  probabilities: readonly Float64Array[],
  weights: Float64Array | null | undefined,
): CheckedMulticlassInputs {
  const K = probabilities.length;
  if (K < 2) throw problem("TOO_FEW_PROBABILITY_COLUMNS", { got: K });
  const n = classes.length;
  if (n === 0) throw problem("EMPTY_RANGE", { argument: "classes" });
  for (let k = 0; k < K; k++) {
    if (probabilities[k].length !== n) {
      throw problem("RANGE_SHAPE_MISMATCH", {
        argument: `probabilities (column ${k + 1})`,
        got: probabilities[k].length,
        expectedArgument: "classes",
        expected: n,
      });
    }
  }
  if (weights && weights.length !== n) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument: "weights", got: weights.length, expectedArgument: "classes", expected: n });
  }
  let totalWeight = 0;
  for (let i = 0; i < n; i++) {
    const c = classes[i];
    if (!(c >= 0 && c < K)) throw problem("BAD_CLASS_INDEX", { row: i + 1, index: i, value: c, classes: K, max: K - 1 });
    let sum = 0;
    for (let k = 0; k < K; k++) {
      const p = probabilities[k][i];
      if (p !== p) throw problem("METRIC_MISSING_VALUE", { argument: `probabilities (column ${k + 1})`, row: i + 1, index: i });
      if (!(p >= 0 && p <= 1)) throw problem("BAD_PROBABILITY", { row: i + 1, index: i, value: p });
      sum += p;
    }
    if (Math.abs(sum - 1) > PROBABILITY_SUM_TOLERANCE) {
      throw problem("PROBABILITIES_NOT_SUMMING", { row: i + 1, index: i, sum, tolerance: PROBABILITY_SUM_TOLERANCE });
    }
    let w = 1;
    if (weights) {
      w = weights[i];
      if (!(w >= 0 && w < Infinity)) throw problem("BAD_WEIGHT", { row: i + 1, index: i, value: w });
    }
    totalWeight += w;
  }
  if (!(totalWeight > 0)) throw problem("ZERO_TOTAL_WEIGHT", { rows: n });
  return { rows: n, classes: K, totalWeight };
}
