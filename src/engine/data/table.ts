/**
 * The one range parser: a worksheet range (row-major 2-D array of cell values) in, typed columns out.
 * Every cell function and the task pane read their ranges through `readTable`, so a blank, a number
 * stored as text or a boolean means the same thing everywhere.
 *
 * Policy (each rule is repeated in one line above the code that applies it):
 * - Blank: null, undefined, "" and text of only whitespace. Blank cells are missing values.
 * - Trailing rows that are entirely blank are dropped (scanned from the bottom, so a whole-column
 *   reference costs one pass over the blank tail). Blank rows inside the data stay, as missing rows.
 * - Older desktop builds send 0 for a blank cell; a 0 cannot be told from a real 0, so a 0 is a real 0,
 *   with one exception: a 0 in a column whose every other non-blank cell is (non-numeric) text is a
 *   blank (a real 0 among category names is far less likely than a blank sent as 0).
 * - Numbers stored as text are numbers when, after trimming spaces, they match the locale-free form
 *   [+|-] digits [. digits] [e|E [+|-] digits] (also "-.5" and "1."): "1.5", " 2 ", "1e-3", "-.5" are
 *   numbers; "1,234", "1 234", "12%", "$3", "0x1F", "NaN", "Infinity" are text. No locale guessing.
 * - NaN and +-Infinity arriving as numbers are rejected (NOT_FINITE_VALUE): Excel never sends them, so
 *   they signal a broken upstream computation that must not be fitted silently.
 * - Booleans: a column of only booleans has kind "boolean" with values 1 (TRUE) and 0 (FALSE); booleans
 *   among numbers count as 1/0; booleans among text become the text "TRUE"/"FALSE".
 * - Column kind: "empty" (no non-blank cell), "boolean", "number" (numbers, numeric text, booleans) or
 *   "text" (any non-numeric text). A column mixing numbers with text is text when text cells are at least
 *   as many as numeric ones (a category column with some numeric codes; numbers become their text, e.g.
 *   3 -> "3"); when numbers are the majority, the first text cell is a typo in a numeric column and is
 *   rejected (NOT_A_NUMBER) rather than turned into a category or silently dropped.
 * - Text values are trimmed and otherwise kept exactly (case-sensitive).
 * - Header row, headers = "auto" (the default): the first row is a header when the range has at least
 *   two rows, no first-row cell is a number or boolean, at least one is text, and every non-blank
 *   first-row cell looks like a name: its column's other cells hold numbers/booleans and no text
 *   ("strong" evidence), or they hold text in which the first cell's text never recurs ("weak"
 *   evidence: category values recur, names do not). "yes"/"no" force the decision.
 * - Column names: the header text (trimmed); a blank header, or no header row, gives "x1", "x2", ...
 *   (prefix configurable); a repeated name gets " (2)", " (3)", ... appended.
 * - Ragged input (rows of different lengths) is rejected (RAGGED_RANGE); a lone scalar is a 1x1 range.
 * - Error cells: an object in a cell (how a custom function with errors allowed receives #N/A and the
 *   like, e.g. a CustomFunctions.Error or an error cell value) or text that is exactly an error's
 *   literal ("#N/A", "#DIV/0!", ...: how the Excel JavaScript API reads an error cell) is an error
 *   value, never data. errors="blank" (the default) reads it as a blank cell and counts it
 *   (Table.errorCells: how many, and the first one's row, column and literal); errors="refuse" throws
 *   ERROR_VALUE_CELL naming the cell. A header cell holding an error gets a generated name.
 * - Positions in messages are 1-based rows and columns of the range as the user selected it (the header
 *   row, when present, is row 1).
 */
import { problem } from "../messages";
import type { CellValue } from "../types";

export type ColumnKind = "number" | "text" | "boolean" | "empty";

/** A numeric, boolean (1/0) or all-blank column; missing entries hold NaN. */
export interface NumericColumn {
  name: string;
  kind: "number" | "boolean" | "empty";
  values: Float64Array;
  /** 1 where the cell is missing (blank). */
  missing: Uint8Array;
}

