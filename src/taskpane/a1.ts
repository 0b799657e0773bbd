/**
 * A1-style addresses: column letters, cell and range parsing and formatting. Used by both workbook
 * ports, the pane's formula writer and the preview's formula evaluator, so an address means the same
 * thing everywhere. Rows and columns are 1-based. Column letters and sheet quoting are the engine's
 * (src/engine/export/cellReference.ts), shared with the formulas the engine writes.
 */
import { columnLetters, quoteSheet } from "../engine";

export { columnLetters, quoteSheet };

/** A rectangle of cells, 1-based and inclusive. */
export interface CellRect {
  top: number;
  left: number;
  bottom: number;
  right: number;
}

/** Largest sheet in the current spreadsheet format (1,048,576 rows by 16,384 columns, "XFD"). */
export const MAX_ROWS = 1_048_576;
export const MAX_COLUMNS = 16_384;

/** "A" -> 1, "aa" -> 27; NaN for anything that is not letters. */
export function columnNumber(letters: string): number {
  if (!/^[A-Za-z]{1,3}$/.test(letters)) return NaN;
  let n = 0;
  for (const ch of letters.toUpperCase()) n = n * 26 + (ch.charCodeAt(0) - 64);
  return n;
}

/** "B3" for row 3, column 2. */
export function cellAddress(row: number, column: number): string {
  return `${columnLetters(column)}${row}`;
}

/** "B2:D40"; a single cell is written "B2". */
export function rectAddress(rect: CellRect): string {
  const a = cellAddress(rect.top, rect.left);
  return rect.top === rect.bottom && rect.left === rect.right ? a : `${a}:${cellAddress(rect.bottom, rect.right)}`;
}

const CELL = /^\$?([A-Za-z]{1,3})\$?(\d+)$/;
const COLUMN = /^\$?([A-Za-z]{1,3})$/;
const ROW = /^\$?(\d+)$/;

/**
 * Parse "B2", "B2:D40", "$B$2:$D$40", whole columns "B:D" and whole rows "2:5" (sheet part already
 * removed). Returns null when the text is not an address. Corners are put in order.
 */
export function parseAddress(address: string): CellRect | null {
  const parts = address.trim().split(":");
  if (parts.length < 1 || parts.length > 2) return null;
  const [a, b = a] = parts;
  const ca = CELL.exec(a);
  const cb = CELL.exec(b);
  let rect: CellRect | null = null;
  if (ca && cb) {
    rect = {
      top: Number(ca[2]),
      left: columnNumber(ca[1]),
      bottom: Number(cb[2]),
      right: columnNumber(cb[1]),
    };
  } else if (parts.length === 2 && COLUMN.test(a) && COLUMN.test(b)) {
    rect = { top: 1, bottom: MAX_ROWS, left: columnNumber(COLUMN.exec(a)![1]), right: columnNumber(COLUMN.exec(b)![1]) };
  } else if (parts.length === 2 && ROW.test(a) && ROW.test(b)) {
    rect = { left: 1, right: MAX_COLUMNS, top: Number(ROW.exec(a)![1]), bottom: Number(ROW.exec(b)![1]) };
  }
  if (!rect) return null;
  const ordered: CellRect = {
    top: Math.min(rect.top, rect.bottom),
    bottom: Math.max(rect.top, rect.bottom),
    left: Math.min(rect.left, rect.right),
    right: Math.max(rect.left, rect.right),
  };
  if (ordered.top < 1 || ordered.left < 1 || ordered.bottom > MAX_ROWS || ordered.right > MAX_COLUMNS) return null;
  return ordered;
}

/** Split "Data!B2:D40" or "'Lot checks'!B2" into sheet and address; sheet is null when absent. */
export function splitSheet(reference: string): { sheet: string | null; address: string } {
  const text = reference.trim();
  const bang = text.lastIndexOf("!");
  if (bang < 0) return { sheet: null, address: text };
  let sheet = text.slice(0, bang);
  if (sheet.startsWith("'") && sheet.endsWith("'")) sheet = sheet.slice(1, -1).replace(/''/g, "'");
  return { sheet, address: text.slice(bang + 1) };
}

/** "Data!$B$2:$D$40": an absolute reference to a rectangle on a sheet, for formulas we write. */
export function absoluteReference(sheet: string, rect: CellRect): string {
  const a = `$${columnLetters(rect.left)}$${rect.top}`;
  const b = `$${columnLetters(rect.right)}$${rect.bottom}`;
  return `${quoteSheet(sheet)}!${a === b ? a : `${a}:${b}`}`;
}

/** Number of cells in a rectangle. */
export function rectCells(rect: CellRect): number {
  return (rect.bottom - rect.top + 1) * (rect.right - rect.left + 1);
}
