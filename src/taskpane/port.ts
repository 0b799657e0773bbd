/**
 * The task pane's one door to the workbook. Everything the pane reads or writes goes through a
 * `WorkbookPort`, so the pane's logic runs the same against Excel (excelPort.ts, Excel JavaScript
 * API) and against the in-memory workbook of the preview workbench and the browser tests
 * (memoryPort.ts).
 *
 * Addresses are A1-style without the sheet ("B2:D40"); sheet names are passed separately.
 * Row and column numbers are 1-based sheet coordinates.
 */
import type { CellValue } from "../engine";

/** A rectangular block read from a sheet, with its position. */
export interface SheetBlock {
  sheet: string;
  /** A1 address of the block, e.g. "A1:F201". */
  address: string;
  /** 1-based sheet row and column of the block's top-left cell. */
  top: number;
  left: number;
  /** Cell values, row-major; blanks are null. The first row holds headers when the block has them. */
  values: CellValue[][];
}

/** What to write: values, or formulas (text starting with "=") that the workbook evaluates. */
export interface WriteRequest {
  sheet: string;
  /** Top-left cell of the write, e.g. "G1". */
  at: string;
  values: CellValue[][];
  /** True when `values` holds formulas to enter rather than literal values. */
  formulas?: boolean;
}

export interface WorkbookPort {
  /** The current selection (or the table around the active cell). */
  selectedBlock(): Promise<SheetBlock>;
  /** Read a block by sheet and address. Large blocks are read in chunks by the Excel implementation. */
  readBlock(sheet: string, address: string): Promise<SheetBlock>;
  /**
   * Optional. Re-read a table whose rows may have been appended or deleted: the columns of `address`,
   * from its top row down to its last row that is not blank across those columns, continued through
   * the rows directly below that are not blank either (the first blank row ends the table). The
   * returned address is the table's new extent. Without this method the pane re-reads `address`.
   */
  readGrownBlock?(sheet: string, address: string): Promise<SheetBlock>;
  /** Names of the sheets, in order. */
  sheetNames(): Promise<string[]>;
  /** Add a sheet and return its final name (a suffix is added when the name is taken). */
  addSheet(name: string): Promise<string>;
  /** True when every cell of the block is empty. Used before writing, to never overwrite data. */
  isEmpty(sheet: string, address: string): Promise<boolean>;
  write(request: WriteRequest): Promise<void>;
  /** Clear values and formats of a block (used by "remove generated columns"). */
  clear(sheet: string, address: string): Promise<void>;
  /** Mark (on=true) or unmark sheet rows `rows` (1-based) within the columns of `address`. */
  highlightRows(sheet: string, address: string, rows: number[], on: boolean): Promise<void>;
  /** Select a sheet row (1-based) within the columns of `address` and bring it into view. */
  selectRow(sheet: string, address: string, row: number): Promise<void>;
  /**
   * Make sure a sheet of exactly this name exists, hidden from the sheet tabs (it is created hidden
   * when missing; an existing one is left as it is). Returns true when it was created.
   */
  ensureHiddenSheet(name: string): Promise<boolean>;
  /**
   * Write text as text: no cell is taken for a formula, a number or a date, whatever it starts
   * with. Long texts (up to a cell's 32,767 characters each) are sent in batches the host can carry.
   */
  writeText(sheet: string, at: string, values: string[][]): Promise<void>;
  /** Call `handler` after cells of `sheet` change; returns a function that stops listening. */
  onChanged(sheet: string, handler: () => void): Promise<() => void>;
}
