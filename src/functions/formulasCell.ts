/**
 * ODDS.FORMULAS(labels, predictors, [options], [recipe], [data]): the fitted model written as plain
 * formulas that need no add-in, as a listing of what to enter in which cell.
 *
 * Policy (one line each):
 * - The model is the same (cached) fit as ODDS.FIT over the same ranges and fit options.
 * - A cell function cannot see where its ranges are, so the listing places them as the options
 *   say: predictors_at (top-left cell of the predictors range, default A1), data_at (of the data
 *   range, default A1 on the predictors' sheet), at (the block's header cell, default two columns right of the
 *   predictors and data) and coefficients_at (the coefficient table, default one column right of
 *   the block). The first rows of the listing repeat these places, so nothing is assumed silently.
 * - With a recipe, predictor columns that the recipe makes from `data` (ODDS.BASIS output) are
 *   written from the raw data columns, after checking that the recipe of the data gives exactly
 *   those columns; a transform that cannot be written is read from its predictor column (noted).
 * - Output: "cell | content | note" rows: each block column's header and first-row formula (with
 *   the range to fill it down), then the coefficient table cell by cell, then the notes.
 */
import {
  checkBasisAgreement,
  columnLetters,
  describeModel,
  fitRecipe,
  parseCellReference,
  parseRecipe,
  planScoring,
  quoteSheet,
  readTable,
  renderScoringRow,
  type BlockPlacement,
  type CellPosition,
  type CellValue,
  type RecipeState,
  type ScoringPlan,
  type SheetColumn,
  type TrainedModel,
} from "../engine";
import { problem } from "../shared/messages";
import { ADDIN_VERSION } from "../shared/addinVersion";
import { recipeText, tableToBasisColumns } from "../shared/basisColumns";
import { spill } from "../shared/cellOutput";
import { modelCallOptions } from "../shared/fitService";
import { fittedModel, requireUsableFit } from "./modelCell";
import { FIT_OPTIONS, parseOptions, type TextSpec } from "../shared/options";
import { checkOutputSize } from "../shared/sheetLimits";

function placeOption<const N extends string>(name: N, help: string): { name: N; type: "text"; default: null; help: string } {
  return { name, type: "text", default: null, help } satisfies TextSpec;
}

/** ODDS.FORMULAS's options: the fit options and where things go. */
export const FORMULAS_OPTIONS = [
  ...FIT_OPTIONS,
  placeOption("predictors_at", "Top-left cell of the predictors range as it sits on the sheet, e.g. Data!A1 (default A1)."),
  placeOption("data_at", "Top-left cell of the data range the recipe reads, e.g. Data!A1 (default A1)."),
  placeOption("at", "Header cell of the scoring block (default: two columns right of the predictors and the data)."),
  placeOption("coefficients_at", "Top-left cell of the coefficient table (default: two columns right of the block)."),
] as const;

/** Rows the listing holds at most, for the payload estimate before the fit. */
const LISTING_ESTIMATE = 4000;

/** A placement option as a cell position (sheet resolved to `home` when none is named). */
function cellOption(name: string, value: string | null, fallback: CellPosition): CellPosition {
  if (value === null) return fallback;
  const at = parseCellReference(value);
  if (!at) throw problem("BAD_OPTION_VALUE", { name, value, expected: "Give one cell, such as B2 or Data!B2." });
  return at;
}

/** The sheet label of a position: the named sheet, or "" for the sheet the formulas go on. */
function sheetOf(p: CellPosition, home: string): string {
  return p.sheet ?? home;
}

/** A column map over a range whose top-left cell is `at`: column j of the range holds `names[j]`. */
function columnMap(names: readonly string[], at: CellPosition, header: boolean, home: string): Map<string, SheetColumn> {
  const map = new Map<string, SheetColumn>();
  names.forEach((name, j) => {
    if (!map.has(name)) map.set(name, { sheet: sheetOf(at, home), column: at.column + j, firstRow: at.row + (header ? 1 : 0) });
  });
  return map;
}

/** Cell text for the listing: "F2", or "Scoring!F2" when the block's sheet is named. */
function listedCell(sheet: string, row: number, column: number): string {
  return `${sheet === "" ? "" : `${quoteSheet(sheet)}!`}${columnLetters(column)}${row}`;
}

interface Ranges {
  model: TrainedModel;
  /** The recipe state and the data range's header names, when a recipe was given. */
  basis: { state: RecipeState; names: string[] } | null;
}

/** The recipe fitted on `data`, checked against the model's predictor columns. */
function readBasis(recipe: CellValue[][], data: CellValue[][] | null, predictors: CellValue[][], model: TrainedModel): RecipeState {
  const plan = parseRecipe(recipeText(recipe));
  if (data === null || data === undefined) throw problem("EMPTY_RANGE", { argument: "data" });
  const columns = tableToBasisColumns(readTable(data, { argument: "data", headers: "yes" }));
  const state = fitRecipe(plan, columns, "data");
  checkBasisAgreement(state, columns, readTable(predictors, { argument: "predictors", headers: model.header ? "yes" : "no" }));
  return state;
}

