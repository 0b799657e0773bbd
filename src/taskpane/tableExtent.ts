/**
 * Where a table ends after rows were appended below it or deleted from its bottom. Both workbook
 * ports apply this one rule (WorkbookPort.readGrownBlock), so the pane sees the same extent in Excel
 * and in the workbench.
 *
 * Rule: a row belongs to the table while it is not blank across the table's columns. Rows of the
 * original block are kept up to its last non-blank row (a blank row inside the table stays: the
 * person chose that block); when the original last row is still filled, the table continues through
 * the non-blank rows directly below it and ends before the first blank row. The header row is always
 * kept, so an emptied table still reads as one row (and the parser then says it is empty).
 */
import type { CellValue } from "../engine";

/** True when every cell of the row is blank (null, undefined or ""). */
export function isBlankRow(row: readonly CellValue[]): boolean {
  return row.every((v) => v === null || v === undefined || v === "");
}

/**
 * Number of rows the table keeps out of `values` (the original block's rows first, then rows read
 * below it), by the rule above.
 * @param originalRows - rows of the original block at the top of `values`
 */
export function grownRowCount(values: readonly (readonly CellValue[])[], originalRows: number): number {
  let end = Math.min(originalRows, values.length) - 1;
  while (end > 0 && isBlankRow(values[end])) end--;
  if (end === originalRows - 1) {
    // The original last row is filled: the rows directly below continue the table.
    while (end + 1 < values.length && !isBlankRow(values[end + 1])) end++;
  }
  return Math.max(end + 1, Math.min(1, values.length));
}
