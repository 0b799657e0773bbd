/**
 * Output policy of every cell function (one line each):
 * - A result is a rectangular 2-D array: short rows are padded with "" to the widest row.
 * - Never null or undefined inside an array (Excel shows null as 0): a blank is "".
 * - Never NaN or an infinity in a cell (Excel cannot show them): a non-finite number becomes "".
 *   Where a non-finite value would hide a real problem, the adapter throws a catalogue error instead.
 * - Integers-as-counts stay numbers; text stays text; booleans stay booleans.
 * - Text longer than a cell holds (32,767 characters) is cut, and the cut text ends with a note
 *   saying how many characters were dropped (TEXT_TRUNCATED), so nothing is lost silently.
 * - A result larger than the sheet (rows, columns, payload) is refused (OUTPUT_TOO_LARGE): each
 *   function estimates its output before computing (sheetLimits.ts); this is the last guard.
 */
import { type CellValue } from "../engine";
import { formatMessage } from "./messages";
import { checkOutputSize, MAX_CELL_TEXT } from "./sheetLimits";

/** `text` cut so that it fits one cell, ending with the catalogue's note on what was cut. */
export function fitCellText(text: string): string {
  if (text.length <= MAX_CELL_TEXT) return text;
  // The note's length depends on the number it prints: size it for the largest count first.
  const noteFor = (dropped: number) => formatMessage("TEXT_TRUNCATED", { dropped: dropped.toLocaleString("en-US"), limit: MAX_CELL_TEXT.toLocaleString("en-US") });
  let keep = MAX_CELL_TEXT - noteFor(text.length).length;
  // Never split a surrogate pair (half a character would show as a replacement sign).
  const code = text.charCodeAt(keep - 1);
  if (code >= 0xd800 && code <= 0xdbff) keep--;
  return text.slice(0, keep) + noteFor(text.length - keep);
}

/** One cell for output: finite numbers, text and booleans pass; everything else becomes "". */
export function cell(value: unknown): CellValue {
  if (typeof value === "number") return Number.isFinite(value) ? value : "";
  if (typeof value === "string") return fitCellText(value);
  if (typeof value === "boolean") return value;
  return "";
}

/** Make `rows` a clean rectangular result under the policy above. */
export function spill(rows: readonly (readonly unknown[])[]): CellValue[][] {
  let width = 0;
  for (const r of rows) width = Math.max(width, r.length);
  if (width === 0) return [[""]];
  checkOutputSize(rows.length, width, {
    fn: "This function",
    what: "its finished result",
    hint: "Select fewer rows or ask for fewer columns.",
  });
  return rows.map((r) => {
    const out: CellValue[] = new Array(width);
    for (let j = 0; j < width; j++) out[j] = j < r.length ? cell(r[j]) : "";
    return out;
  });
}

/** Percentage label of a confidence level, e.g. 0.95 -> "95%", 0.975 -> "97.5%". */
export function levelLabel(level: number): string {
  // Six significant digits, or as many more as it takes not to round up to 100% (or down to 0%):
  // level=0.999999999999 is "99.9999999999%", never "lower 100%".
  for (let digits = 6; digits <= 17; digits++) {
    const pct = Number((level * 100).toPrecision(digits));
    if ((pct !== 100 || level === 1) && (pct !== 0 || level === 0)) return `${pct}%`;
  }
  return `${level * 100}%`;
}
