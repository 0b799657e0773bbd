/**
 * ODDS.PROB, ODDS.CLASS and ODDS.MARGIN: per-row outputs of the (cached) fit of labels x predictors,
 * for the training rows or for new rows.
 *
 * Policy (one line each):
 * - Output rows line up with the scored range's rows (the training ranges, or new_rows when given):
 *   a header row naming the output (beside the input's header row), then one row per data row. When
 *   the scored range has no header row the output has none either, so rows still line up.
 * - A row that cannot be scored (a blank or unknown value in a predictor) is "" in every column; the
 *   other rows are scored. Training rows with a blank LABEL but complete predictors are scored too:
 *   rows to predict can sit below the training rows of the same table with their label left blank.
 * - PROB: two classes -> one column, the positive class ("P(yes)"); several -> one column per class,
 *   in the model's class order. CLASS: the predicted class name. MARGIN: two classes ->
 *   |p - threshold|; several -> the gap between the two largest class probabilities.
 * - threshold (option) sets the two-class decision for CLASS and MARGIN; it never refits.
 */
import { isBlankCell, MAX_CLASSES, scoreRows, type RowScores, type CellValue } from "../engine";
import { checkOutputSize } from "../shared/sheetLimits";
import { spill } from "../shared/cellOutput";
import { readModelOptions } from "../shared/fitService";
import { fittedModel, refuseThresholdForSeveralClasses, requireUsableFit } from "./modelCell";
import { checkPayload } from "../shared/payload";

type Output = "prob" | "class" | "margin";

const FN: Record<Output, string> = { prob: "ODDS.PROB", class: "ODDS.CLASS", margin: "ODDS.MARGIN" };

/** Rows a call returns (one per scored row, header included), for the payload estimate. */
function outputRows(labels: CellValue[][] | null, newRows: CellValue[][] | null): number {
  return Array.isArray(newRows) ? newRows.length : Array.isArray(labels) ? labels.length : 1;
}

/**
 * Distinct non-blank values of the labels' first column, counted up to MAX_CLASSES + 2 (more are
 * refused by the fit anyway). A text first row is left out (it is usually the header); should it be
 * a class of its own, the estimate is one column short, and the payload check after the fit and
 * spill's last guard still hold the output to the sheet's limits.
 */
export function distinctLabels(labels: CellValue[][] | null): number {
  if (!Array.isArray(labels)) return 1;
  const seen = new Set<unknown>();
  for (let i = 0; i < labels.length; i++) {
    const row = labels[i];
    const v = Array.isArray(row) ? row[0] : row;
    if (i === 0 && typeof v === "string") continue;
    if (isBlankCell(v)) continue;
    seen.add(typeof v === "string" ? v.trim() : v);
    if (seen.size > MAX_CLASSES + 1) break;
  }
  return seen.size;
}

function scored(
  what: Output,
  labels: CellValue[][] | null,
  predictors: CellValue[][] | null,
  newRows: CellValue[][] | null,
  options: CellValue[][] | null,
): RowScores {
  const opts = readModelOptions(FN[what], options);
  const inputs = newRows ? [{ argument: "new_rows", cells: newRows }] : [];
  // The output's size is known before the fit: the scored rows, and (PROB) one column per class.
  const classes = what === "prob" ? distinctLabels(labels) : 1;
  checkOutputSize(outputRows(labels, newRows), classes > 2 ? classes : 1, {
    fn: FN[what],
    what: what === "prob" && classes > 2 ? `one probability column per class (${classes} classes) for each scored row` : "one value for each scored row",
    hint: "Score fewer rows per formula (for example split new_rows over several formulas).",
  });
  // One output column per row for CLASS, MARGIN and two-class PROB...
  const model = fittedModel(labels, predictors, opts, outputRows(labels, newRows), inputs);
  requireUsableFit(model);
  if (what === "prob" && model.fit.classes.length > 2) {
    // ...and one per class for multi-class PROB, known once the classes are.
    checkPayload(
      [{ argument: "labels", cells: labels }, { argument: "predictors", cells: predictors }, ...inputs],
      outputRows(labels, newRows) * model.fit.classes.length,
    );
  }
  if (what !== "prob") refuseThresholdForSeveralClasses(model, opts.threshold);
  return scoreRows(model, newRows, { threshold: opts.threshold, headers: opts.headers });
}

/** The output's header row when the scored range has one (so rows line up), else nothing. */
function headerRow(s: RowScores, names: string[]): unknown[][] {
  return s.header ? [names] : [];
}

/** The ODDS.PROB adapter: class probabilities per row. */
export function probCell(
  labels: CellValue[][] | null,
  predictors: CellValue[][] | null,
  newRows: CellValue[][] | null,
  options: CellValue[][] | null,
): CellValue[][] {
  const s = scored("prob", labels, predictors, newRows, options);
  const shown = s.classes.length === 2 ? [s.classes.indexOf(s.positiveClass as string)] : s.classes.map((_, k) => k);
  const rows: unknown[][] = headerRow(s, shown.map((k) => `P(${s.classes[k]})`));
  for (let i = 0; i < s.rows; i++) rows.push(shown.map((k) => s.prediction.probabilities[k][i]));
  return spill(rows);
}

/** The ODDS.CLASS adapter: predicted class per row. */
export function classCell(
  labels: CellValue[][] | null,
  predictors: CellValue[][] | null,
  newRows: CellValue[][] | null,
  options: CellValue[][] | null,
): CellValue[][] {
  const s = scored("class", labels, predictors, newRows, options);
  const header = s.classes.length === 2 ? `predicted class (threshold ${s.threshold})` : "predicted class";
  const rows: unknown[][] = headerRow(s, [header]);
  for (let i = 0; i < s.rows; i++) rows.push([s.predictedClass[i] ?? ""]);
  return spill(rows);
}

/** The ODDS.MARGIN adapter: distance to the decision boundary per row. */
export function marginCell(
  labels: CellValue[][] | null,
  predictors: CellValue[][] | null,
  newRows: CellValue[][] | null,
  options: CellValue[][] | null,
): CellValue[][] {
  const s = scored("margin", labels, predictors, newRows, options);
  const header = s.classes.length === 2 ? `margin |P(${s.positiveClass}) - ${s.threshold}|` : "margin (top two classes)";
  const rows: unknown[][] = headerRow(s, [header]);
  for (let i = 0; i < s.rows; i++) rows.push([s.prediction.margin[i]]);
  return spill(rows);
}