/** A text (category) column; missing entries hold "". */
export interface TextColumn {
  name: string;
  kind: "text";
  values: string[];
  missing: Uint8Array;
}

export type TableColumn = NumericColumn | TextColumn;

/** How sure header detection was: forced by the caller, or the evidence found under "auto". */
export type HeaderEvidence = "forced" | "strong" | "weak" | "none";

/** A parsed range. */
export interface Table {
  /** The argument name used in messages ("predictors", "labels"). */
  argument: string;
  /** True when the first row was taken as column names. */
  header: boolean;
  headerEvidence: HeaderEvidence;
  names: string[];
  columns: TableColumn[];
  /** Data rows (after the header and after trimming trailing blank rows). */
  rows: number;
  /** Trailing entirely-blank rows that were dropped. */
  trimmedRows: number;
  /** 1-based row of the range that holds data row 0 (2 with a header, 1 without). */
  firstRow: number;
  /** Error cells read as blank (errors="blank"): how many, and the first (1-based row and column of the range). */
  errorCells: ErrorCells;
}

/** Error values found in a range and read as blank cells. */
export interface ErrorCells {
  count: number;
  first: { row: number; column: number; value: string } | null;
}

export interface ReadTableOptions {
  /** Argument name shown in messages. */
  argument: string;
  /** Header handling ["auto"]. */
  headers?: "auto" | "yes" | "no";
  /** Prefix of generated column names ["x"]. */
  namePrefix?: string;
  /** Error cells: read as blank and counted ["blank"], or refused with ERROR_VALUE_CELL. */
  errors?: "blank" | "refuse";
  /** Why an error cell cannot be used, for ERROR_VALUE_CELL ("metrics need a value in every row"). */
  errorReason?: string;
}

/** The literals of Excel's error values, as the Excel JavaScript API reads error cells. */
const ERROR_LITERALS = new Set([
  "#N/A", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#NULL!", "#SPILL!", "#CALC!",
  "#GETTING_DATA", "#FIELD!", "#BLOCKED!", "#CONNECT!", "#BUSY!", "#UNKNOWN!", "#EXTERNAL!", "#PYTHON!",
]);

/**
 * The error literal of a cell holding an error value ("#N/A"), or null for any other cell. An object
 * names its error by `code` (CustomFunctions.Error), `basicValue` or `errorType` (error cell values);
 * an object naming none is "an error value".
 * @example errorLiteral("#N/A") // "#N/A"; errorLiteral({ code: "#DIV/0!" }) // "#DIV/0!"; errorLiteral("N/A") // null
 */
export function errorLiteral(v: unknown): string | null {
  if (typeof v === "string") {
    if (v.length > 40) return null;
    const t = v.trim();
    return t.charCodeAt(0) === 35 && ERROR_LITERALS.has(t) ? t : null;
  }
  if (v === null || typeof v !== "object" || Array.isArray(v)) return null;
  const o = v as Record<string, unknown>;
  for (const key of ["code", "basicValue", "errorType"]) {
    const named = o[key];
    if (typeof named === "string" && named.trim() !== "") return named.trim().slice(0, 40);
  }
  return "an error value";
}

/** Classification of one cell (NUM is 0, so a fresh kinds array reads "all numbers"). */
const NUM = 0;
const BLANK = 1;
const BOOL = 2;
const TEXT = 3;

/** The locale-free number-as-text form (see the policy at the top of the file). */
const NUMERIC_TEXT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * Parse text as a number under the locale-free rule, or return NaN.
 * @example parseNumericText(" -.5 ") // -0.5 ; parseNumericText("1,234") // NaN
 */
export function parseNumericText(text: string): number {
  const t = text.trim();
  return NUMERIC_TEXT.test(t) ? Number(t) : NaN;
}

/** True for a cell that counts as blank: null, undefined, "" or whitespace-only text. */
export function isBlankCell(v: CellValue): boolean {
  // Blank: null, undefined, "" and whitespace-only text.
  return v === null || v === undefined || (typeof v === "string" && v.trim() === "");
}

