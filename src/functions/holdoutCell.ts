/**
 * ODDS.HOLDOUT(labels, predictors, [split], [options]): the model that ODDS.FIT would fit, fitted on
 * the training rows only (a split column of the user's, or a seeded split stratified by class) and
 * judged on the held-out rows beside its own training rows (engine holdOut).
 *
 * Layouts (option show):
 * - scores (default): one row per score (rows, log-loss, Brier score, AUC and accuracy at the
 *   threshold for two classes, calibration slope and intercept, the four counts at the threshold,
 *   sensitivity and specificity; several classes: rows, log-loss, Brier score, accuracy) with a
 *   column for the training rows, one for the held-out rows and their difference; then the split,
 *   rows and notes, and what the scores cannot show.
 * - held-out: the held-out rows' probabilities (two classes: the positive class; several: one
 *   column per class), aligned with the input (a header row when the input has one), "" for every
 *   other row, so LOGLOSS, AUC, CALIBRATION or CUTOFF run on it judge the held-out rows only.
 * - probabilities: the training fit's probabilities for every row it can score, aligned the same way.
 * - split: each row's role, "training", "held out" or "" (left out), aligned the same way.
 */
import { CELL_BUDGET, holdOut, type CellValue, type HoldOutResult, type SideScores } from "../engine";
import { formatMessage, problem } from "../shared/messages";
import { spill } from "../shared/cellOutput";
import { HOLDOUT_OPTIONS } from "./evaluationOptions";
import { scoreLabels } from "./scoreLabels";
import { modelOptionsOf } from "../shared/fitService";
import { parseOptions, type ParsedOptions } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { distinctLabels } from "./predictCells";
import { required } from "./required";
import { checkOutputSize } from "../shared/sheetLimits";

type HoldoutOptions = ParsedOptions<typeof HOLDOUT_OPTIONS>;

/** The ODDS.HOLDOUT adapter (see the layouts above). */
export function holdoutCell(
  labels: CellValue[][] | null,
  predictors: CellValue[][] | null,
  split: CellValue[][] | null,
  options: CellValue[][] | null,
): CellValue[][] {
  const l = required(labels, "labels");
  const p = required(predictors, "predictors");
  const o = parseOptions("ODDS.HOLDOUT", HOLDOUT_OPTIONS, options);
  if (split && o.holdout !== null) throw problem("HOLDOUT_BOTH_SPLITS", { value: `holdout=${o.holdout}` });
  const aligned = o.show === "scores" ? 40 : alignedSize(l, o.show);
  checkPayload(
    [{ argument: "labels", cells: l }, { argument: "predictors", cells: p }, ...(split ? [{ argument: "split", cells: split }] : [])],
    aligned,
  );
  const result = holdOut({
    labels: l,
    predictors: p,
    options: { ...modelOptionsOf(o), threshold: o.threshold },
    marks: split,
    share: o.holdout ?? undefined,
    seed: o.seed,
    recipe: o.recipe.length > 0 ? o.recipe.join("; ") : null,
    budget: CELL_BUDGET,
  });
  if (o.show === "held-out") return probabilityRows(result, true);
  if (o.show === "probabilities") return probabilityRows(result, false);
  if (o.show === "split") return splitRows(result);
  return scoreTable(result);
}

/** The output size known before the fit: aligned outputs have a row per input row. */
function alignedSize(labels: CellValue[][], show: string): number {
  const classes = show === "split" ? 1 : distinctLabels(labels);
  const columns = classes > 2 ? classes : 1;
  checkOutputSize(labels.length, columns, {
    fn: "ODDS.HOLDOUT",
    what: columns > 1 ? `one probability per class (${classes} classes) for each row` : "one value for each row",
    hint: "Check fewer rows per formula, or use the task pane.",
  });
  return labels.length * columns;
}

/** True when the labels range starts with a header row (the fit's decision). */
function headerOf(result: HoldOutResult): boolean {
  return result.firstRow > 1;
}

