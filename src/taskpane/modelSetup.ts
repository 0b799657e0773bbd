/**
 * Model set-up: what the person chose in the pane (label column, predictor columns, classes,
 * options) turned into (1) the cells and options the pane fits with and (2) the ODDS formulas the
 * pane writes onto a results sheet, so the results in the workbook stay live.
 *
 * One options text serves both: the pane parses it with the fit service's reader, as the cell
 * functions do (readModelOptions, src/shared/fitService.ts), so the pane's fit and the formulas' fit
 * are the same fit.
 */
import { type CellValue } from "../engine";
import { problem } from "../shared/messages";
import { readModelOptions, type ModelCallOptions } from "../shared/fitService";
import { type CellRect, absoluteReference, cellAddress, quoteSheet } from "./a1";
import { type DataTable, columnRect, pickColumns, tableReference } from "./dataTable";
import type { WriteRequest } from "./port";

/** What the person chose. Column numbers are 0-based indices into the data table. */
export interface SetupChoice {
  label: number;
  predictors: number[];
  /** Positive class (two classes) or reference class (several); null = the default rule. */
  focusClass: string | null;
  penalty: number;
  level: number;
  threshold: number;
  firth: boolean;
}

/** Defaults shown in a fresh pane. */
export const DEFAULT_CHOICE: Omit<SetupChoice, "label" | "predictors"> = {
  focusClass: null,
  penalty: 0,
  level: 0.95,
  threshold: 0.5,
  firth: false,
};

/** Name of the results sheet the pane creates (a number is added when taken). */
export const RESULTS_SHEET = "Oddsmith results";

/** Number formatting for the options text: plain decimals, no exponent for ordinary values. */
function num(x: number): string {
  return String(Number(x.toPrecision(12)));
}

/**
 * Check the choice against the table; throws a catalogue message naming what to fix.
 * @throws OddsmithError BAD_OPTION_VALUE
 */
export function checkChoice(data: DataTable, choice: SetupChoice): void {
  const n = data.columns.length;
  if (!(choice.label >= 0 && choice.label < n)) {
    throw problem("BAD_OPTION_VALUE", { name: "label column", value: choice.label + 1, expected: "Choose the column that holds the classes." });
  }
  if (choice.predictors.length === 0) {
    throw problem("BAD_OPTION_VALUE", { name: "predictors", value: "none", expected: "Tick at least one predictor column." });
  }
  if (choice.predictors.includes(choice.label)) {
    throw problem("BAD_OPTION_VALUE", {
      name: "predictors",
      value: data.columns[choice.label].name,
      expected: "The label column cannot also be a predictor: untick it.",
    });
  }
  if (!(choice.penalty >= 0 && Number.isFinite(choice.penalty))) {
    throw problem("BAD_OPTION_VALUE", { name: "penalty", value: choice.penalty, expected: "Use 0 (no penalty) or a positive number." });
  }
  if (!(choice.level > 0 && choice.level < 1)) {
    throw problem("BAD_OPTION_VALUE", { name: "level", value: choice.level, expected: "Use a confidence level between 0 and 1, such as 0.95." });
  }
  if (!(choice.threshold > 0 && choice.threshold < 1)) {
    throw problem("BAD_OPTION_VALUE", { name: "threshold", value: choice.threshold, expected: "Use a probability strictly between 0 and 1, such as 0.5." });
  }
}

/**
 * The options text written into the formulas, e.g. "positive=held; penalty=0; level=0.95;
 * threshold=0.5". `classCount` decides whether the focus class is the positive or the reference one.
 * Quotes inside class names are doubled for the formula by `formulaText`, not here.
 */
export function optionsText(choice: SetupChoice, classCount: number): string {
  const parts: string[] = [];
  if (choice.focusClass !== null && choice.focusClass !== "") {
    parts.push(`${classCount > 2 ? "reference" : "positive"}=${choice.focusClass}`);
  }
  parts.push(`penalty=${num(choice.penalty)}`, `level=${num(choice.level)}`);
  if (classCount <= 2) parts.push(`threshold=${num(choice.threshold)}`);
  if (choice.firth) parts.push("firth=true");
  return parts.join("; ");
}

/** The inputs of the pane's own fit: the same cells and options the formulas will see. */
export interface ModelInputs {
  labels: CellValue[][];
  predictors: CellValue[][];
  options: ModelCallOptions;
  optionsText: string;
}

