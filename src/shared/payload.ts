/**
 * Payload guard: a custom-function call can carry about 5 MB (inputs and outputs together, per the
 * Office custom-functions documentation); whole-column references can exceed it and then fail in
 * ways the user cannot read. Before any work we estimate the call's size and, above the limit,
 * throw RANGE_TOO_LARGE pointing to the task pane (which reads large tables in chunks).
 *
 * Estimate rule (the size of the call written as JSON text, which is how values travel):
 *   - a number costs the length of its shortest decimal text plus 1 separator (e.g. "0.25," = 5),
 *     except that a number whose shortest text needs 16 or 17 significant digits (full double
 *     precision, e.g. a computed 0.30000000000000004 or a random draw) between 1e-6 and 1e15 is
 *     counted as if it needed 17: at most one byte more than its text (measured on the benchmark's
 *     full-precision normal draws: about 0.5 bytes per number, 2.6% of their JSON size). This keeps the estimate to a
 *     few operations per number (the 16-or-17 decision would need an error-free product per number);
 *   - a blank (null) costs 5 ("null,"), TRUE 5, FALSE 6;
 *   - text costs its length plus 3 (two quotes and a separator);
 *   - every row costs 2 more ("[" and "],").
 *   Outputs are estimated as their cell count times OUTPUT_BYTES_PER_CELL (a probability written with
 *   17 significant digits plus a separator) and added to the inputs.
 * The per-cell sizes are only computed when a cheap bound cannot decide: at 5 bytes per cell (the
 * least any cell costs) a call above the limit is rejected at once, and at 26 bytes per cell (the
 * most a number or blank costs: "-0.0000012345678901234567,") a call below it passes at once. The
 * fitting functions size labels and predictors in the pass that hashes them for the fit cache
 * (PAYLOAD_SIZER) and hand the sizes in as PayloadPart.bytes.
 */
import { problem } from "./messages";
import type { CellSizer } from "./fitCache";

/** About 5 MB per call (Office custom-functions documentation, "payload limit"). */
export const PAYLOAD_LIMIT_BYTES = 5_000_000;
/** Bytes per output cell in the estimate: "0.12345678901234567," is 20 characters. */
export const OUTPUT_BYTES_PER_CELL = 20;
const MIN_CELL_BYTES = 5;
const MAX_NONTEXT_CELL_BYTES = 26;

/** One argument of a call, for the estimate: its name (for the message) and its cells. */
export interface PayloadPart {
  argument: string;
  cells: unknown;
  /**
   * The part's estimateBytes, when already known (e.g. computed in the pass that hashes the cells,
   * with PAYLOAD_SIZER); checkPayload fills it in when it computes it.
   */
  bytes?: number;
}

function cellsIn(value: unknown): number {
  if (!Array.isArray(value)) return 1;
  let n = 0;
  for (const row of value) n += Array.isArray(row) ? row.length : 1;
  return n;
}

/** Exact powers of ten 10^0 .. 10^22 (every one is a double without rounding). */
const POW10: number[] = [];
for (let i = 0, p = 1; i <= 22; i++, p *= 10) POW10.push(p);
const POW10F = Float64Array.from(POW10);
const LOG10_2 = 0.3010299956639812;
const BITS_F64 = new Float64Array(1);
const BITS_U32 = new Uint32Array(BITS_F64.buffer);

/** Decimal digits of a non-negative integer below 2^53. */
function integerDigits(x: number): number {
  let d = 1;
  while (d < 16 && x >= POW10[d]) d++;
  while (d <= 22 && x >= POW10[d]) d++;
  return d;
}

/**
 * Length of String(x) (ECMA-262, Number::toString): counted for integers up to 2^53, built with
 * String() otherwise. The estimate rule's general way, for the numbers numberCost does not size
 * itself (zero, integers of 16 digits, and numbers written in exponent form).
 */
export function numberTextLength(x: number): number {
  const sign = x < 0 ? 1 : 0;
  const a = sign ? -x : x;
  if (a === 0) return 1; // "0" (also for -0)
  if (Number.isInteger(a) && a <= 9007199254740992) return sign + integerDigits(a);
  return String(x).length;
}

/** Length of Number::toString's text of k significant digits with decimal exponent n (no sign). */
function layoutLength(k: number, n: number): number {
  if (k <= n && n <= 21) return n;
  if (0 < n && n <= 21) return k + 1;
  if (-6 < n && n <= 0) return 2 - n + k;
  const e = Math.abs(n - 1);
  return k + (k > 1 ? 1 : 0) + 2 + (e >= 100 ? 3 : e >= 10 ? 2 : 1);
}

/**
 * Per binary exponent (the 11 exponent bits of a double): the decimal exponent n of the smallest
 * numbers in that binade (10^(n-1) <= 2^e < 10^n) and 10^n; a number of the binade has n or n + 1.
 */
const BINADE_N = new Int32Array(2048);
const BINADE_POW = new Float64Array(2048);
for (let be = 1; be < 2047; be++) {
  const n = Math.floor((be - 1023) * LOG10_2) + 1;
  BINADE_N[be] = n;
  BINADE_POW[be] = Number(`1e${n}`); // the double nearest 10^n, as reading "1e<n>" gives
}

/**
 * Bytes of a number (text plus separator) under the estimate rule, for 1e-6 <= a < 1e15 with a = |x|
 * and decimal exponent n (10^(n-1) <= a < 10^n, so -5 <= n <= 15). With m = 15 - n, the 15-digit
 * decimal nearest to a is d / 10^m, d = round(a 10^m): fl(a 10^m) is within 0.12 of the exact product,
 * and a decimal that reads back as a is within 0.12 of it, so when any decimal of 15 or fewer digits
 * reads back, d is that decimal (scaled), and d / 10^m (both exact doubles, the quotient correctly
 * rounded) reads back as a. Then the shortest text is d without its trailing zeros; otherwise the
 * shortest text has 16 or 17 digits and 17 are counted.
 */
