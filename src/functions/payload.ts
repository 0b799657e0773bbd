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
  /**
   * The part's estimateBytes, when already known (e.g. remembered from an earlier call on the same
   * content); checkPayload fills it in when it computes it.
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
const SPLIT = 134217729; // 2^27 + 1, Dekker's splitting constant
const BITS_F64 = new Float64Array(1);
const BITS_U32 = new Uint32Array(BITS_F64.buffer);

/** Decimal digits of a non-negative integer below 2^53. */
function integerDigits(x: number): number {
  let d = 1;
  while (d < 16 && x >= POW10[d]) d++;
  while (d <= 22 && x >= POW10[d]) d++;
  return d;
}

/** True when the decimal with `p` significant digits nearest to x (> 0, n = its decimal exponent) reads back as x. */
function roundTrips(x: number, p: number, n: number): boolean {
  const m = p - n;
  if (m >= 0) {
    const d = Math.round(x * POW10[m]);
    // d and 10^m are exact doubles, so the quotient is the correctly rounded value of the decimal.
    return d / POW10[m] === x;
  }
  const d = Math.round(x / POW10[-m]);
  return d * POW10[-m] === x;
}

/**
 * Length of String(x) for a finite number, without building the string: the count k of significant
 * digits of the shortest decimal that reads back as x and its exponent n give the length by the
 * ECMAScript Number::toString layout (ECMA-262, section Number::toString). k <= 15 is found by exact
 * scaling with the powers 10^0..10^22 (a correctly rounded product or quotient of exact operands is
 * what reading the decimal gives); 16 against 17 digits is decided by an error-free product
 * (T. J. Dekker, "A floating-point technique for extending the available precision", Numer. Math.
 * 18 (1971)) compared with half the spacing of doubles around x. Anything this cannot settle with a
 * clear margin (powers of two, exact ties, numbers outside 1e-6 .. 2^52) falls back to String(x).
 */
export function numberTextLength(x: number): number {
  const sign = x < 0 ? 1 : 0;
  const a = sign ? -x : x;
  if (a === 0) return 1; // "0" (also for -0)
  if (Number.isInteger(a)) {
    if (a <= 9007199254740992) return sign + integerDigits(a);
    return String(x).length;
  }
  if (!(a >= 1e-6 && a < 4503599627370496)) return String(x).length;
  // n: 10^(n-1) <= a < 10^n, with a in (1e-6, 2^52) so n is in -5 .. 16.
  let n = Math.floor(Math.log10(a)) + 1;
  if (n >= 0 && n <= 22 && a >= POW10[n]) n++;
  else if (n - 1 >= 0 && a < POW10[n - 1]) n--;
  else if (n - 1 < 0 && a * POW10[1 - n] < 1) n--;
  if (n < -5 || n > 16) return String(x).length;
  let k: number;
  let nOut = n;
  // Full-precision data mostly needs 17 digits: settle that first, with one error-free product.
  const sixteen = sixteenDigitsRoundTrip(a, n);
  if (sixteen === false) k = 17;
  else if (roundTrips(a, 15, n)) {
    // The smallest p in 1..15 that reads back (a p-digit decimal is also a (p+1)-digit one).
    let lo = 1;
    let hi = 15;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (roundTrips(a, mid, n)) hi = mid;
      else lo = mid + 1;
    }
    const m = lo - n;
    let d = m >= 0 ? Math.round(a * POW10[m]) : Math.round(a / POW10[-m]);
    const digits = integerDigits(d);
    nOut = n + (digits - lo);
    while (d % 10 === 0) d /= 10;
    k = integerDigits(d);
  } else if (sixteen === true) k = 16;
  else return String(x).length;
  return sign + layoutLength(k, nOut);
}

