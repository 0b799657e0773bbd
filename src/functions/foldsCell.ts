/**
 * ODDS.FOLDS(labels, predictors, [options]): k-fold cross-validation of the model that ODDS.FIT
 * would fit on the same ranges (engine crossValidate), for one penalty or a path of penalties.
 *
 * Layouts (option show):
 * - scores (default without penalties): one row per score (log-loss, Brier score, AUC for two
 *   classes, accuracy) with its mean over the folds, its standard error, the pooled out-of-fold
 *   value and (one penalty) the in-sample value of the fit on all rows; then the folds, seed,
 *   penalty, rows and notes, and what the scores cannot show.
 * - path (default with penalties): one row per penalty with the mean log-loss, its SE, the mean
 *   Brier score, AUC and accuracy, and which penalty is the lowest and the one-SE choice.
 * - out-of-fold: each row's out-of-fold probability (two classes: the positive class; several: one
 *   column per class), aligned with the input (a header row when the input has one), "" for rows
 *   outside the folds or without a value, so LOGLOSS, AUC or CALIBRATION can be run on it.
 * - folds: each row's fold (1..k), aligned the same way, "" for rows outside the folds.
 * With penalties, scores and out-of-fold are at the picked penalty (pick=one-se, or lowest).
 */
import { CELL_BUDGET, crossValidate, type CellValue, type CrossValidationResult, type PenaltyScores } from "../engine";
import { formatMessage, problem } from "../shared/messages";
import { spill } from "../shared/cellOutput";
import { FOLDS_OPTIONS, readPenalties } from "./evaluationOptions";
import { scoreLabels } from "./scoreLabels";
import { modelOptionsOf } from "../shared/fitService";
import { parseOptions, type ParsedOptions } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { distinctLabels } from "./predictCells";
import { required } from "./required";
import { checkOutputSize } from "../shared/sheetLimits";

type FoldsOptions = ParsedOptions<typeof FOLDS_OPTIONS>;

/** The output size known before any fit: aligned outputs have a row per input row. */
function checkAlignedOutput(labels: CellValue[][], show: string): number {
  const classes = show === "out-of-fold" ? distinctLabels(labels) : 1;
  const columns = classes > 2 ? classes : 1;
  checkOutputSize(labels.length, columns, {
    fn: "ODDS.FOLDS",
    what: columns > 1 ? `one out-of-fold probability per class (${classes} classes) for each row` : "one value for each row",
    hint: "Cross-validate fewer rows per formula, or use the task pane.",
  });
  return labels.length * columns;
}

/** The ODDS.FOLDS adapter (see the layouts above). */
export function foldsCell(labels: CellValue[][] | null, predictors: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const l = required(labels, "labels");
  const p = required(predictors, "predictors");
  const o = parseOptions("ODDS.FOLDS", FOLDS_OPTIONS, options);
  const penalties = readPenalties(o.penalties, o.steps);
  if (penalties && o.penalty > 0) {
    throw problem("BAD_OPTION_VALUE", { name: "penalty", value: o.penalty, expected: "Give either one penalty or a list of penalties (penalties=...), not both." });
  }
  const show = o.show ?? (penalties ? "path" : "scores");
  const aligned = show === "out-of-fold" || show === "folds" ? checkAlignedOutput(l, show) : 80;
  checkPayload([{ argument: "labels", cells: l }, { argument: "predictors", cells: p }], aligned);
  const result = crossValidate({
    labels: l,
    predictors: p,
    options: { ...modelOptionsOf(o), threshold: o.threshold },
    folds: o.folds,
    seed: o.seed,
    penalties,
    recipe: o.recipe.length > 0 ? o.recipe.join("; ") : null,
    outOfFold: show === "out-of-fold",
    pick: o.pick,
    budget: CELL_BUDGET,
  });
  if (show === "out-of-fold") return outOfFoldRows(result);
  if (show === "folds") return foldRows(result);
  return show === "path" ? pathRows(result) : scoreRowsOf(result, o);
}

/** True when the labels range starts with a header row (the fit's decision). */
function headerOf(result: CrossValidationResult): boolean {
  return result.firstRow > 1;
}