function numberBytes(a: number, n: number, sign: number): number {
  const scale = POW10F[15 - n];
  // round(y) as floor(y + 0.5): exact for 0 <= y < 2^52, and cheaper than Math.round.
  const d = Math.floor(a * scale + 0.5);
  // No decimal of 15 or fewer digits reads back: counted as 17 digits, "d.ddd" (18 characters) for
  // n > 0, "0.00ddd" (19 - n) for n <= 0, written without a branch ((n - 1) >> 31 is -1 for n <= 0).
  if (d / scale !== a) return sign + 19 + ((1 - n) & ((n - 1) >> 31));
  // d is in [10^14, 10^15] (10^15 when a rounds up to the next power of ten).
  const digits = d >= 1e15 ? 16 : 15;
  return sign + layoutLength(digits - trailingZeros(d), n + digits - 15) + 1;
}

/** Trailing decimal zeros of an integer 0 < d < 2^53 (split in two parts below 10^8). */
function trailingZeros(d: number): number {
  const high = Math.floor(d / 1e8);
  const low = d - high * 1e8;
  let v = (low === 0 ? high : low) | 0; // below 10^8: an int32
  let z = low === 0 ? 8 : 0;
  while (v % 10 === 0) {
    v = (v / 10) | 0;
    z++;
  }
  return z;
}

/** Bytes of a number cell (text plus separator) under the estimate rule. */
function numberCost(x: number): number {
  // The sign and the decimal exponent from the bits (no data-dependent branch: the signs and sizes
  // of real data vary from cell to cell), then numberBytes; zero, tiny, huge and non-finite numbers
  // take the general way.
  BITS_F64[0] = x;
  const hi = BITS_U32[1];
  const be = (hi >>> 20) & 0x7ff;
  const a = Math.abs(x);
  const n = BINADE_N[be] + (a >= BINADE_POW[be] ? 1 : 0);
  if (a >= 1e-6 && a < 1e15) return numberBytes(a, n, hi >>> 31);
  return numberTextLength(x) + 1;
}

function cellBytes(v: unknown): number {
  if (v === null || v === undefined) return 5;
  if (typeof v === "number") return numberCost(v);
  if (typeof v === "boolean") return v ? 5 : 6;
  if (typeof v === "string") return v.length + 3;
  return String(v).length + 3;
}

/** Estimated JSON size in bytes of one argument (see the rule at the top of this file). */
export function estimateBytes(value: unknown): number {
  if (!Array.isArray(value)) return cellBytes(value);
  let bytes = 2;
  for (const row of value) {
    if (!Array.isArray(row)) {
      bytes += cellBytes(row);
      continue;
    }
    bytes += 2;
    for (let j = 0; j < row.length; j++) {
      const x: unknown = row[j];
      if (typeof x !== "number") {
        bytes += cellBytes(x);
        continue;
      }
      bytes += numberCost(x);
    }
  }
  return bytes;
}

/**
 * The estimate rule's cell sizes (numberCost for numbers, cellBytes for the rest), for
 * contentKeyAndSizes (src/shared/fitCache.ts): the pass that hashes a range for the fit cache also
 * gives its estimateBytes, so the range is read once for both.
 */
export const PAYLOAD_SIZER: CellSizer = { number: numberCost, other: cellBytes };

/**
 * Throw RANGE_TOO_LARGE when the call's estimated size (inputs plus `outputCells` output cells)
 * exceeds `limit`. The message names the largest argument.
 * @returns the estimated size in bytes (useful in tests and the workbench)
 */
export function checkPayload(parts: PayloadPart[], outputCells = 0, limit = PAYLOAD_LIMIT_BYTES): number {
  const cells = parts.map((p) => cellsIn(p.cells));
  return checkCounted(parts, cells, outputCells, limit);
}

/**
 * True when the cheapest bound (5 bytes per cell) already puts the call over `limit`: checkPayload
 * rejects such a call without looking at any value.
 */
export function surelyTooLarge(parts: PayloadPart[], outputCells = 0, limit = PAYLOAD_LIMIT_BYTES): boolean {
  let totalCells = 0;
  for (const p of parts) totalCells += cellsIn(p.cells);
  return totalCells * MIN_CELL_BYTES + outputCells * OUTPUT_BYTES_PER_CELL > limit;
}

function checkCounted(parts: PayloadPart[], cells: number[], outputCells: number, limit: number): number {
  const totalCells = cells.reduce((a, b) => a + b, 0);
  const outputBytes = outputCells * OUTPUT_BYTES_PER_CELL;
  let bytes: number;
  let sizes: number[] | null = null;
  if (totalCells * MIN_CELL_BYTES + outputBytes > limit) {
    bytes = totalCells * MIN_CELL_BYTES + outputBytes;
  } else if (cheaplyUnder(parts, totalCells, outputBytes, limit)) {
    return totalCells * MAX_NONTEXT_CELL_BYTES + outputBytes; // an upper bound, already under the limit
  } else {
    sizes = parts.map((p) => (p.bytes ??= estimateBytes(p.cells)));
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

/** The 26-bytes-per-cell bound is under the limit (and no text is longer than a number's text). */
function cheaplyUnder(parts: PayloadPart[], totalCells: number, outputBytes: number, limit: number): boolean {
  return totalCells * MAX_NONTEXT_CELL_BYTES + outputBytes <= limit && !parts.some((p) => hasLongText(p.cells));
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
