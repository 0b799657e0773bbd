import { checkBinaryInputs } from "./checkBinaryInputs";

/** Options of {@link brierScore} and {@link multiclassBrierScore}. */
export interface BrierOptions {
  /** Case weights, finite and >= 0, one per row [all 1]. */
  weights?: Float64Array | null;
}

/** A mean score with the weight it was averaged over. */
export interface MeanScore {
  value: number;
  rows: number;
  totalWeight: number;
}

/**
 * Brier score (mean squared error of the probability) for 0/1 labels.
 *
 * Formula: B = sum_i w_i (p_i - y_i)^2 / sum_i w_i, with p_i the positive-class probability. Range
 * [0, 1]; 0 is perfect, 0.25 is what a constant 0.5 scores. This is the binary convention (one term
 * per row); the multi-class form {@link multiclassBrierScore} sums over classes and gives twice this
 * value when K = 2.
 *
 * Reference: Brier (1950), "Verification of forecasts expressed in terms of probability", Monthly
 * Weather Review 78:1-3 (https://doi.org/10.1175/1520-0493(1950)078%3C0001:VOFEIT%3E2.0.CO;2).
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param probabilities - probability of the positive class per row, in [0, 1]
 * @param options - weights
 * @throws OddsmithError EMPTY_RANGE, RANGE_SHAPE_MISMATCH, METRIC_MISSING_VALUE, BAD_BINARY_LABEL,
 *   BAD_PROBABILITY, BAD_WEIGHT, ZERO_TOTAL_WEIGHT
 * @example
 * brierScore(new Float64Array([1, 0]), new Float64Array([0.8, 0.4])).value // (0.04 + 0.16) / 2 = 0.1
 */
export function brierScore(labels: Float64Array, probabilities: Float64Array, options: BrierOptions = {}): MeanScore {
  const weights = options.weights ?? null;
  const checked = checkBinaryInputs(labels, probabilities, weights, "probability");
  let sum = 0;
  for (let i = 0; i < checked.rows; i++) {
    const d = probabilities[i] - labels[i];
    sum += (weights ? weights[i] : 1) * d * d;
  }
  return { value: sum / checked.totalWeight, rows: checked.rows, totalWeight: checked.totalWeight };
}
