/**
 * The sheet's limits on what one cell function may return, checked BEFORE the work that would
 * produce the output (so a call that cannot fit is refused at once, not after minutes of work).
 *
 * Policy (one line each):
 * - A spilled result has at most SHEET_ROWS rows and SHEET_COLUMNS columns (Excel's grid: Microsoft,
 *   "Excel specifications and limits"), and its estimated size (cells x OUTPUT_BYTES_PER_CELL) stays
 *   within the call's payload (about 5 MB, Office custom-functions documentation).
 * - Each function estimates its output from cheap facts known before computing (rows of the scored
 *   range, classes of the labels or of the coefficient table, basis columns of the recipe) and calls
 *   checkOutputSize; spill() (cellOutput.ts) checks the finished array once more as a last guard.
 * - A refusal is OUTPUT_TOO_LARGE: it names the function, the output's size and what it holds, and
 *   says what to do, never blaming an input that is within its own limits.
 */
import { problem } from "./messages";
import { OUTPUT_BYTES_PER_CELL, PAYLOAD_LIMIT_BYTES } from "./payload";

/** Rows of a worksheet (Excel specifications and limits). */
export const SHEET_ROWS = 1_048_576;
/** Columns of a worksheet (Excel specifications and limits). */
export const SHEET_COLUMNS = 16_384;
/** Characters one cell can hold (Excel specifications and limits: "Total number of characters that a cell can contain"). */
export const MAX_CELL_TEXT = 32_767;
/** Cells of numbers one call can return within the payload limit. */
export const MAX_OUTPUT_CELLS = Math.floor(PAYLOAD_LIMIT_BYTES / OUTPUT_BYTES_PER_CELL);

/** What a refused output holds and what to do instead, for the message. */
export interface OutputDescription {
  /** Function as the user writes it ("ODDS.BASIS"). */
  fn: string;
  /** What the rows and columns are ("one column per class for each of 10,000 rows"). */
  what: string;
  /** What to do instead (one sentence). */
  hint: string;
}

/** True when `rows` x `columns` fits the sheet and the payload. */
export function outputFits(rows: number, columns: number): boolean {
  return rows <= SHEET_ROWS && columns <= SHEET_COLUMNS && rows * columns <= MAX_OUTPUT_CELLS;
}

/**
 * Refuse an output of `rows` x `columns` cells that the sheet or the payload cannot hold.
 * @throws OddsmithError OUTPUT_TOO_LARGE naming the function, the size and what it holds
 * @example checkOutputSize(10, 3, { fn: "ODDS.PROB", what: "...", hint: "..." }) // passes
 */
export function checkOutputSize(rows: number, columns: number, d: OutputDescription): void {
  if (outputFits(rows, columns)) return;
  throw problem("OUTPUT_TOO_LARGE", {
    fn: d.fn,
    rows: rows.toLocaleString("en-US"),
    columns: columns.toLocaleString("en-US"),
    what: d.what,
    cells: MAX_OUTPUT_CELLS.toLocaleString("en-US"),
    hint: d.hint,
  });
}