/** The out-of-fold probabilities, aligned with the input rows. */
function outOfFoldRows(result: CrossValidationResult): CellValue[][] {
  const oof = result.outOfFold as NonNullable<CrossValidationResult["outOfFold"]>;
  const shown = result.kind === "binary" ? [1] : result.classes.map((_, k) => k);
  const at = result.path ? ` at penalty ${oof.penalty}` : "";
  const rows: unknown[][] = headerOf(result) ? [shown.map((k) => `out-of-fold P(${result.classes[k]})${at}`)] : [];
  for (let i = 0; i < result.rows; i++) rows.push(shown.map((k) => oof.probabilities[k][i]));
  return spill(rows);
}

/** Each row's fold (1-based), aligned with the input rows. */
function foldRows(result: CrossValidationResult): CellValue[][] {
  const rows: unknown[][] = headerOf(result) ? [[`fold (of ${result.folds})`]] : [];
  for (let i = 0; i < result.rows; i++) rows.push([result.assignment[i] >= 0 ? result.assignment[i] + 1 : ""]);
  return spill(rows);
}

/** The choice marks of a path entry. */
function choiceOf(result: CrossValidationResult, k: number, e: PenaltyScores): string {
  if (e.failure) return `no usable fit in fold ${e.failure.fold + 1}`;
  const marks: string[] = [];
  if (k === result.lowest) marks.push("lowest");
  if (k === result.oneSe) marks.push("one-SE");
  return marks.join(", ");
}

/** One row per penalty, then the run's facts and notes. */
function pathRows(result: CrossValidationResult): CellValue[][] {
  const binary = result.kind === "binary";
  const header = ["penalty", "mean log-loss", "SE", "mean Brier score", ...(binary ? ["mean AUC"] : []), "mean accuracy", "choice"];
  const rows: unknown[][] = [header];
  result.entries.forEach((e, k) => {
    const s = e.scores;
    rows.push([e.penalty, s.logLoss.mean, s.logLoss.standardError, s.brier.mean, ...(binary ? [s.auc.mean] : []), s.accuracy.mean, choiceOf(result, k, e)]);
  });
  rows.push([], ...runFacts(result, null), ...result.notes.map((n) => [n.message]));
  return spill(rows);
}

/** The scores table at the single or picked penalty, then the run's facts and notes. */
function scoreRowsOf(result: CrossValidationResult, o: FoldsOptions): CellValue[][] {
  const at = result.path ? (o.pick === "lowest" ? result.lowest : result.oneSe) : 0;
  const e = result.entries[at];
  if (e.failure) {
    throw problem("CV_FOLD_FAILED", { fold: e.failure.fold + 1, folds: result.folds, penalty: ` (penalty ${e.penalty})`, reason: e.failure.message });
  }
  const inSample = result.path ? null : result.inSample;
  const header = ["score", `mean over ${result.folds} folds`, "SE", "pooled out-of-fold", ...(inSample ? ["in-sample (all rows)"] : [])];
  const rows: unknown[][] = [header, ...scoreLabels(result.kind, result.threshold).map((r) => {
    const s = e.scores[r.key];
    return [r.label, s.mean, s.standardError, e.pooled ? e.pooled[r.key] : "", ...(inSample ? [inSample[r.key]] : [])];
  })];
  const penalty = result.path ? `${e.penalty} (${at === result.oneSe ? "one-SE choice" : "lowest mean log-loss"} of ${result.entries.length} penalties)` : e.penalty;
  rows.push([], ...runFacts(result, penalty), ...result.notes.map((n) => [n.message]), [formatMessage("EVALUATION_SCOPE")]);
  return spill(rows);
}

/** Folds, seed, penalty, rows and classes, one fact a row. */
function runFacts(result: CrossValidationResult, penalty: number | string | null): unknown[][] {
  const sizes = result.foldRows;
  const facts: unknown[][] = [
    ["folds", result.folds],
    ["seed", result.seed ?? ""],
  ];
  if (penalty !== null) facts.push(["penalty", penalty]);
  facts.push(
    ["rows in the folds", result.rowsInFolds],
    ["rows per fold", Math.min(...sizes) === Math.max(...sizes) ? sizes[0] : `${Math.min(...sizes)} to ${Math.max(...sizes)}`],
    ["rows without an out-of-fold value", result.unscored.count],
    result.kind === "binary" ? ["positive class", result.positiveClass ?? ""] : ["classes", result.classes.join(", ")],
    [],
  );
  return facts;
}
