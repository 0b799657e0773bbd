/** Required range arguments: Excel never omits them, but the workbench and tests can. */
import { type CellValue } from "../engine";
import { problem } from "../shared/messages";

/**
 * The range, or EMPTY_RANGE naming the argument when it is missing.
 * A lone value (a 1x1 range passed as a scalar) becomes a 1x1 range.
 */
export function required(range: CellValue[][] | CellValue | null | undefined, argument: string): CellValue[][] {
  if (range === null || range === undefined) throw problem("EMPTY_RANGE", { argument });
  if (!Array.isArray(range)) return [[range]];
  return range;
}
