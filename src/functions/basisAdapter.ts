/**
 * Temporary bridge for ODDS.BASIS until src/functions/basisCell.ts (written by the basis engineer)
 * lands; the registry then imports basisCell directly and this file is deleted.
 */
import { problem } from "../engine/messages";
import type { CellValue } from "../engine/types";

export function basisCellAdapter(_data: CellValue[][] | null, _recipe: CellValue[][] | null, _training: CellValue[][] | null): CellValue[][] {
  throw problem("INTERNAL", { doing: "building basis columns" });
}
