/**
 * The payload guard's number sizing: numberTextLength (the exact length of the shortest decimal text,
 * the general way) and estimateBytes (exact up to 15 significant digits, 17 counted for 16 or 17).
 * Reference: the ECMAScript Number::toString algorithm (ECMA-262, section "Number::toString"), as the
 * JavaScript engine running the tests implements it in String(x).
 */
import fc from "fast-check";
import { estimateBytes, numberTextLength } from "../../../src/shared/payload";

/** Many runs: the sizing must agree with the rule on every double, not only on most. */
const RUNS = 20_000;

const sameAsString = (x: number) => expect(numberTextLength(x)).toBe(String(x).length);

describe("numberTextLength equals String(x).length", () => {
  test("for any finite double (arbitrary bit patterns)", () => {
    fc.assert(fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (x) => numberTextLength(x) === String(x).length), { numRuns: RUNS });
  });

  test("for full-precision values in the range of typical data (-1000 .. 1000)", () => {
    fc.assert(fc.property(fc.double({ min: -1000, max: 1000, noNaN: true }), (x) => numberTextLength(x) === String(x).length), { numRuns: RUNS });
  });

  test("for short decimals typed by hand (1 to 15 significant digits)", () => {
    fc.assert(
      fc.property(fc.integer({ min: -999999999, max: 999999999 }), fc.integer({ min: 0, max: 12 }), (m, e) => {
        const x = m / 10 ** e;
        return numberTextLength(x) === String(x).length;
      }),
      { numRuns: RUNS },
    );
  });

  test("for integers, including the largest safe integer and beyond", () => {
    for (const x of [0, 1, -1, 9, 10, 99, 100, 123456789, 2 ** 53, -(2 ** 53), 2 ** 53 + 2, 1e21, 1e22, -1e300]) sameAsString(x);
  });

  test("for negative zero (written 0)", () => {
    expect(numberTextLength(-0)).toBe(1);
  });

  test("at powers of ten and their neighbours (where the decimal exponent changes)", () => {
    for (let e = -10; e <= 22; e++) {
      const p = 10 ** e;
      for (const x of [p, p * (1 + 2 ** -52), p * (1 - 2 ** -53), -p]) sameAsString(x);
    }
  });

  test("at powers of two (where the spacing of doubles changes)", () => {
    for (let e = -40; e <= 60; e++) for (const x of [2 ** e, 2 ** e * (1 + 2 ** -52), 2 ** e * (1 - 2 ** -53)]) sameAsString(x);
  });

  test("for values written with 16 and with 17 significant digits", () => {
    for (const x of [0.1 + 0.2, 1 / 3, 2 / 3, Math.PI, Math.E, 0.30000000000000004, 123.45678901234567, 5e-324, 1.7976931348623157e308]) sameAsString(x);
  });

  test("for small numbers written in exponent form (below 1e-6)", () => {
    for (const x of [1e-7, 1.5e-7, -2.345e-9, 9.999999e-7, 1e-6, 1.0000000000000002e-6]) sameAsString(x);
  });
});

/** Significant digits of the shortest decimal text of x (String(x), ECMA-262 Number::toString). */
function significantDigits(x: number): number {
  const mantissa = String(Math.abs(x)).replace(/e.*$/, "").replace(".", "");
  return mantissa.replace(/^0+/, "").replace(/0+$/, "").length || 1;
}

/**
 * The estimate rule for one number cell, written with String(): its text plus a separator, where a
 * number between 1e-6 and 1e15 whose text has 16 or 17 significant digits counts 17.
 */
function ruleBytes(x: number): number {
  const a = Math.abs(x);
  const k = significantDigits(x);
  const extra = a >= 1e-6 && a < 1e15 && k >= 16 ? 17 - k : 0;
  return String(x).length + extra + 1;
}
const ruleOfRows = (rows: number[][]) => rows.reduce((s, r) => s + 2 + r.reduce((t, v) => t + ruleBytes(v), 0), 2);
const jsonOfRows = (rows: number[][]) => rows.reduce((s, r) => s + 2 + r.reduce((t, v) => t + String(v).length + 1, 0), 2);

