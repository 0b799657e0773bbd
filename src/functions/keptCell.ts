/**
 * ODDS.KEPT(model_cells, rows, [options]): probabilities (or classes) of new rows from a model kept
 * in the workbook (src/shared/keptModel.ts), read from its description without refitting.
 *
 * Policy (one line each):
 * - model_cells is the kept model's row (or any range starting at its header cell); its parts are
 *   checked and its description read with the version rule (a newer major is refused).
 * - rows are scored like ODDS.PROB's new_rows: with a basis recipe in the description they are the
 *   raw data columns under a header row (the recipe makes its columns from them); a model fitted
 *   with an offset takes it from the rows' column of the offset's name.
 * - Output lines up with rows: a header row when rows have one, then one row per data row; a row
 *   that cannot be scored (blank, unseen level) is "" (as ODDS.PROB). show=class gives the class.
 * - The output's size is checked before scoring; the last description read is remembered, so a
 *   change of the rows rescored without parsing the description again.
 */
import { readDescription, restoreModel, scoreRestored, type CellValue, type RestoredModel } from "../engine";
import { spill } from "../shared/cellOutput";
import { readKeptText } from "../shared/keptModel";
import { listNames, problem } from "../shared/messages";
import { OPT_THRESHOLD, parseOptions, type ChoiceSpec } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { checkOutputSize } from "../shared/sheetLimits";
import { required } from "./required";

const OPT_SHOW = {
  name: "show",
  type: "choice",
  choices: ["probabilities", "class"],
  default: "probabilities",
  help: "What to spill: class probabilities (as ODDS.PROB) or the predicted class (as ODDS.CLASS).",
} as const satisfies ChoiceSpec;

/** ODDS.KEPT's options. */
export const KEPT_OPTIONS = [OPT_SHOW, OPT_THRESHOLD] as const;

/** The last description read, by its text (rows change far more often than the kept model). */
let lastRead: { text: string; model: RestoredModel } | null = null;

/** The restored model of a kept model's cells (parts checked, description read). */
export function keptModel(cells: CellValue[][], argument = "model_cells"): RestoredModel {
  const { text } = readKeptText(cells, argument);
  if (lastRead && lastRead.text === text) return lastRead.model;
  const model = restoreModel(readDescription(text, "kept model"));
  lastRead = { text, model };
  return model;
}

/** The offset range for a model fitted with one: the rows' column of that name, header included. */
function offsetOf(model: RestoredModel, rows: CellValue[][]): CellValue[][] | null {
  if (!model.usesOffset) return null;
  const name = model.offsetColumn ?? "offset";
  const header = (rows[0] ?? []).map((v) => (typeof v === "string" ? v.trim() : String(v ?? "")));
  const at = header.indexOf(name);
  if (at < 0) throw problem("DESCRIPTION_COLUMN_MISSING", { column: name, argument: "rows", columns: listNames(header, 12) });
  return rows.map((r) => [r[at]]);
}

/**
 * The ODDS.KEPT adapter.
 * @returns a header row (when rows have one) naming the output, then one row per data row
 */
export function keptCell(modelCells: CellValue[][] | null, rows: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const cells = required(modelCells, "model_cells");
  const data = required(rows, "rows");
  const o = parseOptions("ODDS.KEPT", KEPT_OPTIONS, options);
  const inputs = [
    { argument: "model_cells", cells },
    { argument: "rows", cells: data },
  ];
  // Inputs first (with one output column), then the output's real width once the classes are known.
  checkPayload(inputs, data.length);
  const model = keptModel(cells);
  const classes = model.fit.classes;
  const width = o.show === "class" || classes.length === 2 ? 1 : classes.length;
  checkOutputSize(data.length, width, {
    fn: "ODDS.KEPT",
    what: width > 1 ? `one probability column per class (${classes.length} classes) for each row` : "one value for each row",
    hint: "Score fewer rows per formula (split the rows over several formulas).",
  });
  checkPayload(inputs, data.length * width);
  if (classes.length > 2 && o.threshold !== OPT_THRESHOLD.default) {
    throw problem("BAD_OPTION_VALUE", {
      name: "threshold",
      value: o.threshold,
      expected: "A threshold applies to two classes only; with several classes each row gets its most probable class. Remove the threshold option.",
    });
  }
  const s = scoreRestored(model, data, { threshold: o.threshold, offset: offsetOf(model, data) });
  const out: unknown[][] = [];
  if (o.show === "class") {
    if (s.header) out.push([classes.length === 2 ? `predicted class (threshold ${s.threshold})` : "predicted class"]);
    for (let i = 0; i < s.rows; i++) out.push([s.predictedClass[i] ?? ""]);
    return spill(out);
  }
  const shown = classes.length === 2 ? [s.classes.indexOf(s.positiveClass as string)] : s.classes.map((_, k) => k);
  if (s.header) out.push(shown.map((k) => `P(${s.classes[k]})`));
  for (let i = 0; i < s.rows; i++) out.push(shown.map((k) => s.prediction.probabilities[k][i]));
  return spill(out);
}