function classify(v: CellValue): number {
  if (v === null || v === undefined) return BLANK;
  if (typeof v === "number") return NUM;
  if (typeof v === "boolean") return BOOL;
  if (typeof v === "string") return classifyTrimmed(v.trim());
  // An error value (an object in a cell) is no data.
  if (typeof v === "object" && !Array.isArray(v)) return BLANK;
  return TEXT;
}

/** Kind of a text cell, given its trimmed text: BLANK, NUM (a number stored as text) or TEXT. */
function classifyTrimmed(t: string): number {
  if (t === "") return BLANK;
  // Numbers stored as text follow the locale-free rule (the regex runs only on a plausible start).
  const c = t.charCodeAt(0);
  // An error's literal ("#N/A") is no data: blank wherever a kind is asked for (readColumns counts it).
  if (c === 35 && ERROR_LITERALS.has(t)) return BLANK;
  const plausible = (c >= 48 && c <= 57) || c === 43 || c === 45 || c === 46;
  return plausible && NUMERIC_TEXT.test(t) ? NUM : TEXT;
}

function numberOf(v: CellValue): number {
  if (typeof v === "number") return v;
  if (typeof v === "boolean") return v ? 1 : 0;
  return Number(String(v).trim());
}

function textOf(v: CellValue): string {
  if (typeof v === "boolean") return v ? "TRUE" : "FALSE";
  if (typeof v === "number") return String(v);
  return String(v).trim();
}

/** Normalize the input to a list of rows: a lone scalar is a 1x1 range; a flat array is one row. */
function asRows(cells: unknown): CellValue[][] {
  if (!Array.isArray(cells)) return [[cells as CellValue]];
  if (cells.length > 0 && !Array.isArray(cells[0])) return [cells as CellValue[]];
  return cells as CellValue[][];
}

/**
 * Decide whether the first row of `rows` (already trimmed) is a header under the "auto" rule.
 * Returns the decision and the strength of the evidence.
 */
export function detectHeader(rows: CellValue[][]): { header: boolean; evidence: HeaderEvidence } {
  // A header needs at least one data row below it.
  if (rows.length < 2) return { header: false, evidence: "none" };
  const first = rows[0];
  let anyText = false;
  for (const v of first) {
    const k = classify(v);
    // A number or boolean in the first row means it is data.
    if (k === NUM || k === BOOL) return { header: false, evidence: "strong" };
    if (k === TEXT) anyText = true;
  }
  if (!anyText) return { header: false, evidence: "none" };
  // One row-major pass over the rows below, for every column whose first cell is text: count its
  // text and blank cells (numbers and booleans are the rest), and stop at the first recurring name.
  const width = first.length;
  const nameOf: (string | null)[] = new Array(width);
  const named: number[] = [];
  for (let j = 0; j < width; j++) {
    nameOf[j] = classify(first[j]) === TEXT ? textOf(first[j]) : null;
    if (nameOf[j] !== null) named.push(j);
  }
  const text = new Int32Array(width);
  const blank = new Int32Array(width);
  for (let i = 1; i < rows.length; i++) {
    const row = rows[i];
    for (let t = 0; t < named.length; t++) {
      const j = named[t];
      const v = row[j];
      if (typeof v === "number" || typeof v === "boolean") continue;
      // Text is trimmed once, for its kind and for the comparison with the name.
      const trimmed = typeof v === "string" ? v.trim() : null;
      const k = trimmed !== null ? classifyTrimmed(trimmed) : classify(v);
      if (k === BLANK) blank[j]++;
      else if (k === TEXT) {
        text[j]++;
        // In a text column a category value recurs and a name does not (weak evidence): one
        // recurring first cell makes the first row data, whatever the other columns show.
        if ((trimmed ?? textOf(v)) === nameOf[j]) return { header: false, evidence: "weak" };
      }
    }
  }
  let strong = false;
  for (const j of named) {
    // Text over a column of numbers/booleans is a name (strong evidence).
    if (text[j] === 0 && rows.length - 1 - blank[j] > 0) strong = true;
  }
  return { header: true, evidence: strong ? "strong" : "weak" };
}

