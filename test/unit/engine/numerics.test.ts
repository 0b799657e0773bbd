import { clippedLog, log1pExp, logGamma, logit, logSigmoid, logSumExp, sigmoid, softplus } from "../../../src/engine/numerics";

/** Double precision leaves a few ulps of rounding in these closed forms. */
const ULP_TOL = 1e-15;
/** 1 - sigmoid(x) is rounded once near 1, where one ulp is 2.2e-16. */
const ONE_ULP_AT_ONE = 2.3e-16;

function relErr(got: number, expected: number): number {
  return Math.abs(got - expected) / Math.max(Math.abs(expected), Number.MIN_VALUE);
}

describe("sigmoid", () => {
  test("is 1/2 at 0 and symmetric: sigmoid(-x) = 1 - sigmoid(x)", () => {
    expect(sigmoid(0)).toBe(0.5);
    for (const x of [0.1, 1, 5, 20]) expect(Math.abs(sigmoid(-x) - (1 - sigmoid(x)))).toBeLessThan(ONE_ULP_AT_ONE);
  });
  test("keeps relative accuracy for very negative inputs instead of rounding to 0 early", () => {
    expect(relErr(sigmoid(-700), Math.exp(-700))).toBeLessThan(1e-12);
    expect(sigmoid(-800)).toBeGreaterThanOrEqual(0);
    expect(sigmoid(800)).toBe(1);
  });
});

describe("log1pExp / softplus / logSigmoid", () => {
  test("log1pExp(0) is log 2 and softplus is the same function", () => {
    expect(relErr(log1pExp(0), Math.LN2)).toBeLessThan(ULP_TOL);
    expect(softplus(3.2)).toBe(log1pExp(3.2));
  });
  test("agrees with the naive formula where the naive formula is safe", () => {
    for (const x of [-5, -0.5, 0.5, 5, 17, 25, 30]) {
      expect(relErr(log1pExp(x), Math.log(1 + Math.exp(x)))).toBeLessThan(1e-13);
    }
  });
  test("stays finite and accurate where the naive formula overflows or underflows", () => {
    expect(log1pExp(1000)).toBe(1000);
    expect(relErr(log1pExp(-50), Math.exp(-50))).toBeLessThan(1e-15);
    expect(logSigmoid(-800)).toBe(-800);
    expect(relErr(logSigmoid(50), -Math.exp(-50))).toBeLessThan(1e-15);
  });
});

describe("logit", () => {
  test("inverts sigmoid", () => {
    for (const x of [-20, -3, 0, 0.7, 12]) expect(Math.abs(logit(sigmoid(x)) - x)).toBeLessThan(1e-9 * Math.max(1, Math.abs(x)));
  });
  test("is infinite at 0 and 1 and NaN outside [0, 1]", () => {
    expect(logit(0)).toBe(-Infinity);
    expect(logit(1)).toBe(Infinity);
    expect(logit(1.5)).toBeNaN();
    expect(logit(NaN)).toBeNaN();
  });
});

describe("logSumExp", () => {
  test("does not overflow for large inputs", () => {
    expect(relErr(logSumExp([1000, 1000]), 1000 + Math.LN2)).toBeLessThan(ULP_TOL);
  });
  test("works on a slice of a larger array", () => {
    const v = new Float64Array([99, 1, 2, 3, -99]);
    expect(relErr(logSumExp(v, 1, 4), Math.log(Math.exp(1) + Math.exp(2) + Math.exp(3)))).toBeLessThan(ULP_TOL);
  });
  test("is -Infinity for an empty slice or all -Infinity, NaN when a value is NaN", () => {
    expect(logSumExp([])).toBe(-Infinity);
    expect(logSumExp([-Infinity, -Infinity])).toBe(-Infinity);
    expect(logSumExp([1, NaN])).toBeNaN();
  });
});

describe("clippedLog", () => {
  test("clips 0 and 1 to eps and 1 - eps", () => {
    expect(clippedLog(0)).toBe(Math.log(1e-15));
    expect(clippedLog(1)).toBe(Math.log(1 - 1e-15));
    expect(clippedLog(0.5)).toBe(Math.log(0.5));
    expect(clippedLog(0, 1e-3)).toBe(Math.log(1e-3));
  });
  test("keeps NaN", () => {
    expect(clippedLog(NaN)).toBeNaN();
  });
});

describe("logGamma", () => {
  test("matches log factorials exactly enough", () => {
    let f = 1;
    expect(Math.abs(logGamma(1))).toBeLessThan(1e-14);
    expect(Math.abs(logGamma(2))).toBeLessThan(1e-14);
    for (let n = 2; n <= 30; n++) {
      f *= n;
      expect(relErr(logGamma(n + 1), Math.log(f))).toBeLessThan(1e-14);
    }
  });
  test("is log sqrt(pi) at 1/2 and NaN for non-positive input", () => {
    expect(relErr(logGamma(0.5), 0.5 * Math.log(Math.PI))).toBeLessThan(1e-14);
    expect(logGamma(0)).toBeNaN();
    expect(logGamma(-1)).toBeNaN();
  });
});