/** Where everything goes, from the options and the ranges' shapes. */
function placement(r: Ranges, o: { predictors_at: string | null; data_at: string | null; at: string | null }): BlockPlacement {
  const predictorsAt = cellOption("predictors_at", o.predictors_at, { sheet: null, row: 1, column: 1 });
  const dataAt = r.basis ? cellOption("data_at", o.data_at, { sheet: predictorsAt.sheet, row: 1, column: 1 }) : predictorsAt;
  const width = r.model.encoding.columns.length;
  const right = Math.max(predictorsAt.column + width - 1, r.basis ? dataAt.column + r.basis.names.length - 1 : 0);
  const header = r.model.header;
  const firstRow = predictorsAt.row + (header ? 1 : 0);
  const blockAt = cellOption("at", o.at, { sheet: predictorsAt.sheet, row: firstRow - 1, column: right + 2 });
  if (blockAt.row + 1 + r.model.rows - 1 > 1_048_576 || blockAt.row < 1) {
    throw problem("EXPORT_NO_ROOM", {
      at: o.at ?? "the default place",
      reason: blockAt.row < 1 ? "the block's header row would lie above row 1" : "the rows would run past the sheet's last row",
      hint: "Set at=... to a cell with room for a header and one row per data row below it.",
    });
  }
  const home = blockAt.sheet ?? "";
  const names = r.model.encoding.columns.map((c) => c.name);
  return {
    sheet: home,
    left: blockAt.column,
    headerRow: blockAt.row,
    predictors: columnMap(names, predictorsAt, header, home),
    data: r.basis ? columnMap(r.basis.names, dataAt, true, home) : new Map(),
    // Provisional (far right): the real place is set once the block's width is known.
    coefficients: { sheet: home, top: blockAt.row, left: 16_000 },
  };
}

/**
 * The ODDS.FORMULAS adapter.
 * @returns "cell | content | note" rows: block headers and first-row formulas, the coefficient table, notes
 * @example formulasCell(labels, predictors, [["predictors_at=A1"]], null, null)[1] // ["F1", "input: size", "header"]
 */
export function formulasCell(
  labels: CellValue[][] | null,
  predictors: CellValue[][] | null,
  options: CellValue[][] | null,
  recipe: CellValue[][] | null,
  data: CellValue[][] | null,
): CellValue[][] {
  const o = parseOptions("ODDS.FORMULAS", FORMULAS_OPTIONS, options);
  const extra = data ? [{ argument: "data", cells: data }] : [];
  const model = fittedModel(labels, predictors, modelCallOptions(o), LISTING_ESTIMATE, extra);
  requireUsableFit(model);
  const p = predictors as CellValue[][];
  let basis: Ranges["basis"] = null;
  if (recipe !== null && recipe !== undefined && recipeText(recipe).trim() !== "") {
    const state = readBasis(recipe, data, p, model);
    const names = readTable(data as CellValue[][], { argument: "data", headers: "yes" }).names;
    basis = { state, names };
  }
  const place = placement({ model, basis }, o);
  const desc = describeModel(model, { name: "model", producerVersion: ADDIN_VERSION, basis: basis?.state ?? null });
  const plan = planScoring(desc, place);
  const coefAt = cellOption("coefficients_at", o.coefficients_at, { sheet: place.sheet || null, row: place.headerRow, column: place.left + plan.columns.length + 1 });
  place.coefficients = { sheet: sheetOf(coefAt, place.sheet), top: coefAt.row, left: coefAt.column };
  return listing(plan, place, model.rows);
}

/** The listing rows of a plan at its placement. */
function listing(plan: ScoringPlan, place: BlockPlacement, rows: number): CellValue[][] {
  const cellCount = plan.coefficientTable.reduce((s, r) => s + r.filter((v) => v !== "").length, 0);
  checkOutputSize(2 * plan.columns.length + cellCount + plan.notes.length + 8, 3, {
    fn: "ODDS.FORMULAS",
    what: "two rows per block column and one per coefficient cell",
    hint: "Use fewer terms.",
  });
  const first = renderScoringRow(plan, place, 0);
  const sheetName = place.sheet;
  const coef = place.coefficients;
  const where = (m: ReadonlyMap<string, SheetColumn>) => {
    const first = [...m.values()][0];
    return first ? listedCell(first.sheet === sheetName ? "" : first.sheet, first.firstRow, first.column) : "(none)";
  };
  const places = [
    `predictors from ${where(place.predictors)}`,
    ...(place.data.size ? [`data from ${where(place.data)}`] : []),
    `block at ${listedCell(sheetName, place.headerRow, place.left)}`,
    `coefficients at ${listedCell(coef.sheet, coef.top, coef.left)}`,
  ];
  const out: unknown[][] = [
    ["cell", "content", "note"],
    ["", `Placed for ${places.join(", ")} (first data rows).`, "places: set predictors_at, data_at, at or coefficients_at to move them"],
  ];
  plan.columns.forEach((c, j) => {
    const col = place.left + j;
    out.push([listedCell(sheetName, place.headerRow, col), c.header, "header"]);
    out.push([listedCell(sheetName, place.headerRow + 1, col), first[j], `fill down to ${listedCell(sheetName, place.headerRow + rows, col)}`]);
  });
  plan.coefficientTable.forEach((row, i) =>
    row.forEach((v, j) => {
      if (v === "") return;
      out.push([listedCell(coef.sheet, coef.top + i, coef.left + j), v, i === 0 && j === 0 ? "coefficient table (the formulas read its numbers)" : ""]);
    }),
  );
  if (plan.notes.length) out.push([], ...plan.notes.map((n) => ["", n.message, "note"]));
  return spill(out);
}