/**
 * Read a worksheet range into typed columns under the policy written at the top of this file.
 *
 * @param cells row-major 2-D array as Excel passes it to a custom function (or a lone scalar).
 * @throws OddsmithError EMPTY_RANGE, RAGGED_RANGE, NOT_FINITE_VALUE, NOT_A_NUMBER.
 * @example
 * readTable([["age", "region"], [31, "North"], [null, "South"]], { argument: "predictors" })
 * // header true; columns: age (number, [31, NaN], missing [0, 1]), region (text)
 */
export function readTable(cells: CellValue[][], opts: ReadTableOptions): Table {
  const argument = opts.argument;
  const headers = opts.headers ?? "auto";
  const prefix = opts.namePrefix ?? "x";
  const { rows: rowsIn, end, total, width } = normalizeRange(cells, argument);

  let header: boolean;
  let evidence: HeaderEvidence;
  if (headers === "yes") {
    header = true;
    evidence = "forced";
  } else if (headers === "no") {
    header = false;
    evidence = "forced";
  } else {
    ({ header, evidence } = detectHeader(rowsIn));
  }
  const start = header ? 1 : 0;
  const n = end - start;
  if (n === 0) throw problem("EMPTY_RANGE", { argument });

  const names = makeNames(header ? rowsIn[0] : null, width, prefix);
  const errorCells: ErrorCells = { count: 0, first: null };
  const columns = readColumns(rowsIn, start, width, names, argument, { policy: opts.errors ?? "blank", reason: opts.errorReason ?? "", found: errorCells });
  return {
    argument,
    header,
    headerEvidence: evidence,
    names,
    columns,
    rows: n,
    trimmedRows: total - end,
    firstRow: start + 1,
    errorCells,
  };
}

/**
 * Shape checks shared by every reader: a lone scalar is a 1x1 range, a flat array one row; ragged rows
 * are rejected; trailing entirely-blank rows are trimmed by scanning from the bottom.
 * @throws OddsmithError RAGGED_RANGE, EMPTY_RANGE.
 */
export function normalizeRange(
  cells: unknown,
  argument: string,
): { rows: CellValue[][]; end: number; total: number; width: number } {
  const all = asRows(cells);
  const width = all.length > 0 && Array.isArray(all[0]) ? all[0].length : 0;
  // Ragged arrays are rejected: every row must have as many cells as row 1.
  for (let i = 1; i < all.length; i++) {
    if (!Array.isArray(all[i]) || all[i].length !== width) {
      throw problem("RAGGED_RANGE", {
        argument,
        row: i + 1,
        got: Array.isArray(all[i]) ? all[i].length : 1,
        expected: width,
      });
    }
  }
  // Trailing entirely-blank rows are trimmed, scanning from the bottom.
  let end = all.length;
  outer: while (end > 0) {
    const row = all[end - 1];
    for (let j = 0; j < width; j++) if (!isBlankCell(row[j])) break outer;
    end--;
  }
  if (end === 0 || width === 0) throw problem("EMPTY_RANGE", { argument });
  return { rows: end === all.length ? all : all.slice(0, end), end, total: all.length, width };
}

function makeNames(headerRow: CellValue[] | null, width: number, prefix: string): string[] {
  const names: string[] = [];
  const taken = new Set<string>();
  const repeats = new Map<string, number>();
  for (let j = 0; j < width; j++) {
    // A blank header cell, an error value (or no header row) gives a generated name.
    const h = headerRow ? headerRow[j] : null;
    const base = h !== null && !isBlankCell(h) && errorLiteral(h) === null ? textOf(h) : `${prefix}${j + 1}`;
    let name = base;
    // A repeated name gets " (2)", " (3)", ... appended, skipping any suffix another header already
    // holds ("a", "a", "a (2)" -> "a", "a (2)", "a (2) (2)"), so names are unique by construction.
    for (let k = repeats.get(base) ?? 1; taken.has(name); ) {
      k++;
      repeats.set(base, k);
      name = `${base} (${k})`;
    }
    taken.add(name);
    names.push(name);
  }
  return names;
}

