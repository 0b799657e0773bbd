/**
 * Test helpers: build ranges the way Excel passes them to a custom function (row-major 2-D arrays,
 * a header row, blanks as null) and call the functions of src/functions/functions.ts like Excel does
 * (omitted optional arguments as null), catching the cell error they throw.
 */
import type { CellValue } from "../../../src/engine/types";
import { CellFunctionFailure } from "../../../src/functions/cellError";

export type Range = CellValue[][];

/** One column with a header: [[header], [v1], [v2], ...]. */
export function column(header: string, values: readonly CellValue[]): Range {
  return [[header], ...values.map((v) => [v])];
}

/** Columns side by side with their headers. */
export function table(columns: Record<string, readonly CellValue[]>): Range {
  const names = Object.keys(columns);
  const n = columns[names[0]].length;
  const rows: Range = [names];
  for (let i = 0; i < n; i++) rows.push(names.map((k) => columns[k][i]));
  return rows;
}

/** The outcome of a cell-function call: its result, or the cell error it showed. */
export type Outcome = { ok: true; value: Range } | { ok: false; cellError: string; code: string; message: string };

/** Call a cell function and capture a failure as Excel would show it. */
export function call(f: () => Range): Outcome {
  try {
    return { ok: true, value: f() };
  } catch (e) {
    if (e instanceof CellFunctionFailure) return { ok: false, cellError: e.cellError, code: e.code, message: e.message };
    throw e;
  }
}

/** The cell error a call shows (fails the test when the call succeeds). */
export function failure(f: () => Range): { cellError: string; code: string; message: string } {
  const out = call(f);
  if (out.ok) throw new Error(`expected a cell error, got ${JSON.stringify(out.value).slice(0, 200)}`);
  return out;
}

/** Every cell is a finite number, text or boolean: no null, undefined, NaN or infinity. */
export function expectCleanCells(result: Range): void {
  const width = result[0].length;
  for (const row of result) {
    expect(row.length).toBe(width);
    for (const v of row) {
      expect(v === null || v === undefined).toBe(false);
      if (typeof v === "number") expect(Number.isFinite(v)).toBe(true);
    }
  }
}

/** Relative difference |a - b| / max(|b|, floor). */
export function relDiff(a: number, b: number, floor = 1e-300): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), floor);
}

/**
 * Assert `got` agrees with `expected`: |got - expected| <= tolerance * max(|expected|, floor), with a
 * failure message that prints both values and the tolerance.
 */
export function expectClose(got: unknown, expected: number, tolerance: number, what = "", floor = 1e-8): void {
  const ok = typeof got === "number" && Math.abs(got - expected) <= tolerance * Math.max(Math.abs(expected), floor);
  if (!ok) throw new Error(`${what}: expected ${expected}, got ${String(got)} (relative tolerance ${tolerance})`);
}

/** Find the value next to a label in a two-column table (REPORT, CONFUSION footers). */
export function lookup(result: Range, label: string): CellValue {
  const row = result.find((r) => r[0] === label);
  if (!row) throw new Error(`no row labelled "${label}" in ${JSON.stringify(result.map((r) => r[0]))}`);
  return row[1];
}

/** What Excel passes for an omitted optional argument (TypeScript defaults never apply). */
export const OMITTED = null as unknown as Range;
