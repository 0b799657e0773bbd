/**
 * Checking that a basis recipe is the one that built a model's predictor columns: the recipe,
 * fitted on the data and applied to it, must give the predictor column of each name it makes,
 * row for row, before formulas or a description say the model is that recipe of that data.
 *
 * Policy (one line each):
 * - Values agree within BASIS_AGREEMENT relative (cells keep doubles exactly; the slack only
 *   forgives a copy through a text format, never another fit of the recipe).
 * - A blank (or unusable) predictor cell agrees with a row the recipe cannot compute, and only with it.
 * - Predictor columns the recipe does not make are not checked (they are plain data columns).
 * Reference: our own rule, stated above.
 */
import { applyRecipe, type RecipeState } from "../basis/recipe";
import type { BasisColumn } from "../basis/common";
import type { Table } from "../data/table";
import { problem } from "../messages";

/** Relative agreement required between a predictor cell and the recipe's value. */
export const BASIS_AGREEMENT = 1e-9;

function shown(v: number): string {
  return Number.isFinite(v) ? String(Number(v.toPrecision(12))) : "(blank)";
}

/**
 * Throw unless every predictor column named like an output of `state` holds the recipe's values.
 * @param data - the raw data columns the recipe reads (rows aligned with the predictors' rows)
 * @param predictors - the model's predictor range as parsed (header row of names)
 * @throws OddsmithError EXPORT_BASIS_MISMATCH naming the first disagreeing column and row;
 *   RANGE_SHAPE_MISMATCH when the data and the predictors have different row counts
 */
export function checkBasisAgreement(state: RecipeState, data: readonly BasisColumn[], predictors: Table): void {
  const rows = data.length ? data[0].values.length : 0;
  if (rows !== predictors.rows) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument: "data", got: rows, expectedArgument: "predictors", expected: predictors.rows });
  }
  const block = applyRecipe(state, data);
  block.names.forEach((name, k) => {
    const j = predictors.names.indexOf(name);
    if (j < 0) return;
    const column = predictors.columns[j];
    const made = block.columns[k];
    for (let i = 0; i < rows; i++) {
      const cell = column.missing[i] || typeof column.values[i] !== "number" ? NaN : (column.values[i] as number);
      const want = made[i];
      const same = Number.isNaN(cell) ? Number.isNaN(want) : Math.abs(cell - want) <= BASIS_AGREEMENT * Math.max(1, Math.abs(want));
      if (!same) throw problem("EXPORT_BASIS_MISMATCH", { column: name, row: i + 1, got: shown(cell), expected: shown(want) });
    }
  });
}
