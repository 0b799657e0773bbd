/**
 * The predictor cells each fit of a cross-validation or held-out check sees: the user's predictor
 * cells as they are, or the basis columns of a recipe fitted on that fit's training rows only.
 *
 * Policy (one line each):
 * - Without a recipe every fit reads the same predictor cells; the fit itself learns its category
 *   levels (and pooling) from its training rows only (data/design.ts), and its standardization for
 *   the penalty from its training design (binary.ts / multiclass.ts), so nothing leaks from held-out
 *   rows.
 * - With a recipe the transforms (knots, centres, means and SDs, levels, shifts) are fitted on the
 *   training rows only (basis/recipe.ts fitRecipe) and then applied to every row, so a held-out row
 *   is transformed exactly as a new row would be. A held-out row the trained transforms cannot map
 *   (an unseen level, a value outside a log's domain) has blank basis values and gets no probability;
 *   its note says why.
 * - The basis cells carry a header row (the generated names) when the ranges have one; without one
 *   the recipe names the columns x1, x2, ... as the range parser does.
 */
import { applyRecipe, fitRecipe, type RecipePlan, type RecipeState } from "../basis/recipe";
import type { BasisColumn, RowNote } from "../basis/common";
import { rangeRow, readTable, type Table } from "../data/table";
import { formatMessage } from "../messages";
import type { CellValue } from "../types";

/** The predictors of one fit: cells with a header row, and why rows have no basis values. */
export interface FoldPredictorCells {
  cells: CellValue[][];
  /** Per data row (0-based) the first reason its basis values are blank (recipe only). */
  rowReasons: Map<number, { code: string; message: string }>;
  /** The recipe state fitted on the training rows (recipe only). */
  state: RecipeState | null;
}

/** The columns of a parsed table in the form the basis transforms read (blank = null). */
export function tableBasisColumns(table: Table): BasisColumn[] {
  return table.columns.map((c) => {
    const values: (number | string | null)[] = new Array(table.rows);
    for (let i = 0; i < table.rows; i++) values[i] = c.missing[i] ? null : c.values[i];
    return { name: c.name, values };
  });
}

/** The same columns restricted to the rows marked 1 in `keep`. */
function keepRows(columns: readonly BasisColumn[], keep: Uint8Array): BasisColumn[] {
  return columns.map((c) => ({ name: c.name, values: c.values.filter((_, i) => keep[i] === 1) }));
}

/** Basis columns as predictor cells: a header row of names (when `header`), then one row per data row (NaN = blank). */
function basisCells(names: string[], columns: Float64Array[], rows: number, header: boolean): CellValue[][] {
  const out: CellValue[][] = header ? [names.slice()] : [];
  for (let i = 0; i < rows; i++) {
    const row: CellValue[] = new Array(columns.length);
    for (let k = 0; k < columns.length; k++) {
      const v = columns[k][i];
      row[k] = Number.isFinite(v) ? v : null;
    }
    out.push(row);
  }
  return out;
}

/** The first reason per data row, with the row shown as the range row the user selected. */
function reasonsByRow(notes: readonly RowNote[], table: Table): Map<number, { code: string; message: string }> {
  const out = new Map<number, { code: string; message: string }>();
  for (const note of notes) {
    if (out.has(note.row)) continue;
    out.set(note.row, { code: note.code, message: formatMessage(note.code, { ...note.params, row: rangeRow(table, note.row) }) });
  }
  return out;
}

/**
 * Where each fit's predictor cells come from (see the policy above).
 *
 * Method: transforms learned inside each training split, as required for an honest cross-validation
 * estimate (Hastie, Tibshirani & Friedman, The Elements of Statistical Learning, 2nd ed., 2009,
 * section 7.10.2, "The wrong and right way to do cross-validation").
 */
export class FoldPredictors {
  private readonly table: Table | null;
  private readonly columns: BasisColumn[] | null;

  /**
   * @param cells the predictor cells as given
   * @param plan a parsed recipe, or null to use the cells as they are
   * @param header the header decision of the ranges (data/alignRanges.ts agreeHeaders)
   */
  constructor(
    private readonly cells: CellValue[][],
    private readonly plan: RecipePlan | null,
    private readonly header: boolean,
  ) {
    this.table = plan ? readTable(cells, { argument: "predictors", headers: header ? "yes" : "no" }) : null;
    this.columns = this.table ? tableBasisColumns(this.table) : null;
  }

  /** True when a recipe builds the predictors. */
  get usesRecipe(): boolean {
    return this.plan !== null;
  }

  /**
   * The predictor cells of a fit on the rows marked 1 in `training` (null: all rows).
   * @throws OddsmithError from the recipe's transforms (fitted on the training rows)
   */
  forTraining(training: Uint8Array | null): FoldPredictorCells {
    if (!this.plan || !this.table || !this.columns) return { cells: this.cells, rowReasons: new Map(), state: null };
    const fitOn = training ? keepRows(this.columns, training) : this.columns;
    const state = fitRecipe(this.plan, fitOn, "predictors");
    const block = applyRecipe(state, this.columns, "predictors");
    return { cells: basisCells(block.names, block.columns, this.table.rows, this.header), rowReasons: reasonsByRow(block.notes, this.table), state };
  }
}