/** Build the fit inputs for a choice. */
export function modelInputs(data: DataTable, choice: SetupChoice, classCount: number): ModelInputs {
  checkChoice(data, choice);
  const text = optionsText(choice, classCount);
  return {
    labels: pickColumns(data, [choice.label]),
    predictors: pickColumns(data, choice.predictors),
    options: readModelOptions("the Oddsmith pane", [[text]]),
    optionsText: text,
  };
}

/** True when the sorted column indices are consecutive (one plain range will do). */
function consecutive(indices: number[]): boolean {
  return indices.every((v, i) => i === 0 || v === indices[i - 1] + 1);
}

/**
 * The predictors argument of the formulas: a plain range when the chosen columns sit side by side
 * in table order, otherwise CHOOSECOLS over the table (Excel 365 / 2024; older versions need the
 * predictor columns next to each other).
 */
export function predictorsArgument(data: DataTable, predictors: number[]): string {
  if (consecutive(predictors)) {
    const first = columnRect(data, predictors[0]);
    const last = columnRect(data, predictors[predictors.length - 1]);
    return absoluteReference(data.sheet, { ...first, right: last.right });
  }
  return `CHOOSECOLS(${tableReference(data)}, ${predictors.map((p) => p + 1).join(", ")})`;
}

/** A text literal for a formula: quotes doubled. */
export function formulaText(s: string): string {
  return `"${s.replace(/"/g, '""')}"`;
}

/** Where the pane puts each formula on the results sheet, and the cells it occupies at the anchors. */
export interface ResultsLayout {
  sheet: string;
  /** Anchors, in writing order. */
  anchors: { what: "probabilities" | "classes" | "margins" | "coefficients" | "report"; at: string; formula: string }[];
  /** Rows of the per-row outputs line up with the data rows from this sheet row on. */
  firstRow: number;
  /** Rectangle spanning the anchors (cleared before a new set-up is written). */
  anchorRect: CellRect;
}

/**
 * The formulas of a set-up and where they go. Per-row outputs (PROB, CLASS, MARGIN) start on the
 * same row as the data table's header so every output row sits beside its data row's number; the
 * coefficient table (FIT) and the report (REPORT) follow to the right with one blank column between.
 * @param classCount - classes of the pane's own fit (the width of PROB)
 */
export function resultsLayout(data: DataTable, choice: SetupChoice, classCount: number, sheet: string): ResultsLayout {
  const labels = absoluteReference(data.sheet, columnRect(data, choice.label));
  const predictors = predictorsArgument(data, choice.predictors);
  const opts = formulaText(optionsText(choice, classCount));
  const row = data.rect.top;
  const probWidth = classCount > 2 ? classCount : 1;
  let col = 1;
  const anchors: ResultsLayout["anchors"] = [];
  const put = (what: ResultsLayout["anchors"][number]["what"], fn: string, width: number, args: string) => {
    anchors.push({ what, at: cellAddress(row, col), formula: `=ODDS.${fn}(${args})` });
    col += width;
  };
  put("probabilities", "PROB", probWidth, `${labels}, ${predictors}, , ${opts}`);
  put("classes", "CLASS", 1, `${labels}, ${predictors}, , ${opts}`);
  if (classCount <= 2) put("margins", "MARGIN", 1, `${labels}, ${predictors}, , ${opts}`);
  col += 1;
  put("coefficients", "FIT", 11, `${labels}, ${predictors}, ${opts}`);
  col += 1;
  put("report", "REPORT", 2, `${labels}, ${predictors}, ${opts}`);
  const lastCol = col - 1;
  return { sheet, anchors, firstRow: row, anchorRect: { top: row, bottom: row, left: 1, right: lastCol } };
}

/** Write requests for a layout (one per anchor, as formulas). */
export function layoutWrites(layout: ResultsLayout): WriteRequest[] {
  return layout.anchors.map((a) => ({ sheet: layout.sheet, at: a.at, values: [[a.formula]], formulas: true }));
}

/** "=ODDS.FIT(...)" anchors on `sheet` as "Sheet!A1" references, for the pane's summary line. */
export function anchorReference(layout: ResultsLayout, what: ResultsLayout["anchors"][number]["what"]): string | null {
  const a = layout.anchors.find((x) => x.what === what);
  return a ? `${quoteSheet(layout.sheet)}!${a.at}` : null;
}
