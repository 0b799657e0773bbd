import * as fs from "fs";
import * as path from "path";
import {
  chiSquareSurvival,
  criticalZ,
  normalCdf,
  normalPdf,
  normalQuantile,
  normalUpperTail,
  regularizedGammaP,
  regularizedGammaQ,
  twoSidedPFromZ,
} from "../../../src/engine/distributions";
import { logGamma } from "../../../src/engine/numerics";

/** Reference values: R 4.2 stats (generator test/fixtures/binary/distributions.R). */
const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "../../fixtures/binary/distributions.json"), "utf8"));

/** The fixture holds 15 significant digits (jsonlite), and our series/continued fractions are
 * accurate to a few 1e-15 relative; 1e-12 leaves room for deep-tail rounding. */
const REL_TOL = 1e-12;
/** lgamma near its zeros (x = 1, 2) is judged on absolute error. */
const ABS_TOL_LGAMMA = 1e-13;

function close(got: number, expected: number, tol = REL_TOL): void {
  const err = Math.abs(got - expected);
  const scale = Math.abs(expected);
  // Below 1e-300 R's values are subnormal and the fixture rounds them to 0: judge absolutely.
  if (!(err <= tol * scale || (scale < 1e-300 && Math.abs(got) < 1e-300))) {
    throw new Error(`expected ${expected}, got ${got}, relative error ${err / scale} > ${tol}`);
  }
}

describe("normal distribution vs R pnorm/qnorm", () => {
  test.each(ref.normalCdf.map((r: { x: number; lower: number; upper: number }) => [r.x, r.lower, r.upper]) as [number, number, number][])(
    "cdf and upper tail at x = %p",
    (x, lower, upper) => {
      close(normalCdf(x as number), lower as number);
      close(normalUpperTail(x as number), upper as number);
    },
  );
  test.each(ref.normalQuantile.map((r: { p: number; q: number }) => [r.p, r.q]) as [number, number][])("quantile at p = %p", (p, q) => {
    close(normalQuantile(p as number), q as number);
  });
  test("quantile is -Infinity at 0, +Infinity at 1, 0 at 1/2, NaN outside", () => {
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(normalQuantile(0.5)).toBe(0);
    expect(normalQuantile(-0.1)).toBeNaN();
    expect(normalQuantile(NaN)).toBeNaN();
  });
  test("the density is 1/sqrt(2 pi) at 0 and symmetric", () => {
    close(normalPdf(0), 1 / Math.sqrt(2 * Math.PI), 1e-15);
    expect(normalPdf(1.3)).toBe(normalPdf(-1.3));
  });
  test("criticalZ(0.95) is the familiar 1.959963984540054", () => {
    close(criticalZ(0.95), 1.959963984540054, 1e-14);
  });
  test("two-sided p from z equals 2 * upper tail", () => {
    for (const z of [0, 0.5, -1.96, 3, -9, 25]) close(twoSidedPFromZ(z), 2 * normalUpperTail(Math.abs(z)));
    expect(twoSidedPFromZ(Infinity)).toBe(0);
    expect(twoSidedPFromZ(NaN)).toBeNaN();
  });
});

describe("chi-square survival vs R pchisq(lower.tail = FALSE)", () => {
  test.each(ref.chiSquareSurvival.map((r: { x: number; df: number; p: number }) => [r.x, r.df, r.p]) as [number, number, number][])(
    "x = %p, df = %p",
    (x, df, p) => {
      if ((p as number) < 1e-290) expect(chiSquareSurvival(x as number, df as number)).toBeLessThan(1e-280);
      else close(chiSquareSurvival(x as number, df as number), p as number);
    },
  );
  test("is 1 at x <= 0 and NaN for df <= 0", () => {
    expect(chiSquareSurvival(0, 3)).toBe(1);
    expect(chiSquareSurvival(-1, 3)).toBe(1);
    expect(chiSquareSurvival(1, 0)).toBeNaN();
  });
  test("P + Q = 1 on both sides of the series/continued-fraction switch", () => {
    for (const [a, x] of [[2, 2.9], [2, 3.1], [0.5, 1.4], [0.5, 1.6], [10, 30]]) {
      close(regularizedGammaP(a, x) + regularizedGammaQ(a, x), 1, 1e-14);
    }
  });
});

describe("logGamma vs R lgamma", () => {
  test.each(ref.logGamma.map((r: { x: number; value: number }) => [r.x, r.value]) as [number, number][])("x = %p", (x, v) => {
    const got = logGamma(x as number);
    expect(Math.abs(got - (v as number))).toBeLessThanOrEqual(Math.max(ABS_TOL_LGAMMA, REL_TOL * Math.abs(v as number)));
  });
});
