import { DEFAULT_LOG_CLIP } from "../numerics";
import type { Diagnostic } from "../types";
import { checkBinaryInputs } from "./checkBinaryInputs";
import { checkOptionValue } from "./checkOptionValue";
import { makeDiagnostic } from "./makeDiagnostic";

/** Options of {@link logLoss} and {@link multiclassLogLoss}. */
export interface LogLossOptions {
  /** Case weights, finite and >= 0, one per row [all 1]. */
  weights?: Float64Array | null;
  /** Clip width: the observed-class probability is clipped to [eps, 1 - eps], 0 < eps < 0.5 [1e-15]. */
  eps?: number;
}

/** Mean log-loss with what went into it. */
export interface LogLossResult {
  /** Weighted mean of -ln(probability given to the observed class), in nats. */
  value: number;
  rows: number;
  totalWeight: number;
  eps: number;
  /** Rows whose observed-class probability was below eps and was raised to eps. */
  clippedRows: number;
  diagnostics: Diagnostic[];
}

/**
 * Binary log-loss (cross-entropy, negative mean log-likelihood) of probabilities for 0/1 labels.
 *
 * Formula: L = sum_i w_i * -ln(q_i) / sum_i w_i, with q_i = p_i when y_i = 1 and 1 - p_i when y_i = 0,
 * natural log; q_i is clipped to [eps, 1 - eps] first.
 *
 * Clipping: eps defaults to 1e-15. A probability reported as exactly 0 or 1 for the wrong class then
 * costs -ln(1e-15) = 34.54 nats, a large FINITE number, not Infinity, so one overconfident row cannot
 * turn the mean into Infinity. Why 1e-15: in double precision a probability near 1 cannot come closer
 * to 1 than about 1.1e-16, so "1" means "within about 1e-16 of 1"; a clip just above the machine
 * epsilon (2.2e-16) treats both ends alike, and 1e-15 is the long-standing convention of other
 * metric libraries, so values agree with theirs. The clip is applied to the OBSERVED-class
 * probability q (symmetric in the two classes); for 1 - p the loss uses log1p(-p), exact for small p.
 * When any row is clipped a warning diagnostic says how many.
 *
 * Reference: Bishop, Pattern Recognition and Machine Learning (2006), eq. 4.90 (cross-entropy error);
 * scikit-learn user guide, "Log loss" (https://scikit-learn.org/stable/modules/model_evaluation.html#log-loss).
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param probabilities - probability of the positive class per row, in [0, 1]
 * @param options - weights and eps
 * @throws OddsmithError EMPTY_RANGE, RANGE_SHAPE_MISMATCH, METRIC_MISSING_VALUE, BAD_BINARY_LABEL,
 *   BAD_PROBABILITY, BAD_WEIGHT, ZERO_TOTAL_WEIGHT, BAD_OPTION_VALUE (eps)
 * @example
 * logLoss(new Float64Array([1, 0]), new Float64Array([0.8, 0.4])).value
 * // (-ln 0.8 - ln 0.6) / 2 = 0.36698...
 */
export function logLoss(labels: Float64Array, probabilities: Float64Array, options: LogLossOptions = {}): LogLossResult {
  const eps = checkOptionValue("eps", options.eps, DEFAULT_LOG_CLIP, 0, 0.5, false);
  const weights = options.weights ?? null;
  const checked = checkBinaryInputs(labels, probabilities, weights, "probability");
  const logFloor = Math.log(eps);
  const logCeiling = Math.log1p(-eps);
  let sum = 0;
  let clippedRows = 0;
  let firstClipped = -1;
  for (let i = 0; i < checked.rows; i++) {
    const w = weights ? weights[i] : 1;
    if (w === 0) continue;
    const p = probabilities[i];
    const q = labels[i] === 1 ? p : 1 - p;
    let logQ: number;
    if (q < eps) {
      logQ = logFloor;
      clippedRows++;
      if (firstClipped < 0) firstClipped = i;
    } else if (q > 1 - eps) {
      logQ = logCeiling;
    } else {
      logQ = labels[i] === 1 ? Math.log(p) : Math.log1p(-p);
    }
    sum -= w * logQ;
  }
  const diagnostics: Diagnostic[] = [];
  if (clippedRows > 0) {
    diagnostics.push(makeDiagnostic("PROBABILITIES_CLIPPED", "warning", { count: clippedRows, row: firstClipped + 1, eps }, [firstClipped]));
  }
  return { value: sum / checked.totalWeight, rows: checked.rows, totalWeight: checked.totalWeight, eps, clippedRows, diagnostics };
}
