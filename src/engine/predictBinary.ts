/**
 * Scoring rows with a fitted binary logistic model: predictBinary.
 *
 * eta_i = offset_i + b0 + x_i'b (aliased terms contribute nothing), p_i = sigmoid(eta_i).
 * SE(eta_i) = sqrt(x~_i' V x~_i) over the estimable terms (x~ includes the 1 of the intercept);
 * the probability interval is eta_i +/- z SE mapped through the sigmoid, so it stays inside (0, 1)
 * (the usual interval for a GLM mean on the link scale; Agresti 2013, ch. 5; R's
 * predict.glm(se.fit = TRUE) gives the same SE).
 * Policy for unusable rows: a NaN in any used predictor or in the offset gives NaN outputs and
 * predicted = -1 for that row; other rows are unaffected.
 */

import { checkScoringDesign } from "./data/checkScoringDesign";
import { criticalZ } from "./distributions";
import { cholesky, subMatrix } from "./linalg";
import { problem } from "./messages";
import { logit, sigmoid } from "./numerics";
import type { DesignMatrix, Prediction, ScoringFit } from "./types";

/** Options of {@link predictBinary}. */
export interface PredictBinaryOptions {
  /** Probability at or above which the positive class is predicted [0.5]. */
  threshold?: number;
  /** Offset added to the linear predictor, one per row [none]. */
  offset?: Float64Array;
  /** Level of the probability interval, in (0, 1) [the fit's level]. */
  level?: number;
}

/**
 * Score rows with a binary fit: class probabilities [1 - p, p], linear predictor and its standard
 * error, an interval for p computed on the logit scale, the predicted class at the threshold, and
 * the margins |p - threshold| and |eta - logit(threshold)|.
 * @param fit - a ModelFit (or a ScoringFit read from a description) with kind "binary"
 * @param X - rows to score, columns in the same order as at fit time (no intercept column)
 * @param options - threshold, offset and interval level
 * @throws OddsmithError COLUMN_COUNT_MISMATCH when X has a different number of columns than the
 *   model; RANGE_SHAPE_MISMATCH for an offset of the wrong length; BAD_OPTION_VALUE for a threshold
 *   or level outside (0, 1)
 * @example
 * const pred = predictBinary(fit, X);
 * pred.probabilities[1][0]; // P(positive class) for the first row
 * Reference: Agresti (2013), ch. 5; McCullagh & Nelder (1989), ch. 2.
 */
export function predictBinary(fit: ScoringFit, X: DesignMatrix, options: PredictBinaryOptions = {}): Prediction {
  if (fit.kind !== "binary") {
    throw problem("BAD_OPTION_VALUE", { name: "model", value: fit.kind, expected: "predictBinary needs a binary model." });
  }
  const threshold = options.threshold ?? 0.5;
  if (!(threshold > 0 && threshold < 1)) {
    throw problem("BAD_OPTION_VALUE", { name: "threshold", value: threshold, expected: "Use a probability strictly between 0 and 1." });
  }
  const level = options.level ?? fit.level;
  if (!(level > 0 && level < 1)) {
    throw problem("BAD_OPTION_VALUE", { name: "level", value: level, expected: "Use a number between 0 and 1, such as 0.95." });
  }
  const off0 = fit.intercept ? 1 : 0;
  const n = checkScoringDesign(fit, X);
  const offset = options.offset ?? null;
  if (offset && offset.length !== n) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument: "offset", got: offset.length, expectedArgument: "predictors", expected: n });
  }
  const p = fit.terms.length;
  const b = fit.coefficients[0];
  const V = fit.covariance;
  // Estimable terms only (aliased ones are ignored, as R's predict on a rank-deficient fit).
  const active: number[] = [];
  for (let j = 0; j < p; j++) if (!fit.aliased[j]) active.push(j);
  const z = criticalZ(level);
  const cut = logit(threshold);

  const prob1 = new Float64Array(n);
  const prob0 = new Float64Array(n);
  const eta = new Float64Array(n);
  const etaSE = new Float64Array(n);
  const lower = new Float64Array(n);
  const upper = new Float64Array(n);
  const predicted = new Int32Array(n);
  const margin = new Float64Array(n);
  const linkMargin = new Float64Array(n);

  // Columnar passes: a NaN anywhere in a used column or the offset propagates into eta.
  const ones = fit.intercept ? new Float64Array(n).fill(1) : null;
  const colOf = (j: number): Float64Array => (fit.intercept && j === 0 ? ones! : X.columns[j - off0]);
  if (offset) eta.set(offset);
  for (const j of active) {
    const x = colOf(j);
    const bj = b[j];
    for (let i = 0; i < n; i++) eta[i] += bj * x[i];
  }
  // Var(eta_i) = x_i' V x_i = |L' x_i|^2 with V = L L' on the estimable terms (m(m+1)/2 passes).
  etaSE.fill(NaN);
  if (V) {
    const m = active.length;
    const sub = subMatrix(V, p, active);
    const c = cholesky(sub, m, 0);
    const se2 = new Float64Array(n);
    const tmp = new Float64Array(n);
    if (c.ok) {
      const L = c.factor;
      for (let j = 0; j < m; j++) {
        tmp.fill(0);
        for (let l = j; l < m; l++) {
          const v = L[l * m + j];
          if (v === 0) continue;
          const x = colOf(active[l]);
          for (let i = 0; i < n; i++) tmp[i] += v * x[i];
        }
        for (let i = 0; i < n; i++) se2[i] += tmp[i] * tmp[i];
      }
    } else {
      // Not positive definite to rounding: the plain quadratic form (m^2 passes).
      for (let j = 0; j < m; j++) {
        tmp.fill(0);
        for (let l = 0; l < m; l++) {
          const v = sub[j * m + l];
          const x = colOf(active[l]);
          for (let i = 0; i < n; i++) tmp[i] += v * x[i];
        }
        const xj = colOf(active[j]);
        for (let i = 0; i < n; i++) se2[i] += xj[i] * tmp[i];
      }
    }
    for (let i = 0; i < n; i++) etaSE[i] = Math.sqrt(Math.max(se2[i], 0));
  }

  for (let i = 0; i < n; i++) {
    const e = eta[i];
    if (Number.isNaN(e)) {
      prob0[i] = prob1[i] = eta[i] = etaSE[i] = lower[i] = upper[i] = margin[i] = linkMargin[i] = NaN;
      predicted[i] = -1;
      continue;
    }
    const se = etaSE[i];
    const pr = sigmoid(e);
    prob1[i] = pr;
    prob0[i] = sigmoid(-e);
    lower[i] = sigmoid(e - z * se);
    upper[i] = sigmoid(e + z * se);
    predicted[i] = pr >= threshold ? 1 : 0;
    margin[i] = Math.abs(pr - threshold);
    linkMargin[i] = Math.abs(e - cut);
  }
  return { probabilities: [prob0, prob1], linearPredictor: eta, linearPredictorSE: etaSE, lower, upper, predicted, margin, linkMargin };
}
