/**
 * Scoring rows with a fitted multi-class (softmax) model: predictMulticlass.
 *
 * eta_k = b_k0 + x'b_k for each equation (aliased terms contribute nothing); in the reference form
 * the reference class has eta = 0. P(k | x) = exp(eta_k - lse), lse = log sum_l exp(eta_l) taken
 * after subtracting the row maximum, so no exponential overflows and the probabilities sum to 1.
 * Policy for unusable rows: a non-finite value in a used predictor gives NaN probabilities, NaN
 * margin and predicted = -1 for that row; other rows are unaffected. A fit without estimates
 * (failed fit: NaN coefficients) scores every row that way.
 * Reference: A. Agresti, Categorical Data Analysis, 3rd ed. (2013), §8.1 (baseline-category logits).
 */

import { checkScoringDesign } from "./data/checkScoringDesign";
import { problem } from "./messages";
import type { DesignMatrix, Prediction, ScoringFit } from "./types";

/**
 * Score rows with a multi-class fit: the probability of every class, the predicted class (the most
 * probable; the first in class order on an exact tie) and the margin, the gap between the two
 * largest probabilities (0 = on a decision boundary).
 * @param fit - a ModelFit (or a ScoringFit read from a description) with kind "multiclass" (reference or symmetric form)
 * @param X - rows to score, columns in the same order as at fit time (no intercept column)
 * @returns probabilities[k][i] for class k in fit.classes order, predicted, margin
 * @throws OddsmithError BAD_OPTION_VALUE for a model of another kind; COLUMN_COUNT_MISMATCH when X
 *   has a different number of columns than the model; RANGE_SHAPE_MISMATCH for ragged columns
 * @example
 * const pred = predictMulticlass(fit, X);
 * pred.probabilities[2][0]; // P(third class) for the first row
 * Reference: Agresti (2013) §8.1.
 */
export function predictMulticlass(fit: ScoringFit, X: DesignMatrix): Prediction {
  if (fit.kind !== "multiclass") {
    throw problem("BAD_OPTION_VALUE", { name: "model", value: fit.kind, expected: "predictMulticlass needs a multi-class model." });
  }
  const off0 = fit.intercept ? 1 : 0;
  const n = checkScoringDesign(fit, X);
  const K = fit.classes.length;
  const p = fit.terms.length;
  // Linear predictors per class, columnar; classes without an equation (reference) stay at 0.
  const eta = Array.from({ length: K }, () => new Float64Array(n));
  fit.coefficients.forEach((b, e) => {
    const k = fit.classes.indexOf(fit.equationClasses[e]);
    const out = eta[k];
    if (fit.intercept) out.fill(fit.aliased[0] ? 0 : b[0]);
    for (let j = off0; j < p; j++) {
      if (fit.aliased[j]) continue;
      const bj = b[j];
      const x = X.columns[j - off0];
      for (let i = 0; i < n; i++) out[i] += bj * x[i];
    }
  });
  // Policy: a row with a non-finite value in any used column (aliased columns are not used) fails.
  const usable = new Uint8Array(n).fill(1);
  for (let j = off0; j < p; j++) {
    if (fit.aliased[j]) continue;
    const x = X.columns[j - off0];
    for (let i = 0; i < n; i++) if (!Number.isFinite(x[i])) usable[i] = 0;
  }
  const probabilities = Array.from({ length: K }, () => new Float64Array(n));
  const predicted = new Int32Array(n);
  const margin = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let max = -Infinity;
    let finite = usable[i] === 1;
    for (let k = 0; k < K && finite; k++) {
      const v = eta[k][i];
      if (!Number.isFinite(v)) finite = false;
      else if (v > max) max = v;
    }
    if (!finite) {
      for (let k = 0; k < K; k++) probabilities[k][i] = NaN;
      predicted[i] = -1;
      margin[i] = NaN;
      continue;
    }
    let sum = 0;
    for (let k = 0; k < K; k++) sum += Math.exp(eta[k][i] - max);
    let best = -1;
    let first = -Infinity;
    let second = -Infinity;
    for (let k = 0; k < K; k++) {
      const pk = Math.exp(eta[k][i] - max) / sum;
      probabilities[k][i] = pk;
      if (pk > first) {
        second = first;
        first = pk;
        best = k;
      } else if (pk > second) {
        second = pk;
      }
    }
    predicted[i] = best;
    margin[i] = first - second;
  }
  return { probabilities, predicted, margin };
}
