/**
 * numberTextLength: the payload guard sizes a number by the length of its shortest decimal text
 * without building the text. Reference: the ECMAScript Number::toString algorithm (ECMA-262,
 * section "Number::toString"), as the JavaScript engine running the tests implements it in String(x).
 */
import fc from "fast-check";
import { estimateBytes, numberTextLength } from "../../../src/functions/payload";

/** Many runs: the fast path must agree with String() on every double, not only on most. */
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

describe("estimateBytes with the fast number sizing", () => {
  test("matches the rule computed with String() on a block of full-precision numbers", () => {
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
    let expected = 2;
    for (const r of rows) {
      expected += 2;
      for (const v of r) expected += String(v).length + 1;
    }
    expect(estimateBytes(rows)).toBe(expected);
  });
});

describe("estimateBytes sizes every number as String() would", () => {
  test("for rows of arbitrary doubles (the inlined 17-digit path and the general one agree)", () => {
    fc.assert(
      fc.property(fc.array(fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { minLength: 1, maxLength: 8 }), { minLength: 1, maxLength: 8 }), (rows) => {
        let expected = 2;
        for (const r of rows) {
          expected += 2;
          for (const v of r) expected += String(v).length + 1;
        }
        return estimateBytes(rows) === expected;
      }),
      { numRuns: 5_000 },
    );
  });

  test("for rows of full-precision values between -10 and 10", () => {
    fc.assert(
      fc.property(fc.array(fc.array(fc.double({ min: -10, max: 10, noNaN: true }), { minLength: 1, maxLength: 8 }), { minLength: 1, maxLength: 8 }), (rows) => {
        let expected = 2;
        for (const r of rows) {
          expected += 2;
          for (const v of r) expected += String(v).length + 1;
        }
        return estimateBytes(rows) === expected;
      }),
      { numRuns: 5_000 },
    );
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
  const rule = (rows: number[][]) => rows.reduce((s, r) => s + 2 + r.reduce((t, v) => t + String(v).length + 1, 0), 2);

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
    expect(estimateBytes(rows)).toBe(rule(rows));
  });

  test("powers of two and their neighbours (a narrower gap below)", () => {
    const rows: number[][] = [];
    for (let e = -22; e <= 53; e++) rows.push([-1, 0, 1].map((s) => neighbour(2 ** e, s)));
    expect(estimateBytes(rows)).toBe(rule(rows));
  });
});