/**
 * Read every column of `rows` (data from row `start`) in one row-major pass: a number cell (most
 * cells) is stored into its column's Float64Array and checked (finite; a 0 is counted) with nothing
 * else written, since the kinds arrays start as "number"; every other cell is classified, and its
 * kind and count recorded (the range arrives as rows, so walking it row by row touches each row
 * once). The per-column decisions (kind, a 0 sent for a blank, the majority rule) and their errors
 * then follow column by column, in the same order as reading one column after another would raise them.
 */
/** How readColumns treats error cells, and where it counts the ones read as blank. */
interface ErrorPolicy {
  policy: "blank" | "refuse";
  reason: string;
  found: ErrorCells;
}

/** Handle the error cell `literal` at data row i, column j: refuse it or count it (it is then read as blank). */
function errorCell(e: ErrorPolicy, literal: string, argument: string, row: number, column: number): void {
  if (e.policy === "refuse") {
    throw problem("ERROR_VALUE_CELL", { argument, value: literal, row, column, what: e.reason || "it cannot be used as data" });
  }
  if (e.found.count === 0) e.found.first = { row, column, value: literal };
  e.found.count++;
}

function readColumns(rows: CellValue[][], start: number, width: number, names: string[], argument: string, errors: ErrorPolicy): TableColumn[] {
  const n = rows.length - start;
  const kinds: Uint8Array[] = [];
  const nums: Float64Array[] = [];
  for (let j = 0; j < width; j++) {
    kinds.push(new Uint8Array(n));
    nums.push(new Float64Array(n));
  }
  // Per column: cells that are not numbers, by kind; numbers stored as text; zeros among the numbers.
  const nBlank = new Int32Array(width);
  const nBool = new Int32Array(width);
  const nText = new Int32Array(width);
  const nNumText = new Int32Array(width);
  const nZero = new Int32Array(width);
  const firstText = new Int32Array(width).fill(-1);
  const firstNonFinite = new Int32Array(width).fill(-1);
  // Per column from its first text cell on: the trimmed text of its text cells.
  const texts: (string[] | null)[] = new Array<string[] | null>(width).fill(null);
  for (let i = 0; i < n; i++) {
    const row = rows[start + i];
    for (let j = 0; j < width; j++) {
      const v = row[j];
      if (typeof v === "number") {
        nums[j][i] = v;
        // NaN and infinities are not valid values (reported below, in column order).
        if (v - v !== 0) {
          if (firstNonFinite[j] < 0) firstNonFinite[j] = i;
        } else if (v === 0) nZero[j]++; // only a real numeric 0 can be a blank sent by an older build
        continue;
      }
      // Text is trimmed once: for its kind, its number, and its value in a text column (kept).
      const t = typeof v === "string" ? v.trim() : null;
      // An error value (an object, or an error's literal) is never data: refused, or read as blank.
      const isError = t !== null ? t.charCodeAt(0) === 35 && ERROR_LITERALS.has(t) : typeof v === "object" && v !== null && !Array.isArray(v);
      if (isError) errorCell(errors, errorLiteral(v) as string, argument, start + i + 1, j + 1);
      const k = isError ? BLANK : t !== null ? classifyTrimmed(t) : classify(v);
      kinds[j][i] = k;
      if (k === BLANK) {
        nums[j][i] = NaN;
        nBlank[j]++;
      } else if (k === NUM) {
        // Numeric text: the text "0" was typed, so it is never a blank.
        const x = t !== null ? Number(t) : numberOf(v);
        nums[j][i] = x;
        if (!Number.isFinite(x)) {
          if (firstNonFinite[j] < 0) firstNonFinite[j] = i;
        } else nNumText[j]++;
      } else if (k === BOOL) {
        nums[j][i] = v ? 1 : 0;
        nBool[j]++;
      } else {
        nText[j]++;
        if (firstText[j] < 0) {
          firstText[j] = i;
          texts[j] = new Array<string>(n);
        }
        if (t !== null) (texts[j] as string[])[i] = t;
      }
    }
  }
  const columns: TableColumn[] = [];
  for (let j = 0; j < width; j++) {
    if (firstNonFinite[j] >= 0) {
      const i = firstNonFinite[j];
      // Numeric text is quoted as typed ("1e999" overflows; its number would read "Infinity").
      const typed = rows[start + i][j];
      const value = typeof typed === "string" ? `"${typed.trim()}" (too large for a number)` : String(nums[j][i]);
      throw problem("NOT_FINITE_VALUE", { argument, row: start + i + 1, column: j + 1, value });
    }
    // Every number is finite here: the numbers (and numeric text) are the cells of no other kind.
    const nNum = n - nBlank[j] - nBool[j] - nText[j];
    const nonZeroNumber = nNumText[j] > 0 || nNum - nNumText[j] - nZero[j] > 0;
    columns.push(finishColumn(rows, start, j, names[j], argument, kinds[j], nums[j], texts[j], nNum, nBool[j], nText[j], nBlank[j], firstText[j], nonZeroNumber));
  }
  return columns;
}

