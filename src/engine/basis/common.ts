/**
 * Shared pieces of the basis-column transforms: the column and result shapes, the per-row note, the
 * numeric reader with its written policy for blanks and text, type-7 quantiles and number formatting
 * for column names.
 *
 * Every transform is split into `fit` (learns a plain, JSON-serializable state from training rows)
 * and `apply` (turns any rows into basis columns using only that state), so new rows are transformed
 * exactly as the training rows were.
 */
import { formatMessage, problem, type MessageCode } from "../messages";

/** One source column as the basis transforms see it. Blanks are null; text stays text. */
export interface BasisColumn {
  /** Header text (the name used in recipes and in generated column names). */
  name: string;
  values: readonly (number | string | null)[];
}

/**
 * A per-row problem: the row's generated values are NaN and this note says why. `row` is the 0-based
 * index into the rows passed to `apply`; the message shows it 1-based ("data row 3").
 */
export interface RowNote {
  row: number;
  /** Source column name. */
  column: string;
  code: MessageCode;
  message: string;
  /** The catalogue parameters of `message` (row 1-based), so an adapter can re-word the row position. */
  params: Record<string, unknown>;
}

/** What applying one transform state produces. */
export interface BasisBlock {
  /** Generated column names, one per column. */
  names: string[];
  /** Generated columns, each as long as the input; NaN where the row had a problem. */
  columns: Float64Array[];
  notes: RowNote[];
}

/** A fit-time finding (e.g. fewer distinct knots than asked for); the fit still succeeded. */
export interface FitNote {
  code: MessageCode;
  message: string;
}

/** Make a RowNote with its message filled from the catalogue (row shown 1-based). */
export function rowNote(row: number, column: string, code: MessageCode, params: Record<string, unknown>): RowNote {
  const all = { row: row + 1, column: `"${column}"`, ...params };
  return { row, column, code, message: formatMessage(code, all), params: all };
}

/**
 * Read a column as numbers for a numeric transform.
 * Policy: a number is used as is; a blank (null) is missing; text is not a number. In `apply`, both
 * give NaN plus a row note (MISSING_FOR_SCORING or NOT_A_NUMBER). In `fit` (strictText=true), text is
 * a whole-column error (BASIS_NEEDS_NUMBERS: the user pointed a numeric transform at a text column),
 * while blanks are skipped and counted.
 */
export function readNumbers(
  column: BasisColumn,
  transform: string,
  notes: RowNote[] | null,
  strictText = false,
): Float64Array {
  const out = new Float64Array(column.values.length);
  column.values.forEach((v, i) => {
    if (typeof v === "number" && Number.isFinite(v)) {
      out[i] = v;
      return;
    }
    out[i] = NaN;
    if (typeof v === "string") {
      if (strictText) {
        throw problem("BASIS_NEEDS_NUMBERS", { transform, column: column.name, row: i + 1, value: v });
      }
      notes?.push(rowNote(i, column.name, "NOT_A_NUMBER", { argument: "data", value: v }));
    } else {
      notes?.push(rowNote(i, column.name, "MISSING_FOR_SCORING", {}));
    }
  });
  return out;
}

/** The finite values of `x` (training rows with a value). */
export function finiteValues(x: Float64Array): Float64Array {
  return x.filter((v) => Number.isFinite(v));
}

/** Sorted copy (ascending). */
export function sortedCopy(x: ArrayLike<number>): Float64Array {
  return Float64Array.from(x).sort();
}

/**
 * Sample quantile of type 7 (Hyndman & Fan 1996, "Sample quantiles in statistical packages", Am.
 * Stat. 50:361-365; R's default): h = (n-1)p, Q = x[floor h] + (h - floor h)(x[floor h + 1] - x[floor h]).
 * @param sorted - ascending values, no NaN
 * @param p - probability in [0, 1]
 */
export function quantile7(sorted: Float64Array, p: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  // Same operation order as R's quantile.default (1-based index, then h = index - lo), so results
  // agree to the last bit rather than to a rounding error.
  const index = 1 + (n - 1) * p;
  const lo = Math.floor(index);
  const hi = Math.ceil(index);
  const qlo = sorted[lo - 1];
  const qhi = sorted[hi - 1];
  if (!(index > lo) || qhi === qlo) return qlo;
  const h = index - lo;
  return (1 - h) * qlo + h * qhi;
}

/** Number of distinct values in a sorted array. */
export function distinctCount(sorted: Float64Array): number {
  let d = 0;
  for (let i = 0; i < sorted.length; i++) if (i === 0 || sorted[i] !== sorted[i - 1]) d++;
  return d;
}

/**
 * Short, exact-enough text for a number inside a column name: up to 6 significant digits, no
 * trailing zeros ("45", "0.125", "1.23457e+06" is written "1234570").
 */
export function formatForName(v: number): string {
  if (v === Infinity) return "inf";
  if (v === -Infinity) return "-inf";
  if (Number.isInteger(v) && Math.abs(v) < 1e15) return String(v);
  const s = Number(v.toPrecision(6));
  return String(s);
}
