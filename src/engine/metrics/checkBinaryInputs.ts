/**
 * Input checks shared by the binary metrics. Internal to src/engine/metrics (not re-exported).
 *
 * Policy, stated once: every row is checked, including rows of weight zero, and the first bad row
 * stops the computation with a catalogue message. Row numbers in messages are 1-based positions in
 * the arrays passed in ("row 3" is index 2); the 0-based index travels in the error's params as
 * `index` so an adapter can re-map it to worksheet rows.
 */

import { problem } from "../messages";

/** Validated binary inputs with their weight totals. */
export interface CheckedBinaryInputs {
  rows: number;
  /** Total weight of the rows (each row counts 1 without weights). */
  totalWeight: number;
  /** Total weight of rows labelled 1 and 0. */
  positiveWeight: number;
  negativeWeight: number;
}

/** What the second argument holds: probabilities in [0, 1], or scores of any finite or infinite value. */
export type PredictionKind = "probability" | "score";

/**
 * Check 0/1 labels, predictions and optional case weights for the binary metrics.
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param predictions - probability of the positive class ("probability") or any ranking score ("score")
 * @param weights - optional case weights, finite and >= 0
 * @param kind - whether predictions must lie in [0, 1]
 * @throws EMPTY_RANGE, RANGE_SHAPE_MISMATCH, METRIC_MISSING_VALUE, BAD_BINARY_LABEL, BAD_PROBABILITY,
 *   BAD_WEIGHT, ZERO_TOTAL_WEIGHT
 * @example checkBinaryInputs(new Float64Array([0, 1]), new Float64Array([0.2, 0.7]), null, "probability")
 *   // { rows: 2, totalWeight: 2, positiveWeight: 1, negativeWeight: 1 }
 */
export function checkBinaryInputs(
  labels: Float64Array,
  predictions: Float64Array,
  weights: Float64Array | null | undefined,
  kind: PredictionKind,
): CheckedBinaryInputs {
  const predictionArgument = kind === "probability" ? "probabilities" : "scores";
  const n = labels.length;
  if (n === 0) throw problem("EMPTY_RANGE", { argument: "labels" });
  if (predictions.length !== n) {
    throw problem("RANGE_SHAPE_MISMATCH", {
      argument: predictionArgument,
      got: predictions.length,
      expectedArgument: "labels",
      expected: n,
    });
  }
  if (weights && weights.length !== n) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument: "weights", got: weights.length, expectedArgument: "labels", expected: n });
  }
  let positiveWeight = 0;
  let negativeWeight = 0;
  for (let i = 0; i < n; i++) {
    const y = labels[i];
    if (y !== y) throw problem("METRIC_MISSING_VALUE", { argument: "labels", row: i + 1, index: i });
    if (y !== 0 && y !== 1) throw problem("BAD_BINARY_LABEL", { row: i + 1, index: i, value: y });
    const p = predictions[i];
    if (p !== p) throw problem("METRIC_MISSING_VALUE", { argument: predictionArgument, row: i + 1, index: i });
    if (kind === "probability" && !(p >= 0 && p <= 1)) throw problem("BAD_PROBABILITY", { row: i + 1, index: i, value: p });
    let w = 1;
    if (weights) {
      w = weights[i];
      if (!(w >= 0 && w < Infinity)) throw problem("BAD_WEIGHT", { row: i + 1, index: i, value: w });
    }
    if (y === 1) positiveWeight += w;
    else negativeWeight += w;
  }
  const totalWeight = positiveWeight + negativeWeight;
  if (!(totalWeight > 0)) throw problem("ZERO_TOTAL_WEIGHT", { rows: n });
  return { rows: n, totalWeight, positiveWeight, negativeWeight };
}
