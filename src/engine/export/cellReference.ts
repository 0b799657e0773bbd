/**
 * A1-style cell references for formulas the engine writes: column letters, sheet names as they
 * must appear in a formula, and the three reference forms a scoring block uses (a source cell of
 * the scored row with its column fixed, a cell of the block in the same row, a fixed coefficient
 * cell). Rows and columns are 1-based. The task pane's address helpers (taskpane/a1.ts) use the
 * column letters and sheet quoting from here, so an address means the same thing everywhere.
 * Reference: ECMA-376 Part 1, sec. 18.17 (formulas: A1 references, "$" absolute markers, quoted
 * sheet names with doubled apostrophes).
 */

/** 1 -> "A", 27 -> "AA". */
export function columnLetters(column: number): string {
  let n = column;
  let s = "";
  while (n > 0) {
    const r = (n - 1) % 26;
    s = String.fromCharCode(65 + r) + s;
    n = Math.floor((n - 1) / 26);
  }
  return s;
}

/** A sheet name as it must appear in a formula: quoted when it holds anything but letters, digits, _. */
export function quoteSheet(name: string): string {
  const plain = /^[A-Za-z_][A-Za-z0-9_.]*$/.test(name) && !/^[A-Za-z]{1,3}\d+$/.test(name) && !/^(TRUE|FALSE)$/i.test(name);
  return plain ? name : `'${name.replace(/'/g, "''")}'`;
}

/** "Data!" when `sheet` differs from the sheet the formula lives on, else "". */
export function sheetPrefix(sheet: string, home: string): string {
  return sheet === home ? "" : `${quoteSheet(sheet)}!`;
}

/** A cell of the scored row with its column fixed: "$B7" (fill-down keeps the column). */
export function rowCell(column: number, row: number): string {
  return `$${columnLetters(column)}${row}`;
}

/** A fixed cell: "$R$3". */
export function fixedCell(column: number, row: number): string {
  return `$${columnLetters(column)}$${row}`;
}

/** A cell on a sheet; sheet null when the text named none. */
export interface CellPosition {
  sheet: string | null;
  row: number;
  column: number;
}

/**
 * Read a single-cell reference: "B2", "$B$2", "Data!B2" or "'Lot checks'!B2".
 * @returns the position, or null when the text is not one cell of the sheet's grid
 * @example parseCellReference("'Lot checks'!$C$4") // { sheet: "Lot checks", row: 4, column: 3 }
 */
export function parseCellReference(text: string): CellPosition | null {
  const t = text.trim();
  const bang = t.lastIndexOf("!");
  let sheet: string | null = null;
  if (bang >= 0) {
    sheet = t.slice(0, bang);
    if (sheet.startsWith("'") && sheet.endsWith("'") && sheet.length >= 2) sheet = sheet.slice(1, -1).replace(/''/g, "'");
    if (sheet === "") return null;
  }
  const m = /^\$?([A-Za-z]{1,3})\$?(\d{1,7})$/.exec(bang >= 0 ? t.slice(bang + 1) : t);
  if (!m) return null;
  let column = 0;
  for (const ch of m[1].toUpperCase()) column = column * 26 + (ch.charCodeAt(0) - 64);
  const row = Number(m[2]);
  if (row < 1 || row > 1_048_576 || column > 16_384) return null;
  return { sheet, row, column };
}