/** Probabilities aligned with the input rows: of the held-out rows only, or of every scored row. */
function probabilityRows(result: HoldOutResult, heldOutOnly: boolean): CellValue[][] {
  const shown = result.kind === "binary" ? [1] : result.classes.map((_, k) => k);
  const which = heldOutOnly ? "held-out " : "";
  const rows: unknown[][] = headerOf(result) ? [shown.map((k) => `${which}P(${result.classes[k]}), training fit`)] : [];
  for (let i = 0; i < result.rows; i++) {
    const keep = result.roles[i] === 0 || (!heldOutOnly && result.roles[i] === 1);
    rows.push(shown.map((k) => (keep && Number.isFinite(result.probabilities[k][i]) ? result.probabilities[k][i] : "")));
  }
  return spill(rows);
}

/** Each row's role, aligned with the input rows. */
function splitRows(result: HoldOutResult): CellValue[][] {
  const rows: unknown[][] = headerOf(result) ? [["split"]] : [];
  for (let i = 0; i < result.rows; i++) rows.push([result.roles[i] === 1 ? "training" : result.roles[i] === 0 ? "held out" : ""]);
  return spill(rows);
}

/** One score row: label, training value, held-out value, difference. */
function sideBySide(label: string, of: (s: SideScores) => number | null | undefined, result: HoldOutResult): unknown[] {
  const a = of(result.training);
  const b = of(result.heldOut);
  const num = (x: number | null | undefined) => (x === null || x === undefined || !Number.isFinite(x) ? "" : x);
  return [label, num(a), num(b), typeof a === "number" && typeof b === "number" && Number.isFinite(a) && Number.isFinite(b) ? b - a : ""];
}

/** The scores table, then the split's facts, the notes and what the scores cannot show. */
function scoreTable(result: HoldOutResult): CellValue[][] {
  const rows: unknown[][] = [["score", "training rows", "held-out rows", "held-out minus training"]];
  rows.push(sideBySide("rows", (s) => s.scores.rows, result));
  for (const r of scoreLabels(result.kind, result.threshold)) rows.push(sideBySide(r.label, (s) => s.scores[r.key], result));
  if (result.kind === "binary") {
    rows.push(sideBySide("calibration slope", (s) => s.calibration?.slope, result));
    rows.push(sideBySide("calibration intercept (with the slope)", (s) => s.calibration?.intercept, result));
    rows.push(sideBySide("calibration-in-the-large", (s) => s.calibration?.inTheLarge, result));
    const t = result.threshold;
    rows.push(sideBySide(`true positives (threshold ${t})`, (s) => s.counts?.truePositives, result));
    rows.push(sideBySide(`false positives (threshold ${t})`, (s) => s.counts?.falsePositives, result));
    rows.push(sideBySide(`true negatives (threshold ${t})`, (s) => s.counts?.trueNegatives, result));
    rows.push(sideBySide(`false negatives (threshold ${t})`, (s) => s.counts?.falseNegatives, result));
    rows.push(sideBySide(`sensitivity (threshold ${t})`, (s) => s.counts?.sensitivity, result));
    rows.push(sideBySide(`specificity (threshold ${t})`, (s) => s.counts?.specificity, result));
  }
  let left = 0;
  for (let i = 0; i < result.rows; i++) if (result.roles[i] < 0) left++;
  rows.push(
    [],
    ["split", result.seeded ? `seeded, ${result.seeded.share} of each class held out` : "split column"],
    ["seed", result.seeded ? result.seeded.seed : ""],
    ["rows left out (no mark, or no label or predictor value)", left],
    ["held-out rows without a probability", result.unscored.count],
    result.kind === "binary" ? ["positive class", result.positiveClass ?? ""] : ["classes", result.classes.join(", ")],
    [],
    ...result.notes.map((n) => [n.message]),
    [formatMessage("EVALUATION_SCOPE")],
  );
  return spill(rows);
}
