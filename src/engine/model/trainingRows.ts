/**
 * The training rows encoded for scoring, without parsing the predictor cells a second time where the
 * fit's own table or design already holds exactly what encodeRows would produce.
 *
 * Policy (one line each):
 * - Every column numeric (or ignored) and the names at their own positions: the table's columns are
 *   taken as they are, with the same MISSING_FOR_SCORING problems encodeRows would give.
 * - No row skipped and the columns at their own positions: the fitted design's columns are shared.
 * - Otherwise the cells are encoded again (encodeRows).
 * - Training predictors trimmed shorter than the labels are missing below their end.
 */
import { encodeRows, type DesignEncoding, type EncodedRows, type RowProblem } from "../data/design";
import type { NumericColumn, Table } from "../data/table";
import { formatMessage } from "../messages";
import type { CellValue, DesignMatrix } from "../types";

/**
 * The training predictors encoded for scoring, one entry per training data row (`rows`).
 * @param own data rows of the predictors range itself (before padding to the other ranges)
 */
export function encodeTrainingRows(
  encoding: DesignEncoding,
  design: DesignMatrix,
  table: Table,
  own: number,
  cells: CellValue[][],
  rows: number,
): EncodedRows {
  const encoded =
    encodedFromTable(encoding, table, own, cells) ??
    encodedFromDesign(encoding, design, table, own, cells) ??
    encodeRows(encoding, cells, { argument: "predictors", headers: table.header ? "yes" : "no" });
  return padEncoded(encoded, rows);
}

/**
 * The training rows as encodeRows would encode them from the predictor cells, taken from the parsed
 * table instead of parsing the cells again, when every column is numeric (or ignored) and the header
 * cells sit at their own positions; otherwise null (the caller encodes the cells). A number column of
 * the table holds exactly what encodeRows reads (blank = missing; text cannot occur in it), so the
 * values, the per-row MISSING_FOR_SCORING problems and the NaN rows are the same.
 * @param own data rows of the predictors range itself (before padding to the other ranges)
 */
function encodedFromTable(encoding: DesignEncoding, table: Table, own: number, cells: CellValue[][]): EncodedRows | null {
  if (own === undefined || own > table.rows) return null;
  for (let k = 0; k < encoding.columns.length; k++) {
    const c = encoding.columns[k];
    if (c.kind === "ignored") continue;
    if (c.kind !== "number") return null;
    const tc = table.columns[k];
    if (!tc || tc.kind === "text" || tc.name !== c.name) return null;
  }
  if (!namesAtOwnPositions(encoding, table, cells)) return null;
  const start = table.firstRow - 1;
  const ok = new Uint8Array(own).fill(1);
  const problems: RowProblem[] = [];
  const columns: Float64Array[] = [];
  for (let k = 0; k < encoding.columns.length; k++) {
    const c = encoding.columns[k];
    if (c.kind === "ignored") continue;
    const tc = table.columns[k] as NumericColumn;
    // The table is trainModel's own (read-only from here on, the design may share its columns too): its column is taken as it is.
    columns.push(own === tc.values.length ? tc.values : tc.values.slice(0, own));
    const missing = tc.missing;
    // (A column without a missing value, the usual case, is passed over by the built-in search.)
    if (!missing.subarray(0, own).includes(1)) continue;
    for (let i = 0; i < own; i++) {
      // A missing value is a problem of that row only (the first column missing names it).
      if (missing[i] && ok[i]) {
        ok[i] = 0;
        problems.push({
          index: i,
          code: "MISSING_FOR_SCORING",
          column: c.name,
          message: formatMessage("MISSING_FOR_SCORING", { row: start + i + 1, column: c.name }),
        });
      }
    }
  }
  if (problems.length > 0) {
    for (let i = 0; i < own; i++) if (!ok[i]) for (const col of columns) col[i] = NaN;
    problems.sort((a, b) => a.index - b.index);
  }
  return { design: { rows: own, columns, names: encoding.terms.slice() }, ok, problems, header: table.header, firstRow: start + 1 };
}

/**
 * True when encodeRows would read column k of the training encoding from column k of `cells`: always
 * without a header row (columns by position); with one, when each used column's name sits at its own
 * position and nowhere before it (columns are matched by name).
 */
function namesAtOwnPositions(encoding: DesignEncoding, table: Table, cells: CellValue[][]): boolean {
  if (!table.header) return true;
  const header = Array.isArray(cells) && Array.isArray(cells[0]) ? (cells[0] as CellValue[]) : null;
  if (!header) return false;
  for (let k = 0; k < encoding.columns.length; k++) {
    const c = encoding.columns[k];
    if (c.kind === "ignored") continue;
    const v = header[k];
    if (typeof v !== "string" || v.trim() !== c.name) return false;
    for (let j = 0; j < k; j++) {
      const w = header[j];
      if (typeof w === "string" && w.trim() === c.name) return false;
    }
  }
  return true;
}

/**
 * The training rows as encodeRows would encode them, taken from the fitted design itself when every
 * data row of the predictors entered the fit (none skipped, none past the range's end) and the
 * columns sit at their own positions; otherwise null. With no row skipped, no value is missing and
 * every category level of the rows is one of the encoding's (the levels are those of the fitted
 * rows), so encodeRows gives each row the very terms buildDesign gave it. The columns are shared
 * with `design`, not copied (nothing writes to either: scoring copies the rows it uses).
 * @param own data rows of the predictors range itself (before padding to the other ranges)
 */
function encodedFromDesign(encoding: DesignEncoding, design: DesignMatrix, table: Table, own: number, cells: CellValue[][]): EncodedRows | null {
  if (own === undefined || own !== table.rows || design.rows !== table.rows) return null;
  if (design.columns.length !== encoding.terms.length || !namesAtOwnPositions(encoding, table, cells)) return null;
  return {
    design: { rows: own, columns: design.columns, names: encoding.terms.slice() },
    ok: new Uint8Array(own).fill(1),
    problems: [],
    header: table.header,
    firstRow: table.firstRow,
  };
}

/** Training predictors may be trimmed shorter than the labels: rows past their end are missing. */
function padEncoded(e: EncodedRows, n: number): EncodedRows {
  if (e.design.rows >= n) return e;
  const ok = new Uint8Array(n);
  ok.set(e.ok);
  const columns = e.design.columns.map((c) => {
    const out = new Float64Array(n).fill(NaN);
    out.set(c);
    return out;
  });
  const problems = e.problems.slice();
  for (let i = e.design.rows; i < n; i++) {
    problems.push({
      index: i,
      code: "MISSING_FOR_SCORING",
      column: "predictors",
      message: formatMessage("MISSING_FOR_SCORING", { row: e.firstRow + i, column: "predictors" }),
    });
  }
  return { ...e, design: { rows: n, columns, names: e.design.names }, ok, problems };
}
