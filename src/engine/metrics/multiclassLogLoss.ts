import { DEFAULT_LOG_CLIP } from "../numerics";
import type { Diagnostic } from "../types";
import { checkMulticlassInputs } from "./checkMulticlassInputs";
import { checkOptionValue } from "./checkOptionValue";
import type { LogLossOptions, LogLossResult } from "./logLoss";
import { makeDiagnostic } from "./makeDiagnostic";

/**
 * Multi-class log-loss (categorical cross-entropy) of class-probability columns.
 *
 * Formula: L = sum_i w_i * -ln(q_i) / sum_i w_i with q_i = probabilities[classes[i]][i], the
 * probability given to the observed class, clipped to [eps, 1 - eps] (eps = 1e-15 by default, for the
 * reasons given at {@link logLoss}: a 0 for the observed class costs 34.54 nats, finite). Rows must
 * sum to 1 within 1e-6; they are not renormalized. With K = 2 this equals the binary log-loss.
 *
 * Reference: Bishop, Pattern Recognition and Machine Learning (2006), eq. 4.108; scikit-learn user
 * guide, "Log loss" (https://scikit-learn.org/stable/modules/model_evaluation.html#log-loss).
 *
 * @param classes - observed class of each row, 0..K-1
 * @param probabilities - K columns, column k = probability of class k per row
 * @param options - weights and eps
 * @throws OddsmithError TOO_FEW_PROBABILITY_COLUMNS, EMPTY_RANGE, RANGE_SHAPE_MISMATCH, BAD_CLASS_INDEX,
 *   METRIC_MISSING_VALUE, BAD_PROBABILITY, PROBABILITIES_NOT_SUMMING, BAD_WEIGHT, ZERO_TOTAL_WEIGHT,
 *   BAD_OPTION_VALUE (eps)
 * @example
 * multiclassLogLoss(new Int32Array([0, 2]), [new Float64Array([0.5, 0.2]), new Float64Array([0.3, 0.2]),
 *   new Float64Array([0.2, 0.6])]).value // (-ln 0.5 - ln 0.6) / 2 = 0.60198...
 */
export function multiclassLogLoss(
  classes: Int32Array,
  probabilities: readonly Float64Array[],
  options: LogLossOptions = {},
): LogLossResult {
  const eps = checkOptionValue("eps", options.eps, DEFAULT_LOG_CLIP, 0, 0.5, false);
  const weights = options.weights ?? null;
  const checked = checkMulticlassInputs(classes, probabilities, weights);
  let sum = 0;
  let clippedRows = 0;
  let firstClipped = -1;
  for (let i = 0; i < checked.rows; i++) {
    const w = weights ? weights[i] : 1;
    if (w === 0) continue;
    let q = probabilities[classes[i]][i];
    if (q < eps) {
      q = eps;
      clippedRows++;
      if (firstClipped < 0) firstClipped = i;
    } else if (q > 1 - eps) {
      q = 1 - eps;
    }
    sum -= w * Math.log(q);
  }
  const diagnostics: Diagnostic[] = [];
  if (clippedRows > 0) {
    diagnostics.push(makeDiagnostic("PROBABILITIES_CLIPPED", "warning", { count: clippedRows, row: firstClipped + 1, eps }, [firstClipped]));
  }
  return { value: sum / checked.totalWeight, rows: checked.rows, totalWeight: checked.totalWeight, eps, clippedRows, diagnostics };
}
