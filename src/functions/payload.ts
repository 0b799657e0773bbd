/**
 * Payload guard: a custom-function call can carry about 5 MB (inputs and outputs together, per the
 * Office custom-functions documentation); whole-column references can exceed it and then fail in
 * ways the user cannot read. Before any work we estimate the call's size and, above the limit,
 * throw RANGE_TOO_LARGE pointing to the task pane (which reads large tables in chunks).
 *
 * Estimate rule (the size of the call written as JSON text, which is how values travel):
 *   - a number costs the length of its shortest decimal text plus 1 separator (e.g. "0.25," = 5);
 *   - a blank (null) costs 5 ("null,"), TRUE 5, FALSE 6;
 *   - text costs its length plus 3 (two quotes and a separator);
 *   - every row costs 2 more ("[" and "],").
 *   Outputs are estimated as their cell count times OUTPUT_BYTES_PER_CELL (a probability written with
 *   17 significant digits plus a separator) and added to the inputs.
 * The exact per-number text is only computed when a cheap bound cannot decide: at 5 bytes per cell
 * (the least any cell costs) a call above the limit is rejected at once, and at 25 bytes per cell
 * (the most a number or blank costs) a call below it passes at once.
 */
import { problem } from "../engine/messages";

/** About 5 MB per call (Office custom-functions documentation, "payload limit"). */
export const PAYLOAD_LIMIT_BYTES = 5_000_000;
/** Bytes per output cell in the estimate: "0.12345678901234567," is 20 characters. */
export const OUTPUT_BYTES_PER_CELL = 20;
const MIN_CELL_BYTES = 5;
const MAX_NONTEXT_CELL_BYTES = 25;

/** One argument of a call, for the estimate: its name (for the message) and its cells. */
export interface PayloadPart {
  argument: string;
  cells: unknown;
}

function cellsIn(value: unknown): number {
  if (!Array.isArray(value)) return 1;
  let n = 0;
  for (const row of value) n += Array.isArray(row) ? row.length : 1;
  return n;
}

function cellBytes(v: unknown): number {
  if (v === null || v === undefined) return 5;
  if (typeof v === "number") return String(v).length + 1;
  if (typeof v === "boolean") return v ? 5 : 6;
  if (typeof v === "string") return v.length + 3;
  return String(v).length + 3;
}

/** Estimated JSON size in bytes of one argument (see the rule at the top of this file). */
export function estimateBytes(value: unknown): number {
  if (!Array.isArray(value)) return cellBytes(value);
  let bytes = 2;
  for (const row of value) {
    if (Array.isArray(row)) {
      bytes += 2;
      for (const v of row) bytes += cellBytes(v);
    } else bytes += cellBytes(row);
  }
  return bytes;
}

/**
 * Throw RANGE_TOO_LARGE when the call's estimated size (inputs plus `outputCells` output cells)
 * exceeds `limit`. The message names the largest argument.
 * @returns the estimated size in bytes (useful in tests and the workbench)
 */
export function checkPayload(parts: PayloadPart[], outputCells = 0, limit = PAYLOAD_LIMIT_BYTES): number {
  const cells = parts.map((p) => cellsIn(p.cells));
  const totalCells = cells.reduce((a, b) => a + b, 0);
  const outputBytes = outputCells * OUTPUT_BYTES_PER_CELL;
  let bytes: number;
  let sizes: number[] | null = null;
  if (totalCells * MIN_CELL_BYTES + outputBytes > limit) {
    bytes = totalCells * MIN_CELL_BYTES + outputBytes;
  } else if (totalCells * MAX_NONTEXT_CELL_BYTES + outputBytes <= limit && !parts.some((p) => hasLongText(p.cells))) {
    return totalCells * MAX_NONTEXT_CELL_BYTES + outputBytes; // an upper bound, already under the limit
  } else {
    sizes = parts.map((p) => estimateBytes(p.cells));
    bytes = sizes.reduce((a, b) => a + b, 0) + outputBytes;
  }
  if (bytes > limit) {
    let largest = 0;
    const weight = sizes ?? cells;
    for (let i = 1; i < parts.length; i++) if (weight[i] > weight[largest]) largest = i;
    throw problem("RANGE_TOO_LARGE", {
      argument: parts[largest]?.argument ?? "input",
      cells: cells[largest].toLocaleString("en-US"),
      limit: `about ${Math.round(limit / 1_000_000)} MB per call`,
    });
  }
  return bytes;
}

function hasLongText(value: unknown): boolean {
  if (typeof value === "string") return true;
  if (!Array.isArray(value)) return false;
  for (const row of value) {
    if (Array.isArray(row)) {
      for (const v of row) if (typeof v === "string" && v.length > MAX_NONTEXT_CELL_BYTES - 3) return true;
    } else if (typeof row === "string" && row.length > MAX_NONTEXT_CELL_BYTES - 3) return true;
  }
  return false;
}
