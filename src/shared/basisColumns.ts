/**
 * Basis columns from a range with a header row, following a recipe (src/engine/basis/recipe.ts,
 * docs/basis-recipes.md): what ODDS.BASIS(data, recipe, [training_data]) returns, and what the task
 * pane's basis builder writes as values, follows the table with and draws in its plot, so both give
 * the same columns.
 *
 * Policy (one line each):
 * - `data` must start with a header row: the recipe names columns by their headers (headers="yes").
 * - `recipe` is text; a range of several cells is read as one recipe, item per non-blank cell,
 *   joined with ";" (row by row), so long recipes can be laid out one item per cell.
 * - Without `training_data` the transforms are fitted on `data` itself; with it they are fitted on
 *   `training_data` (same headers) and applied to `data`, so new rows get the training knots, means,
 *   levels and centres.
 * - Output: a header row of generated column names, then one row per data row, aligned with the
 *   input (trailing blank rows of the range are not echoed, as the shared range parser drops them).
 * - A row with a problem (blank, value outside a transform's domain, unseen category) shows "" in
 *   the columns it affects; the other cells of the row and the other rows are computed.
 * - Only when no data row yields any value is an error thrown: the first row's reason (its catalogue
 *   code and cell error), with the row counted as in the range (header = row 1).
 */
import { checkOutputSize, SHEET_COLUMNS } from "./sheetLimits";
import { errorLiteral, estimateRecipeColumns, tableBasisColumns, applyRecipe, fitRecipe, parseRecipe, rangeRow, readTable, type BasisColumn, type RowNote, type Table, type CellValue } from "../engine";
import { problem } from "./messages";
import { spill } from "./cellOutput";

/** The columns of a parsed table in the form the basis transforms read (blank = null): the engine's. */
export const tableToBasisColumns = tableBasisColumns;

/** The recipe text from a cell value or a range of cells (non-blank cells joined with "; "). */
export function recipeText(recipe: string | CellValue | CellValue[][]): string {
  if (Array.isArray(recipe)) {
    recipe.forEach((row, i) =>
      (Array.isArray(row) ? row : [row]).forEach((v, j) => {
        const literal = errorLiteral(v);
        if (literal !== null) throw problem("ERROR_VALUE_CELL", { argument: "recipe", value: literal, row: i + 1, column: j + 1, what: "a recipe is text" });
      }),
    );
    return recipe
      .flat()
      .map((v) => (v === null || v === undefined ? "" : String(v).trim()))
      .filter((s) => s !== "")
      .join("; ");
  }
  return recipe === null || recipe === undefined ? "" : String(recipe);
}

/**
 * Build basis columns as ODDS.BASIS returns them.
 * @param data - range with a header row; the rows to transform
 * @param recipe - recipe text (or a range holding it)
 * @param training - optional range with the same headers to fit the transforms on (null: fit on data)
 * @returns header row of generated names, then one row per data row ("" where a row had a problem)
 * @throws OddsmithError for a bad recipe, a missing column, or when no row can be computed
 * @example buildBasisColumns([["age"], [30], [40], [50]], "age: z", null) // [["z(age)"], [-1], [0], [1]]
 */
export function buildBasisColumns(
  data: CellValue[][],
  recipe: string | CellValue | CellValue[][],
  training: CellValue[][] | null,
): (number | string)[][] {
  const plan = parseRecipe(recipeText(recipe));
  if (data === null || data === undefined) throw problem("EMPTY_RANGE", { argument: "data" });
  const table = readTable(data, { argument: "data", headers: "yes" });
  const rows = tableToBasisColumns(table);
  let fitColumns = rows;
  let fitArgument = "data";
  if (training !== null && training !== undefined) {
    fitColumns = tableToBasisColumns(readTable(training, { argument: "training_data", headers: "yes" }));
    fitArgument = "training_data";
  }
  // The output (a header and one row per data row, one column per basis column) is sized from the
  // plan before any transform is fitted: a recipe that cannot fit the sheet does no work.
  const columns = estimateRecipeColumns(plan, fitColumns, fitArgument, SHEET_COLUMNS);
  checkOutputSize(table.rows + 1, columns, {
    fn: "ODDS.BASIS",
    what: `about ${columns.toLocaleString("en-US")} basis columns for each of ${table.rows.toLocaleString("en-US")} rows`,
    hint: "Use fewer or smaller transforms (levels on a column of many different texts, pairs on many columns and high-degree poly on several columns make the most), or build the basis for fewer rows at a time.",
  });
  const state = fitRecipe(plan, fitColumns, fitArgument);
  const block = applyRecipe(state, rows, "data");

  const n = table.rows;
  const out: unknown[][] = [block.names];
  let anyValue = false;
  for (let i = 0; i < n; i++) {
    const row = block.columns.map((c) => c[i]);
    if (row.some((v) => Number.isFinite(v))) anyValue = true;
    out.push(row);
  }
  if (!anyValue && block.columns.length > 0) throw firstRowProblem(block.notes, table);
  return spill(out) as (number | string)[][];
}

/** The first row note as a thrown catalogue error, with the row counted as in the range. */
function firstRowProblem(notes: readonly RowNote[], table: Table) {
  const note = notes[0];
  if (!note) return problem("INTERNAL", { doing: "building basis columns (every value was out of range)" });
  return problem(note.code, { ...note.params, row: rangeRow(table, note.row) });
}
