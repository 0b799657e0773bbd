/**
 * Registry entry of ODDS.BASIS: the payload guard, then src/shared/basisColumns.ts (the recipe
 * handling, shared with the task pane's basis builder).
 */
import type { CellValue } from "../engine";
import { buildBasisColumns } from "../shared/basisColumns";
import { checkPayload } from "../shared/payload";
import { required } from "./required";

/** Output cells of a basis call, roughly: each data row gets a handful of new columns. */
const BASIS_COLUMNS_ESTIMATE = 8;

/** The ODDS.BASIS adapter as the registry calls it. */
export function basisCellGuarded(data: CellValue[][] | null, recipe: CellValue[][] | null, training: CellValue[][] | null): CellValue[][] {
  const d = required(data, "data");
  const r = required(recipe, "recipe");
  checkPayload(
    [
      { argument: "data", cells: d },
      { argument: "recipe", cells: r },
      ...(training ? [{ argument: "training_data", cells: training }] : []),
    ],
    d.length * BASIS_COLUMNS_ESTIMATE,
  );
  return buildBasisColumns(d, r, training);
}