describe("estimateBytes sizes numbers by the rule (exact to 15 digits, 17 counted for 16 or 17)", () => {
  test("a block of full-precision numbers of various magnitudes", () => {
    const rows: number[][] = [];
    let s = 12345;
    for (let i = 0; i < 200; i++) {
      const row: number[] = [];
      for (let j = 0; j < 10; j++) {
        s = (s * 1103515245 + 12345) >>> 0;
        row.push((s / 2 ** 32 - 0.5) * 10 ** ((j % 7) - 3));
      }
      rows.push(row);
    }
    expect(estimateBytes(rows)).toBe(ruleOfRows(rows));
  });

  test("rows of arbitrary doubles (arbitrary bit patterns)", () => {
    fc.assert(
      fc.property(fc.array(fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { minLength: 1, maxLength: 8 }), { minLength: 1, maxLength: 8 }), (rows) => estimateBytes(rows) === ruleOfRows(rows)),
      { numRuns: 5_000 },
    );
  });

  test("rows of full-precision values between -10 and 10", () => {
    fc.assert(
      fc.property(fc.array(fc.array(fc.double({ min: -10, max: 10, noNaN: true }), { minLength: 1, maxLength: 8 }), { minLength: 1, maxLength: 8 }), (rows) => estimateBytes(rows) === ruleOfRows(rows)),
      { numRuns: 5_000 },
    );
  });

  test("short decimals typed by hand (up to 15 significant digits) are sized exactly as their JSON text", () => {
    fc.assert(
      fc.property(fc.integer({ min: -999999999, max: 999999999 }), fc.integer({ min: 0, max: 14 }), fc.integer({ min: -4, max: 4 }), (m, e, shift) => {
        const x = (m / 10 ** e) * 10 ** shift;
        return significantDigits(x) > 15 || estimateBytes([[x]]) === jsonOfRows([[x]]);
      }),
      { numRuns: RUNS },
    );
  });

  test("never below the JSON text, and at most one byte per number above it", () => {
    fc.assert(
      fc.property(fc.array(fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { minLength: 1, maxLength: 8 }), { minLength: 1, maxLength: 8 }), (rows) => {
        const est = estimateBytes(rows);
        const json = jsonOfRows(rows);
        const numbers = rows.reduce((t, r) => t + r.length, 0);
        return est >= json && est <= json + numbers;
      }),
      { numRuns: 5_000 },
    );
  });

  test("values with 16 digits count one byte more than their text, values with 17 exactly their text", () => {
    // 0.1 + 0.2 is written with 17 significant digits, 1/3 with 16 (ECMA-262 shortest round trip).
    expect(String(0.1 + 0.2)).toBe("0.30000000000000004");
    expect(estimateBytes([[0.1 + 0.2]])).toBe(4 + "0.30000000000000004,".length);
    expect(String(1 / 3)).toBe("0.3333333333333333");
    expect(estimateBytes([[1 / 3]])).toBe(4 + "0.3333333333333333,".length + 1);
  });

  test("integers, zero, negative zero and numbers written in exponent form are sized exactly", () => {
    const rows = [[0, -0, 1, -1, 42, 123456789012345, 2 ** 53, 1e21, 1.5e-7, -2.345e-9, 1.7976931348623157e308, 5e-324]];
    expect(estimateBytes(rows)).toBe(jsonOfRows(rows.map((r) => r.map((v) => (Object.is(v, -0) ? 0 : v)))));
  });
});

describe("estimateBytes at the edges of its fast path", () => {
  /** The doubles `steps` units in the last place away from x (x > 0). */
  const neighbour = (x: number, steps: number) => {
    const f = new Float64Array([x]);
    const b = new BigInt64Array(f.buffer);
    b[0] += BigInt(steps);
    return f[0];
  };

  test("powers of ten and the doubles a few steps around them, either sign", () => {
    const rows: number[][] = [];
    for (let e = -8; e <= 17; e++) {
      const row: number[] = [];
      for (let s = -4; s <= 4; s++) {
        const x = neighbour(10 ** e, s);
        row.push(x, -x);
      }
      rows.push(row);
    }
    expect(estimateBytes(rows)).toBe(ruleOfRows(rows));
  });

  test("powers of two and their neighbours (a narrower gap below)", () => {
    const rows: number[][] = [];
    for (let e = -22; e <= 53; e++) rows.push([-1, 0, 1].map((s) => neighbour(2 ** e, s)));
    expect(estimateBytes(rows)).toBe(ruleOfRows(rows));
  });

  test("the most a number can cost: a negative 17-digit value just above 1e-6", () => {
    const x = -0.0000012345678901234567;
    expect(String(x)).toBe("-0.0000012345678901234567");
    expect(estimateBytes([[x]])).toBe(4 + 26);
  });
});
