/**
 * Output policy of every cell function (one line each):
 * - A result is a rectangular 2-D array: short rows are padded with "" to the widest row.
 * - Never null or undefined inside an array (Excel shows null as 0): a blank is "".
 * - Never NaN or an infinity in a cell (Excel cannot show them): a non-finite number becomes "".
 *   Where a non-finite value would hide a real problem, the adapter throws a catalogue error instead.
 * - Integers-as-counts stay numbers; text stays text; booleans stay booleans.
 */
import type { CellValue } from "../engine";

/** One cell for output: finite numbers, text and booleans pass; everything else becomes "". */
export function cell(value: unknown): CellValue {
  if (typeof value === "number") return Number.isFinite(value) ? value : "";
  if (typeof value === "string" || typeof value === "boolean") return value;
  return "";
}

/** Make `rows` a clean rectangular result under the policy above. */
export function spill(rows: readonly (readonly unknown[])[]): CellValue[][] {
  let width = 0;
  for (const r of rows) width = Math.max(width, r.length);
  if (width === 0) return [[""]];
  return rows.map((r) => {
    const out: CellValue[] = new Array(width);
    for (let j = 0; j < width; j++) out[j] = j < r.length ? cell(r[j]) : "";
    return out;
  });
}

/** Percentage label of a confidence level, e.g. 0.95 -> "95%", 0.975 -> "97.5%". */
export function levelLabel(level: number): string {
  return `${Number((level * 100).toPrecision(6))}%`;
}
