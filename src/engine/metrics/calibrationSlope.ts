import { fitBinaryModel } from "../binary";
import { problem } from "../messages";
import { DEFAULT_LOG_CLIP } from "../numerics";
import type { Diagnostic, ModelFit } from "../types";
import { checkBinaryInputs } from "./checkBinaryInputs";
import { checkOptionValue } from "./checkOptionValue";
import { makeDiagnostic } from "./makeDiagnostic";

/** Options of {@link calibrationSlope}. */
export interface CalibrationSlopeOptions {
  /** Case (frequency) weights, finite and >= 0, one per row [all 1]. */
  weights?: Float64Array | null;
  /** Confidence level of the Wald intervals, 0 < level < 1 [0.95]. */
  level?: number;
  /** Probabilities are clipped to [eps, 1 - eps] before the logit, 0 < eps < 0.5 [1e-15]. */
  eps?: number;
}

/** One estimated calibration coefficient with its Wald standard error and interval. */
export interface CalibrationCoefficient {
  estimate: number;
  standardError: number;
  lower: number;
  upper: number;
}

/** Calibration intercept and slope of probabilities against observed labels. */
export interface CalibrationSlopeResult {
  /** Slope b of logit P(y = 1) = a + b logit(p): 1 is ideal, < 1 means predictions too extreme. */
  slope: CalibrationCoefficient;
  /** The intercept a of the same (slope) model. */
  interceptWithSlope: CalibrationCoefficient;
  /** Calibration-in-the-large: a in logit P(y = 1) = a + 1 * logit(p) (offset); 0 is ideal, > 0 means predictions too low. */
  intercept: CalibrationCoefficient;
  level: number;
  eps: number;
  /** Rows whose probability was moved to eps or 1 - eps before the logit. */
  clippedRows: number;
  /** Clipping warnings, CONSTANT_PROBABILITIES, and every diagnostic of the two logistic fits. */
  diagnostics: Diagnostic[];
}

const NOT_ESTIMATED: CalibrationCoefficient = { estimate: NaN, standardError: NaN, lower: NaN, upper: NaN };

function coefficient(fit: ModelFit, index: number): CalibrationCoefficient {
  const row = fit.table[index];
  if (!row || !row.estimable) return { ...NOT_ESTIMATED };
  return { estimate: row.estimate, standardError: row.standardError, lower: row.lower, upper: row.upper };
}

/**
 * Calibration intercept and slope (logistic recalibration) of predicted probabilities.
 *
 * Models, both fitted by maximum likelihood with the engine's binary logistic fitter
 * (fitBinaryModel: Newton-Raphson, Wald intervals at `level`):
 *   slope:     logit P(y_i = 1) = a + b * logit(p_i)          -> slope b (ideal 1) and its intercept a
 *   intercept: logit P(y_i = 1) = a + logit(p_i)   (offset)   -> calibration-in-the-large a (ideal 0)
 * logit(p) = ln(p / (1 - p)) after clipping p to [eps, 1 - eps] (eps = 1e-15 by default, as for the
 * log-loss; a clipped row sits at logit +/-34.5 and carries much leverage, so a warning says how many
 * rows were clipped). If every row with positive weight has the same probability the slope is not
 * estimable (CONSTANT_PROBABILITIES, slope NaN) while the calibration-in-the-large is still given.
 * Other diagnostics of the fits (for example non-convergence) are passed on. When the probabilities separate the
 * labels (no negative row above a positive one) the slope is unbounded: it is NaN, never a huge
 * number, with a CALIBRATION_SLOPE_UNBOUNDED error.
 *
 * References: Cox (1958), "Two further applications of a model for binary regression", Biometrika
 * 45:562-565; Van Calster et al. (2019), "Calibration: the Achilles heel of predictive analytics",
 * BMC Medicine 17:230 (https://doi.org/10.1186/s12916-019-1466-7); Steyerberg, Clinical Prediction
 * Models, 2nd ed. (2019), ch. 15.
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param probabilities - predicted probability of the positive class per row, in [0, 1]
 * @param options - weights, level and eps
 * @throws OddsmithError EMPTY_RANGE, RANGE_SHAPE_MISMATCH, METRIC_MISSING_VALUE, BAD_BINARY_LABEL,
 *   BAD_PROBABILITY, BAD_WEIGHT, ZERO_TOTAL_WEIGHT, BAD_OPTION_VALUE (level, eps),
 *   METRIC_NEEDS_BOTH_CLASSES (all rows of positive weight in one class)
 * @example
 * const y = Float64Array.of(0, 0, 1, 0, 1, 1, 0, 1, 1, 1);
 * const p = Float64Array.of(0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.85, 0.9);
 * const r = calibrationSlope(y, p);
 * // r.slope.estimate 1.1920 (SE 0.761), r.intercept.estimate 0.3706: R's glm gives 1.192001 and 0.370633
 */
