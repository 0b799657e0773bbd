/**
 * The input check shared by predictBinary and predictMulticlass: rows to score must have one column
 * per fitted predictor term (no intercept column), all of the same length.
 */
import { problem } from "../messages";
import type { DesignMatrix, ScoringFit } from "../types";

/**
 * Check that `X` fits the model's predictor terms and return its number of rows.
 * @throws OddsmithError COLUMN_COUNT_MISMATCH when X has a different number of columns than the
 *   model; RANGE_SHAPE_MISMATCH when a column's length differs from X.rows
 * @example
 * const n = checkScoringDesign(fit, X); // X.rows, once the shape is known to be right
 */
export function checkScoringDesign(fit: Pick<ScoringFit, "terms" | "intercept">, X: DesignMatrix): number {
  const predictors = fit.terms.slice(fit.intercept ? 1 : 0);
  if (X.columns.length !== predictors.length) {
    throw problem("COLUMN_COUNT_MISMATCH", {
      argument: "predictors",
      got: X.columns.length,
      expected: predictors.length,
      columns: predictors.join(", "),
    });
  }
  const n = X.rows;
  for (const col of X.columns) {
    if (col.length !== n) {
      throw problem("RANGE_SHAPE_MISMATCH", { argument: "predictor column", got: col.length, expectedArgument: "the rows", expected: n });
    }
  }
  return n;
}