/** Whether a 16-digit decimal reads back as a (n as in numberTextLength), or null when too close to call. */
function sixteenDigitsRoundTrip(a: number, n: number): boolean | null {
  const m = 16 - n;
  if (m < 0 || m > 22) return null;
  BITS_F64[0] = a;
  const hiBits = BITS_U32[1];
  // A power of two has a narrower gap below it than above: leave it to String().
  if ((hiBits & 0xfffff) === 0 && BITS_U32[0] === 0) return null;
  const exponent = ((hiBits >>> 20) & 0x7ff) - 1075; // ulp(a) = 2^exponent
  if (exponent < -1074 + 52) return null;
  const b = POW10[m];
  // Error-free product a * 10^m = ph + pl (Dekker).
  const ph = a * b;
  let t = SPLIT * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLIT * b;
  const bh = t - (t - b);
  const bl = b - bh;
  const pl = ((ah * bh - ph) + ah * bl + al * bh) + al * bl;
  const r = Math.round(ph);
  if (r < 1e15 || r >= 1e16) return null;
  let frac = Math.abs((ph - r) + pl);
  if (frac > 0.5) frac = 1 - frac;
  // Half the spacing of doubles at a (2^(exponent - 1), built from its bits), scaled by 10^m.
  BITS_U32[0] = 0;
  BITS_U32[1] = (exponent - 1 + 1023) << 20;
  const half = BITS_F64[0] * b;
  if (Math.abs(frac - half) < 1e-6 * half) return null;
  return frac < half;
}

/** Length of Number::toString's text of k significant digits with decimal exponent n (no sign). */
function layoutLength(k: number, n: number): number {
  if (k <= n && n <= 21) return n;
  if (0 < n && n <= 21) return k + 1;
  if (-6 < n && n <= 0) return 2 - n + k;
  const e = Math.abs(n - 1);
  return k + (k > 1 ? 1 : 0) + 2 + (e >= 100 ? 3 : e >= 10 ? 2 : 1);
}

function cellBytes(v: unknown): number {
  if (v === null || v === undefined) return 5;
  if (typeof v === "number") return numberTextLength(v) + 1;
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
      // Full-precision data mostly needs 17 significant digits. That case is settled here, written
      // out in the loop so the number is never passed to a function (which would box it): n with
      // 10^(n-1) <= |x| < 10^n, then the 16-digit test of numberTextLength (error-free product
      // |x| * 10^(16-n) against half the spacing of doubles at |x|). Anything else: numberTextLength.
      const a = x < 0 ? -x : x;
      if (a >= 1e-6 && a < 4503599627370496) {
        BITS_F64[0] = a;
        const hiBits = BITS_U32[1];
        // From the binary exponent e2 (2^e2 <= a < 2^(e2+1)): n is floor(e2 log10 2) + 1 or one more.
        let n = Math.floor((((hiBits >>> 20) & 0x7ff) - 1023) * LOG10_2) + 1;
        if (n >= 0 ? a >= POW10F[n] : a * POW10F[-n] >= 1) n++;
        if (n >= -5 && n <= 16) {
          if ((hiBits & 0xfffff) !== 0 || BITS_U32[0] !== 0) {
            const exponent = ((hiBits >>> 20) & 0x7ff) - 1075;
            const b = POW10F[16 - n];
            const ph = a * b;
            let t = SPLIT * a;
            const ah = t - (t - a);
            const al = a - ah;
            t = SPLIT * b;
            const bh = t - (t - b);
            const bl = b - bh;
            const pl = ((ah * bh - ph) + ah * bl + al * bh) + al * bl;
            const r = Math.round(ph);
            if (r >= 1e15 && r < 1e16) {
              let frac = Math.abs((ph - r) + pl);
              if (frac > 0.5) frac = 1 - frac;
              BITS_U32[0] = 0;
              BITS_U32[1] = (exponent - 1 + 1023) << 20;
              const half = BITS_F64[0] * b;
              // 16 digits cannot read back, so 17 are needed: "d.ddd" (n > 0) or "0.00ddd" (n <= 0).
              if (frac > half + 1e-6 * half) {
                bytes += (x < 0 ? 1 : 0) + (n > 0 ? 18 : 19 - n) + 1;
                continue;
              }
              // 16 digits read back and 15 do not (exact scaling as in roundTrips): 16 are needed.
              if (frac < half - 1e-6 * half && n <= 15) {
                const m15 = 15 - n;
                if (Math.round(a * POW10F[m15]) / POW10F[m15] !== a) {
                  bytes += (x < 0 ? 1 : 0) + (n > 0 ? 17 : 18 - n) + 1;
                  continue;
                }
              }
            }
          }
        }
      }
      bytes += numberTextLength(x) + 1;
    }
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
  } else if (totalCells * MAX_NONTEXT_CELL_BYTES + outputBytes <= limit && !parts.some((p) => hasLongText(p.cells))) {
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
