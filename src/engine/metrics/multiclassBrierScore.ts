import type { BrierOptions, MeanScore } from "./brierScore";
import { checkMulticlassInputs } from "./checkMulticlassInputs";

/**
 * Multi-class Brier score in Brier's original sum-over-classes form.
 *
 * Formula: B = sum_i w_i sum_k (p_ik - [y_i = k])^2 / sum_i w_i. Range [0, 2]. Convention: the sum
 * over ALL K classes (Brier 1950), so for K = 2 it is twice the binary {@link brierScore}; divide by 2
 * to compare with the binary one-term convention.
 *
 * Reference: Brier (1950), Monthly Weather Review 78:1-3, eq. (1)
 * (https://doi.org/10.1175/1520-0493(1950)078%3C0001:VOFEIT%3E2.0.CO;2).
 *
 * @param classes - observed class of each row, 0..K-1
 * @param probabilities - K columns, column k = probability of class k per row
 * @param options - weights
 * @throws OddsmithError TOO_FEW_PROBABILITY_COLUMNS, EMPTY_RANGE, RANGE_SHAPE_MISMATCH, BAD_CLASS_INDEX,
 *   METRIC_MISSING_VALUE, BAD_PROBABILITY, PROBABILITIES_NOT_SUMMING, BAD_WEIGHT, ZERO_TOTAL_WEIGHT
 * @example
 * multiclassBrierScore(new Int32Array([0]), [new Float64Array([0.7]), new Float64Array([0.2]),
 *   new Float64Array([0.1])]).value // 0.09 + 0.04 + 0.01 = 0.14
 */
export function multiclassBrierScore(
  classes: Int32Array,
  probabilities: readonly Float64Array[],
  options: BrierOptions = {},
): MeanScore {
  const weights = options.weights ?? null;
  const checked = checkMulticlassInputs(classes, probabilities, weights);
  let sum = 0;
  for (let i = 0; i < checked.rows; i++) {
    const w = weights ? weights[i] : 1;
    if (w === 0) continue;
    let row = 0;
    for (let k = 0; k < checked.classes; k++) {
      const d = probabilities[k][i] - (classes[i] === k ? 1 : 0);
      row += d * d;
    }
    sum += w * row;
  }
  return { value: sum / checked.totalWeight, rows: checked.rows, totalWeight: checked.totalWeight };
}
