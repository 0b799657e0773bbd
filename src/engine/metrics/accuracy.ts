import { checkBinaryInputs } from "./checkBinaryInputs";
import { checkOptionValue } from "./checkOptionValue";
import type { ThresholdOptions } from "./confusionCounts";
import type { MeanScore } from "./brierScore";

/**
 * Accuracy (fraction classified correctly) of binary probabilities at a threshold.
 *
 * Formula: A = sum_i w_i [ (p_i >= t) = (y_i = 1) ] / sum_i w_i, threshold t = 0.5 by default; a row
 * exactly at the threshold counts as predicted positive.
 *
 * Reference: Fawcett (2006), Pattern Recognition Letters 27:861-874, Fig. 1
 * (https://doi.org/10.1016/j.patrec.2005.10.010); free: scikit-learn user guide, "Accuracy score"
 * (https://scikit-learn.org/stable/modules/model_evaluation.html#accuracy-score).
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param probabilities - probability of the positive class per row, in [0, 1]
 * @param options - threshold and weights
 * @throws OddsmithError EMPTY_RANGE, RANGE_SHAPE_MISMATCH, METRIC_MISSING_VALUE, BAD_BINARY_LABEL,
 *   BAD_PROBABILITY, BAD_WEIGHT, ZERO_TOTAL_WEIGHT, BAD_OPTION_VALUE (threshold)
 * @example
 * accuracy(new Float64Array([1, 1, 0, 0]), new Float64Array([0.9, 0.4, 0.6, 0.1])).value // 0.5
 */
export function accuracy(labels: Float64Array, probabilities: Float64Array, options: ThresholdOptions = {}): MeanScore {
  const threshold = checkOptionValue("threshold", options.threshold, 0.5, 0, 1, true);
  const weights = options.weights ?? null;
  const checked = checkBinaryInputs(labels, probabilities, weights, "probability");
  let correct = 0;
  for (let i = 0; i < checked.rows; i++) {
    if ((probabilities[i] >= threshold) === (labels[i] === 1)) correct += weights ? weights[i] : 1;
  }
  return { value: correct / checked.totalWeight, rows: checked.rows, totalWeight: checked.totalWeight };
}
