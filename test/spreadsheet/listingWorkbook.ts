/**
 * An .xlsx workbook (exceljs) holding data ranges and what an ODDS.FORMULAS listing says to enter:
 * each block column's header, its first formula filled down over the stated range (written as one
 * shared formula, which is what a spreadsheet's fill-down is, so relative references move row by row
 * in LibreOffice, not in our code), and the coefficient table's cells.
 *
 * Every formula cell is written with a stale cached value (STALE_VALUE): after LibreOffice has
 * recalculated the file none may remain, which proves that the values read back were computed by
 * LibreOffice from the formulas.
 */
import ExcelJS from "exceljs";
import { columnLetters, parseCellReference, type CellValue } from "../../src/engine";

/** Cached value written into every formula cell; a recalculated file holds none of them. */
export const STALE_VALUE = -12345.678;

/** Data written on a sheet: a table (header row first) whose top-left cell is (row, column). */
export interface PlacedTable {
  sheet: string;
  row: number;
  column: number;
  cells: readonly (readonly CellValue[])[];
}

/** A cell address in A1 form. */
export function address(row: number, column: number): string {
  return `${columnLetters(column)}${row}`;
}

function sheetOf(wb: ExcelJS.Workbook, name: string): ExcelJS.Worksheet {
  return wb.getWorksheet(name) ?? wb.addWorksheet(name);
}

/** Write a table of values (blanks stay empty cells). */
export function writeTable(wb: ExcelJS.Workbook, t: PlacedTable): void {
  const ws = sheetOf(wb, t.sheet);
  t.cells.forEach((row, i) =>
    row.forEach((v, j) => {
      if (v === null || v === undefined || v === "") return;
      ws.getCell(t.row + i, t.column + j).value = v as ExcelJS.CellValue;
    }),
  );
}

/** A listed cell ("Sheet!E2", "E2") as sheet, row, column; an unnamed sheet is `home`. */
function listedCell(text: string, home: string): { sheet: string; row: number; column: number } {
  const at = parseCellReference(text);
  if (!at) throw new Error(`the listing names a cell that is not one: ${text}`);
  return { sheet: at.sheet ?? home, row: at.row, column: at.column };
}

/** Formula cells written from one listing: each filled range by its first cell. */
export interface WrittenListing {
  /** Header text of each block column -> its sheet, column and first and last data row. */
  columns: Map<string, { sheet: string; column: number; firstRow: number; lastRow: number }>;
  formulaCells: number;
}

/**
 * Enter an ODDS.FORMULAS listing (rows "cell | content | note") into the workbook: headers and
 * numbers as values, each "=..." formula filled down to the cell its note names.
 * @param home - the sheet of cells listed without a sheet name
 */
export function enterListing(wb: ExcelJS.Workbook, listing: readonly (readonly CellValue[])[], home: string): WrittenListing {
  const columns: WrittenListing["columns"] = new Map();
  const headerAt = new Map<string, string>();
  let formulaCells = 0;
  for (const [cellText, content, note] of listing.slice(1)) {
    if (typeof cellText !== "string" || cellText === "") continue;
    const at = listedCell(cellText, home);
    const ws = sheetOf(wb, at.sheet);
    if (typeof content === "string" && content.startsWith("=")) {
      const fill = /^fill down to (.+)$/.exec(String(note ?? ""));
      if (!fill) throw new Error(`formula at ${cellText} without a fill-down range: ${String(note)}`);
      const last = listedCell(fill[1], home);
      if (last.sheet !== at.sheet || last.column !== at.column || last.row < at.row) throw new Error(`odd fill range ${cellText} .. ${fill[1]}`);
      const range = `${address(at.row, at.column)}:${address(last.row, at.column)}`;
      ws.fillFormula(range, content.slice(1), () => STALE_VALUE);
      formulaCells += last.row - at.row + 1;
      const header = headerAt.get(`${at.sheet}\u0000${at.column}`);
      if (header === undefined) throw new Error(`no header listed above ${cellText}`);
      columns.set(header, { sheet: at.sheet, column: at.column, firstRow: at.row, lastRow: last.row });
    } else {
      ws.getCell(at.row, at.column).value = content as ExcelJS.CellValue;
      if (note === "header") headerAt.set(`${at.sheet}\u0000${at.column}`, String(content));
    }
  }
  return { columns, formulaCells };
}

/** A recalculated cell's value: the formula result, or the plain value; error values as { error: "#N/A" }. */
export function cellResult(ws: ExcelJS.Worksheet, row: number, column: number): CellValue | { error: string } {
  const cell = ws.getCell(row, column);
  if (cell.type === ExcelJS.ValueType.Formula) {
    // Cell.result, not Cell.value.result: exceljs 4.4's value getter copies only truthy fields, so a
    // result of 0 (an underflowed probability) would read as missing.
    const r = cell.result as unknown;
    return r === undefined ? null : (r as CellValue | { error: string });
  }
  const v = cell.value as unknown;
  if (v === null || v === undefined) return null;
  return v as CellValue | { error: string };
}
