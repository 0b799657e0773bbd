/**
 * The scores of predicted probabilities on a set of rows (a fold's held-out rows, all out-of-fold
 * rows, a held-out split or the training rows): log-loss, Brier score, AUC (two classes) and
 * accuracy, each from the metric functions of src/engine/metrics (weighted when weights are given).
 *
 * Policy (one line each):
 * - Two classes: the labels are 1 for the positive class (class index 1) and 0 otherwise; a row is
 *   predicted positive when its probability reaches the threshold (as in confusionCounts).
 * - Several classes: the multi-class log-loss, the multi-class Brier score (sum over classes of the
 *   squared differences) and the accuracy of the most probable class; no AUC (NaN).
 * - A metric the rows cannot define (only one class present with a positive weight, zero total
 *   weight) is NaN, never a thrown error: the caller says so where it matters.
 */
import { accuracy } from "../metrics/accuracy";
import { brierScore } from "../metrics/brierScore";
import { logLoss } from "../metrics/logLoss";
import { multiclassAccuracy } from "../metrics/multiclassAccuracy";
import { multiclassBrierScore } from "../metrics/multiclassBrierScore";
import { multiclassLogLoss } from "../metrics/multiclassLogLoss";
import { rocAuc } from "../metrics/rocAuc";
import { OddsmithError } from "../messages";

/** The four scores of one set of rows. */
export interface HeldOutScores {
  logLoss: number;
  brier: number;
  /** Two classes only (NaN otherwise). */
  auc: number;
  accuracy: number;
  /** Rows scored. */
  rows: number;
}

/** The names of the four scores, in output order. */
export const SCORE_NAMES = ["logLoss", "brier", "auc", "accuracy"] as const;
export type ScoreName = (typeof SCORE_NAMES)[number];

/** A metric's value, or NaN when the rows cannot define it (an input problem of the metric). */
function orNaN(f: () => number): number {
  try {
    return f();
  } catch (e) {
    if (e instanceof OddsmithError) return NaN;
    throw e;
  }
}

/**
 * Scores of the rows `rows` (data-row indices).
 *
 * Method: log-loss and Brier score are proper scoring rules (Gneiting & Raftery 2007, "Strictly
 * proper scoring rules, prediction, and estimation", JASA 102:359-378); AUC by the Mann-Whitney
 * statistic (rocAuc); accuracy at the threshold (two classes) or of the most probable class.
 *
 * @param classOfRow class index per data row (two classes: 1 = positive)
 * @param probabilities one column per class, per data row
 * @param weights case weight per data row, or null
 * @example heldOutScores(Int32Array.from([0, 1]), [Float64Array.from([0.8, 0.3]), Float64Array.from([0.2, 0.7])], [0, 1], null, 0.5)
 * // { logLoss: 0.290..., brier: 0.065, auc: 1, accuracy: 1, rows: 2 }
 */
export function heldOutScores(
  classOfRow: Int32Array,
  probabilities: readonly Float64Array[],
  rows: readonly number[],
  weights: Float64Array | null,
  threshold: number,
): HeldOutScores {
  const m = rows.length;
  const w = weights ? Float64Array.from(rows, (i) => weights[i]) : null;
  if (probabilities.length === 2) {
    const y = Float64Array.from(rows, (i) => (classOfRow[i] === 1 ? 1 : 0));
    const p = Float64Array.from(rows, (i) => probabilities[1][i]);
    return {
      logLoss: orNaN(() => logLoss(y, p, { weights: w }).value),
      brier: orNaN(() => brierScore(y, p, { weights: w }).value),
      auc: orNaN(() => rocAuc(y, p, { weights: w }).auc),
      accuracy: orNaN(() => accuracy(y, p, { threshold, weights: w }).value),
      rows: m,
    };
  }
  const codes = Int32Array.from(rows, (i) => classOfRow[i]);
  const probs = probabilities.map((col) => Float64Array.from(rows, (i) => col[i]));
  return {
    logLoss: orNaN(() => multiclassLogLoss(codes, probs, { weights: w }).value),
    brier: orNaN(() => multiclassBrierScore(codes, probs, { weights: w }).value),
    auc: NaN,
    accuracy: orNaN(() => multiclassAccuracy(codes, probs, { weights: w }).value),
    rows: m,
  };
}