function finishColumn(
  rows: CellValue[][],
  start: number,
  j: number,
  name: string,
  argument: string,
  kinds: Uint8Array,
  nums: Float64Array,
  texts: string[] | null,
  nNumIn: number,
  nBool: number,
  nText: number,
  nBlank: number,
  firstText: number,
  nonZeroNumber: boolean,
): TableColumn {
  const n = kinds.length;
  const missing = new Uint8Array(n);
  let nNum = nNumIn;
  // A 0 in a column whose other non-blank cells are all text is a blank sent as 0 by an older build.
  const zeroIsBlank = nText > 0 && nNum > 0 && !nonZeroNumber && nBool === 0;
  if (zeroIsBlank) nNum = 0;

  if (nText > 0 && nNum > nText) {
    // Numbers in the majority: the text cell is a typo in a numeric column.
    const v = rows[start + firstText][j];
    throw problem("NOT_A_NUMBER", { argument, row: start + firstText + 1, column: j + 1, value: textOf(v) });
  }
  if (nText > 0) {
    const values: string[] = new Array(n);
    for (let i = 0; i < n; i++) {
      const k = kinds[i];
      if (k === BLANK || (zeroIsBlank && k === NUM)) {
        values[i] = "";
        missing[i] = 1;
      } else if (k === TEXT && texts !== null && texts[i] !== undefined) values[i] = texts[i];
      else values[i] = textOf(rows[start + i][j]);
    }
    return { name, kind: "text", values, missing };
  }
  // Blank cells are missing (their value is already NaN).
  if (nBlank > 0) for (let i = 0; i < n; i++) if (kinds[i] === BLANK) missing[i] = 1;
  const kind: ColumnKind = nNum + nBool === 0 ? "empty" : nNum === 0 ? "boolean" : "number";
  return { name, kind, values: nums, missing };
}

/** 1-based row of the range (as the user selected it) that holds data row `i` of `table`. */
export function rangeRow(table: Pick<Table, "firstRow">, i: number): number {
  return table.firstRow + i;
}

/**
 * Extend a table to `rows` data rows with missing values (rows past a range's last non-blank row
 * are blank, so a range trimmed shorter than its neighbours still lines up with them).
 */
export function padTable(table: Table, rows: number): Table {
  if (rows <= table.rows) return table;
  const columns = table.columns.map((c): TableColumn => {
    const missing = new Uint8Array(rows).fill(1);
    missing.set(c.missing);
    if (c.kind === "text") {
      const values = c.values.concat(new Array<string>(rows - c.values.length).fill(""));
      return { name: c.name, kind: "text", values, missing };
    }
    const values = new Float64Array(rows).fill(NaN);
    values.set(c.values);
    return { name: c.name, kind: c.kind, values, missing };
  });
  return { ...table, columns, rows, trimmedRows: Math.max(0, table.trimmedRows - (rows - table.rows)) };
}
