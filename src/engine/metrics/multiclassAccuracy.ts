import type { MeanScore } from "./brierScore";
import { checkMulticlassInputs } from "./checkMulticlassInputs";
import type { MulticlassOptions } from "./confusionMatrix";
import { predictedClass } from "./predictedClass";

/**
 * Multi-class accuracy: weighted fraction of rows whose most probable class (argmax, ties to the
 * lowest class index) is the observed class.
 *
 * Formula: A = sum_i w_i [argmax_k p_ik = y_i] / sum_i w_i.
 *
 * Reference: Fawcett (2006), Pattern Recognition Letters 27:861-874, section 9
 * (https://doi.org/10.1016/j.patrec.2005.10.010); free: scikit-learn user guide, "Accuracy score"
 * (https://scikit-learn.org/stable/modules/model_evaluation.html#accuracy-score).
 *
 * @param classes - observed class of each row, 0..K-1
 * @param probabilities - K columns, column k = probability of class k per row
 * @param options - weights
 * @throws OddsmithError TOO_FEW_PROBABILITY_COLUMNS, EMPTY_RANGE, RANGE_SHAPE_MISMATCH, BAD_CLASS_INDEX,
 *   METRIC_MISSING_VALUE, BAD_PROBABILITY, PROBABILITIES_NOT_SUMMING, BAD_WEIGHT, ZERO_TOTAL_WEIGHT
 * @example
 * multiclassAccuracy(new Int32Array([0, 1, 1]), [new Float64Array([0.9, 0.6, 0.2]), new Float64Array([0.1, 0.4, 0.8])]).value
 * // 2 / 3
 */
export function multiclassAccuracy(
  classes: Int32Array,
  probabilities: readonly Float64Array[],
  options: MulticlassOptions = {},
): MeanScore {
  const weights = options.weights ?? null;
  const checked = checkMulticlassInputs(classes, probabilities, weights);
  let correct = 0;
  for (let i = 0; i < checked.rows; i++) {
    if (predictedClass(probabilities, i) === classes[i]) correct += weights ? weights[i] : 1;
  }
  return { value: correct / checked.totalWeight, rows: checked.rows, totalWeight: checked.totalWeight };
}
