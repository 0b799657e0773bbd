import { problem } from "../messages";
import { checkBinaryInputs } from "./checkBinaryInputs";
import { distinctValueGroups } from "./distinctValueGroups";

/** Options of {@link rocCurve}. */
export interface RocCurveOptions {
  /** Case weights, finite and >= 0, one per row [all 1]; rows of weight 0 add no point. */
  weights?: Float64Array | null;
}

/** Points of the empirical ROC curve, from (0, 0) to (1, 1). */
export interface RocCurve {
  /** Threshold of each point, descending: +Infinity first (nothing positive), then each distinct score. */
  thresholds: Float64Array;
  /** Sensitivity at the threshold: weight of positives with score >= threshold over all positives. */
  truePositiveRate: Float64Array;
  /** 1 - specificity: weight of negatives with score >= threshold over all negatives. */
  falsePositiveRate: Float64Array;
  positiveWeight: number;
  negativeWeight: number;
}

/**
 * ROC curve points: one operating point per distinct score, for the rule "predict positive when
 * score >= threshold", plus the starting point (0, 0) at threshold +Infinity. Tied scores form one
 * point (the curve moves diagonally across a tie), so the trapezoid area under these points equals the
 * mid-rank AUC of {@link rocAuc}. Every distinct score gives a point (no points are dropped).
 *
 * Formula: TPR(t) = sum_{y=1, s>=t} w / W1, FPR(t) = sum_{y=0, s>=t} w / W0.
 *
 * Reference: Fawcett (2006), "An introduction to ROC analysis", Pattern Recognition Letters
 * 27:861-874, Algorithm 1 (https://doi.org/10.1016/j.patrec.2005.10.010); free: Robin et al. (2011),
 * pROC, BMC Bioinformatics 12:77, open access (https://doi.org/10.1186/1471-2105-12-77).
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param scores - any ranking score; NaN not allowed
 * @param options - weights
 * @throws OddsmithError EMPTY_RANGE, RANGE_SHAPE_MISMATCH, METRIC_MISSING_VALUE, BAD_BINARY_LABEL,
 *   BAD_WEIGHT, ZERO_TOTAL_WEIGHT, METRIC_NEEDS_BOTH_CLASSES
 * @example
 * const c = rocCurve(new Float64Array([0, 1, 1]), new Float64Array([0.2, 0.2, 0.9]));
 * // thresholds [Infinity, 0.9, 0.2], truePositiveRate [0, 0.5, 1], falsePositiveRate [0, 0, 1]
 */
export function rocCurve(labels: Float64Array, scores: Float64Array, options: RocCurveOptions = {}): RocCurve {
  const weights = options.weights ?? null;
  const checked = checkBinaryInputs(labels, scores, weights, "score");
  const W1 = checked.positiveWeight;
  const W0 = checked.negativeWeight;
  if (!(W1 > 0) || !(W0 > 0)) {
    throw problem("METRIC_NEEDS_BOTH_CLASSES", { metric: "The ROC curve", label: W1 > 0 ? 1 : 0 });
  }
  const g = distinctValueGroups(labels, scores, weights);
  const m = g.values.length;
  const thresholds = new Float64Array(m + 1);
  const truePositiveRate = new Float64Array(m + 1);
  const falsePositiveRate = new Float64Array(m + 1);
  thresholds[0] = Infinity;
  let tp = 0;
  let fp = 0;
  for (let k = m - 1, point = 1; k >= 0; k--, point++) {
    tp += g.positiveWeight[k];
    fp += g.negativeWeight[k];
    thresholds[point] = g.values[k];
    truePositiveRate[point] = tp / W1;
    falsePositiveRate[point] = fp / W0;
  }
  // The last point is (1, 1) exactly, whatever rounding the running sums collected.
  truePositiveRate[m] = 1;
  falsePositiveRate[m] = 1;
  return { thresholds, truePositiveRate, falsePositiveRate, positiveWeight: W1, negativeWeight: W0 };
}