export function calibrationSlope(
  labels: Float64Array,
  probabilities: Float64Array,
  options: CalibrationSlopeOptions = {},
): CalibrationSlopeResult {
  const level = checkOptionValue("level", options.level, 0.95, 0, 1, false);
  const eps = checkOptionValue("eps", options.eps, DEFAULT_LOG_CLIP, 0, 0.5, false);
  const weights = options.weights ?? null;
  const checked = checkBinaryInputs(labels, probabilities, weights, "probability");
  if (!(checked.positiveWeight > 0) || !(checked.negativeWeight > 0)) {
    throw problem("METRIC_NEEDS_BOTH_CLASSES", { metric: "The calibration slope", label: checked.positiveWeight > 0 ? 1 : 0 });
  }
  const n = checked.rows;
  const logits = new Float64Array(n);
  let clippedRows = 0;
  let firstClipped = -1;
  let first = NaN;
  let constant = true;
  for (let i = 0; i < n; i++) {
    let p = probabilities[i];
    if (p < eps || p > 1 - eps) {
      p = p < eps ? eps : 1 - eps;
      clippedRows++;
      if (firstClipped < 0) firstClipped = i;
    }
    logits[i] = Math.log(p) - Math.log1p(-p);
    if (!weights || weights[i] > 0) {
      if (first !== first) first = probabilities[i];
      else if (probabilities[i] !== first) constant = false;
    }
  }
  const diagnostics: Diagnostic[] = [];
  if (clippedRows > 0) {
    diagnostics.push(makeDiagnostic("PROBABILITIES_CLIPPED", "warning", { count: clippedRows, row: firstClipped + 1, eps }, [firstClipped]));
  }
  const fitOptions = { weights, level, intercept: true };
  const offsetFit = fitBinaryModel({ rows: n, columns: [], names: [] }, labels, { ...fitOptions, offset: logits });
  diagnostics.push(...offsetFit.diagnostics);
  const intercept = coefficient(offsetFit, 0);
  let slope = { ...NOT_ESTIMATED };
  let interceptWithSlope = { ...NOT_ESTIMATED };
  if (constant) {
    diagnostics.push(makeDiagnostic("CONSTANT_PROBABILITIES", "error", { value: first, measure: "the calibration slope" }));
  } else {
    const slopeFit = fitBinaryModel({ rows: n, columns: [logits], names: ["logit(p)"] }, labels, fitOptions);
    // Separation here means the probabilities rank the labels perfectly: say that in calibration
    // terms instead of passing on the fitter's advice about predictor columns.
    for (const d of slopeFit.diagnostics) {
      if (d.code === "SEPARATION_COMPLETE" || d.code === "SEPARATION_QUASI") {
        diagnostics.push(makeDiagnostic("CALIBRATION_SLOPE_UNBOUNDED", "error", {}, d.rows));
      } else diagnostics.push(d);
    }
    interceptWithSlope = coefficient(slopeFit, 0);
    slope = coefficient(slopeFit, 1);
  }
  return { slope, interceptWithSlope, intercept, level, eps, clippedRows, diagnostics };
}
