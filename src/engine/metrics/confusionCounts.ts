import type { Diagnostic } from "../types";
import { checkBinaryInputs } from "./checkBinaryInputs";
import { checkOptionValue } from "./checkOptionValue";
import { makeDiagnostic } from "./makeDiagnostic";

/** Options of {@link confusionCounts} and {@link accuracy}. */
export interface ThresholdOptions {
  /** A row is predicted positive when its probability is >= threshold; 0 <= threshold <= 1 [0.5]. */
  threshold?: number;
  /** Case weights, finite and >= 0, one per row [all 1]. Counts are sums of weights. */
  weights?: Float64Array | null;
}

/** The 2 x 2 table at one threshold and the rates read from it. Undefined rates (0/0) are NaN. */
export interface ConfusionCounts {
  threshold: number;
  truePositives: number;
  falsePositives: number;
  trueNegatives: number;
  falseNegatives: number;
  /** TP / (TP + FN), also called recall or true positive rate. */
  sensitivity: number;
  /** TN / (TN + FP), the true negative rate. */
  specificity: number;
  /** TP / (TP + FP), the positive predictive value. */
  precision: number;
  /** TN / (TN + FN). */
  negativePredictiveValue: number;
  /** 2 TP / (2 TP + FP + FN), the harmonic mean of precision and sensitivity. */
  f1: number;
  /** (TP + TN) / total weight. */
  accuracy: number;
  totalWeight: number;
  /** One RATE_UNDEFINED note per rate left NaN because its denominator is zero. */
  diagnostics: Diagnostic[];
}

/**
 * Confusion counts (true/false positives/negatives) at a probability threshold, with sensitivity,
 * specificity, precision, negative predictive value, F1 and accuracy.
 *
 * Rule: row i is predicted positive when p_i >= threshold (a row exactly at the threshold is
 * positive). Counts are weighted: TP = sum of w_i over rows with y_i = 1 predicted positive, etc.
 * A rate whose denominator is zero is NaN (shown empty) with a RATE_UNDEFINED note, never 0.
 *
 * Reference: Fawcett (2006), "An introduction to ROC analysis", Pattern Recognition Letters
 * 27:861-874, section 2 and Fig. 1 (https://doi.org/10.1016/j.patrec.2005.10.010); free: scikit-learn user
 * guide, "Confusion matrix" and "Precision, recall and F-measures"
 * (https://scikit-learn.org/stable/modules/model_evaluation.html).
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param probabilities - probability of the positive class per row, in [0, 1]
 * @param options - threshold and weights
 * @throws OddsmithError EMPTY_RANGE, RANGE_SHAPE_MISMATCH, METRIC_MISSING_VALUE, BAD_BINARY_LABEL,
 *   BAD_PROBABILITY, BAD_WEIGHT, ZERO_TOTAL_WEIGHT, BAD_OPTION_VALUE (threshold)
 * @example
 * const c = confusionCounts(new Float64Array([1, 1, 0, 0]), new Float64Array([0.9, 0.4, 0.6, 0.1]));
 * // c.truePositives 1, c.falseNegatives 1, c.falsePositives 1, c.trueNegatives 1, c.sensitivity 0.5
 */
export function confusionCounts(
  labels: Float64Array,
  probabilities: Float64Array,
  options: ThresholdOptions = {},
): ConfusionCounts {
  const threshold = checkOptionValue("threshold", options.threshold, 0.5, 0, 1, true);
  const weights = options.weights ?? null;
  const checked = checkBinaryInputs(labels, probabilities, weights, "probability");
  let tp = 0;
  let fp = 0;
  let tn = 0;
  let fn = 0;
  for (let i = 0; i < checked.rows; i++) {
    const w = weights ? weights[i] : 1;
    const positive = probabilities[i] >= threshold;
    if (labels[i] === 1) {
      if (positive) tp += w;
      else fn += w;
    } else if (positive) fp += w;
    else tn += w;
  }
  const diagnostics: Diagnostic[] = [];
  const rate = (num: number, den: number, measure: string, denominator: string): number => {
    if (den > 0) return num / den;
    diagnostics.push(makeDiagnostic("RATE_UNDEFINED", "note", { measure, denominator, threshold }));
    return NaN;
  };
  return {
    threshold,
    truePositives: tp,
    falsePositives: fp,
    trueNegatives: tn,
    falseNegatives: fn,
    sensitivity: rate(tp, tp + fn, "Sensitivity", "the weight of positive rows (TP + FN)"),
    specificity: rate(tn, tn + fp, "Specificity", "the weight of negative rows (TN + FP)"),
    precision: rate(tp, tp + fp, "Precision", "the weight of rows predicted positive (TP + FP)"),
    negativePredictiveValue: rate(tn, tn + fn, "Negative predictive value", "the weight of rows predicted negative (TN + FN)"),
    f1: rate(2 * tp, 2 * tp + fp + fn, "F1", "2 TP + FP + FN"),
    accuracy: (tp + tn) / checked.totalWeight,
    totalWeight: checked.totalWeight,
    diagnostics,
  };
}
