import { checkMulticlassInputs } from "./checkMulticlassInputs";
import { predictedClass } from "./predictedClass";

/** Options of {@link confusionMatrix} and {@link multiclassAccuracy}. */
export interface MulticlassOptions {
  /** Case weights, finite and >= 0, one per row [all 1]. Cells are sums of weights. */
  weights?: Float64Array | null;
}

/** K x K table of observed against predicted class. */
export interface ConfusionMatrix {
  /** counts[observed][predicted]: summed weight of rows of class `observed` predicted as `predicted`. */
  counts: Float64Array[];
  /** Weight of the diagonal over the total weight. */
  accuracy: number;
  totalWeight: number;
  /** Predicted class of every row (argmax, ties to the lowest index). */
  predicted: Int32Array;
}

/**
 * Multi-class confusion matrix from class-probability columns, predicting each row's most probable
 * class (argmax; ties go to the lowest class index).
 *
 * Formula: C[j][k] = sum_i w_i [y_i = j][argmax_m p_im = k]. Rows of the matrix are OBSERVED classes,
 * columns PREDICTED classes (the layout of Fawcett 2006 transposed to one row per true class, as most
 * libraries print it).
 *
 * Reference: Fawcett (2006), "An introduction to ROC analysis", Pattern Recognition Letters
 * 27:861-874, section 9 (https://doi.org/10.1016/j.patrec.2005.10.010); free: scikit-learn user guide,
 * "Confusion matrix" (https://scikit-learn.org/stable/modules/model_evaluation.html#confusion-matrix).
 *
 * @param classes - observed class of each row, 0..K-1
 * @param probabilities - K columns, column k = probability of class k per row
 * @param options - weights
 * @throws OddsmithError TOO_FEW_PROBABILITY_COLUMNS, EMPTY_RANGE, RANGE_SHAPE_MISMATCH, BAD_CLASS_INDEX,
 *   METRIC_MISSING_VALUE, BAD_PROBABILITY, PROBABILITIES_NOT_SUMMING, BAD_WEIGHT, ZERO_TOTAL_WEIGHT
 * @example
 * confusionMatrix(new Int32Array([0, 1, 1]), [new Float64Array([0.9, 0.6, 0.2]), new Float64Array([0.1, 0.4, 0.8])]).counts
 * // [[1, 0], [1, 1]]
 */
export function confusionMatrix(
  classes: Int32Array,
  probabilities: readonly Float64Array[],
  options: MulticlassOptions = {},
): ConfusionMatrix {
  const weights = options.weights ?? null;
  const checked = checkMulticlassInputs(classes, probabilities, weights);
  const K = checked.classes;
  const counts = Array.from({ length: K }, () => new Float64Array(K));
  const predicted = new Int32Array(checked.rows);
  let diagonal = 0;
  for (let i = 0; i < checked.rows; i++) {
    const k = predictedClass(probabilities, i);
    predicted[i] = k;
    const w = weights ? weights[i] : 1;
    counts[classes[i]][k] += w;
    if (k === classes[i]) diagonal += w;
  }
  return { counts, accuracy: diagonal / checked.totalWeight, totalWeight: checked.totalWeight, predicted };
}
