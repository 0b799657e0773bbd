/**
 * One fit of a cross-validation or held-out check: the model fitted on the training rows only, and
 * the probabilities it gives every data row (the held-out rows are read off by the caller).
 *
 * Policy (one line each):
 * - Only the training rows enter the fit: every other row's label is blanked in a copy of the labels
 *   cells, so the facade skips it as a row without a label (trainModel), while its predictor cells
 *   stay in place and are scored like any row without a label (scoreRows); nothing about those rows
 *   reaches the fit (levels, pooling and standardization are learned from the fitted rows, and a
 *   recipe from the training rows: foldPredictors.ts).
 * - A problem the user could fix on the whole data (a reference level absent from the training rows,
 *   a recipe that cannot be fitted on them) or a fit without usable estimates (separation,
 *   divergence) makes the fit "failed" with its catalogue message; the caller decides what that means.
 * - A row the trained model cannot score (a category level not seen in the training rows, a basis
 *   value the trained transforms cannot make) gets NaN probabilities and its reason.
 */
import { OddsmithError, problem } from "../messages";
import { scoreRows, trainModel, type TrainedModel } from "../model";
import type { RecipeState } from "../basis/recipe";
import type { CellValue } from "../types";
import type { EvaluationData } from "./evaluationData";

/** Why a row has no probability. */
export interface RowReason {
  code: string;
  message: string;
}

/** A fit on some rows and its probabilities for every data row. */
export interface RowsFit {
  /** The model, or null when the fit failed. */
  model: TrainedModel | null;
  /** The catalogue message of a failed fit (input problem or no usable estimates). */
  failure: { code: string; message: string } | null;
  /** Probability of each class (ModelFit order), per data row; NaN where a row is not scored. */
  probabilities: Float64Array[];
  /** Why rows were not scored (data-row index, 0-based). */
  reasons: Map<number, RowReason>;
  converged: boolean;
  /** The recipe fitted on the training rows, or null without a recipe. */
  recipe: RecipeState | null;
}

/** A copy of the labels cells holding only the training rows' labels (every other label blank). */
export function labelsOfRows(labels: CellValue[][], header: boolean, training: Uint8Array): CellValue[][] {
  const start = header ? 1 : 0;
  const out: CellValue[][] = new Array(labels.length);
  for (let r = 0; r < labels.length; r++) {
    const i = r - start;
    out[r] = i < 0 || (i < training.length && training[i] === 1) ? labels[r] : labels[r].map(() => null);
  }
  return out;
}

/** A failed fit: no model, no probabilities. */
function failed(data: EvaluationData, failure: RowsFit["failure"], recipe: RecipeState | null): RowsFit {
  const nan = data.classes.map(() => new Float64Array(data.rows).fill(NaN));
  return { model: null, failure, probabilities: nan, reasons: new Map(), converged: false, recipe };
}

/**
 * Fit the model of `data` on the rows marked 1 in `training` with ridge penalty `penalty`, and score
 * every data row (see the policy above).
 *
 * Method: the fit is trainModel's (Newton-Raphson on the logistic or multinomial likelihood, with an
 * optional L2 penalty); holding rows out of it and scoring them is the basic step of hold-out and
 * cross-validation estimates (Stone 1974, "Cross-validatory choice and assessment of statistical
 * predictions", JRSS B 36:111-147).
 *
 * @param training 1 for each data row the fit uses (only rows that can enter a fit)
 * @example fitOnRows(data, Uint8Array.from([1, 1, 0, 1]), 0).probabilities[1][2] // held-out row's P(positive)
 */
export function fitOnRows(data: EvaluationData, training: Uint8Array, penalty: number): RowsFit {
  let recipe: RecipeState | null = null;
  let model: TrainedModel;
  let basisReasons: Map<number, RowReason>;
  try {
    const predictors = data.predictors.forTraining(data.predictors.usesRecipe ? training : null);
    recipe = predictors.state;
    basisReasons = predictors.rowReasons;
    model = trainModel(labelsOfRows(data.labels, data.header, training), predictors.cells, { ...data.options, penalty });
  } catch (e) {
    if (e instanceof OddsmithError) return failed(data, { code: e.code, message: e.message }, recipe);
    throw e;
  }
  const error = model.fit.diagnostics.find((d) => d.severity === "error");
  if (error) return failed(data, { code: error.code, message: error.message }, recipe);
  const classes = model.fit.classes;
  if (classes.length !== data.classes.length || classes.some((c, k) => c !== data.classes[k])) {
    // Unreachable by the callers' checks (every class has training rows), kept as a guard.
    const e = problem("INTERNAL", { doing: "fitting on the training rows (a class has no training row)" });
    return failed(data, { code: e.code, message: e.message }, recipe);
  }
  const scores = scoreRows(model, null);
  const reasons = new Map<number, RowReason>();
  for (const p of scores.problems) {
    // A blank basis value says why through the recipe's own note.
    reasons.set(p.index, basisReasons.get(p.index) ?? { code: p.code, message: p.message });
  }
  // (Blanked labels at the end of the range can shorten the read: rows past it are not in any fit.)
  const probabilities = scores.prediction.probabilities.map((col) => padded(col, data.rows));
  return { model, failure: null, probabilities, reasons, converged: model.fit.converged, recipe };
}

/** A column of probabilities as long as the data (NaN past its end). */
function padded(col: Float64Array, rows: number): Float64Array {
  if (col.length >= rows) return col;
  const out = new Float64Array(rows).fill(NaN);
  out.set(col);
  return out;
}
