import { fitBinaryModel } from "../../../src/engine/binary";
import { normalQuantile } from "../../../src/engine/distributions";
import { OddsmithError } from "../../../src/engine/messages";
import { logit, sigmoid } from "../../../src/engine/numerics";
import { predictBinary } from "../../../src/engine/predictBinary";
import { design, expectClose, loadFixture } from "./binaryHelpers";

/** R predict.glm(se.fit = TRUE) with glm epsilon 1e-14, printed to 15 digits. */
const R_TOL = 1e-8;
/** R's covariance comes from the IRLS weights one iteration before its final coefficients. */
const R_SE_TOL = 1e-7;
/** Stata 11 predictions were computed from single-precision data. */
const STATA_TOL = 2e-6;

const ref = loadFixture("glm-references.json");
const spector = loadFixture("spector.json");
const spX = design({ GPA: spector.data.GPA, TUCE: spector.data.TUCE, PSI: spector.data.PSI });
const spY = Float64Array.from(spector.data.GRADE);
const fit = fitBinaryModel(spX, spY);

describe("predictBinary on the Spector & Mazzeo data", () => {
  const pred = predictBinary(fit, spX);

  test("probabilities and linear predictor match Stata 11's phat and xb", () => {
    expectClose(pred.probabilities[1], spector.stata.phat, STATA_TOL, "phat");
    // xb sums terms of size ~13 held in single precision, so near 0 it is judged on an absolute scale.
    expectClose(pred.linearPredictor!, spector.stata.yhat, STATA_TOL, "xb", 1);
  });

  test("linear predictor and its standard error match R predict.glm(se.fit = TRUE)", () => {
    expectClose(pred.linearPredictor!, ref.spector.link, R_TOL, "link");
    expectClose(pred.linearPredictorSE!, ref.spector.linkSE, R_SE_TOL, "se.fit");
  });

  test("class probabilities sum to 1 and lie in [0, 1]", () => {
    for (let i = 0; i < spX.rows; i++) {
      const p0 = pred.probabilities[0][i];
      const p1 = pred.probabilities[1][i];
      expect(Math.abs(p0 + p1 - 1)).toBeLessThan(1e-15);
      expect(p1).toBeGreaterThanOrEqual(0);
      expect(p1).toBeLessThanOrEqual(1);
    }
  });

  test("the probability interval is eta +/- z se on the logit scale, mapped by the sigmoid", () => {
    const z = normalQuantile(0.975);
    for (let i = 0; i < spX.rows; i++) {
      const e = pred.linearPredictor![i];
      const s = pred.linearPredictorSE![i];
      expect(pred.lower![i]).toBeCloseTo(sigmoid(e - z * s), 14);
      expect(pred.upper![i]).toBeCloseTo(sigmoid(e + z * s), 14);
      expect(pred.lower![i]).toBeLessThan(pred.probabilities[1][i]);
      expect(pred.upper![i]).toBeGreaterThan(pred.probabilities[1][i]);
    }
    const narrow = predictBinary(fit, spX, { level: 0.5 });
    expect(narrow.upper![0] - narrow.lower![0]).toBeLessThan(pred.upper![0] - pred.lower![0]);
  });

  test("predicted class, margin and link margin follow the threshold (default 0.5)", () => {
    for (let i = 0; i < spX.rows; i++) {
      const p = pred.probabilities[1][i];
      expect(pred.predicted[i]).toBe(p >= 0.5 ? 1 : 0);
      expect(pred.margin[i]).toBeCloseTo(Math.abs(p - 0.5), 15);
      expect(pred.linkMargin![i]).toBeCloseTo(Math.abs(pred.linearPredictor![i]), 14);
    }
    const t = predictBinary(fit, spX, { threshold: 0.2 });
    for (let i = 0; i < spX.rows; i++) {
      const p = t.probabilities[1][i];
      expect(t.predicted[i]).toBe(p >= 0.2 ? 1 : 0);
      expect(t.margin[i]).toBeCloseTo(Math.abs(p - 0.2), 15);
      expect(t.linkMargin![i]).toBeCloseTo(Math.abs(t.linearPredictor![i] - logit(0.2)), 13);
    }
  });

  test("an offset shifts the linear predictor row by row", () => {
    const off = new Float64Array(spX.rows).fill(0.7);
    const shifted = predictBinary(fit, spX, { offset: off });
    for (let i = 0; i < spX.rows; i++) expect(shifted.linearPredictor![i]).toBeCloseTo(pred.linearPredictor![i] + 0.7, 13);
  });
});

describe("predictBinary edge cases", () => {
  test("a row with a NaN predictor gets NaN everywhere and predicted = -1; other rows are scored", () => {
    const X = design({ GPA: [3, NaN, 2.5], TUCE: [20, 22, 25], PSI: [1, 0, 0] });
    const pr = predictBinary(fit, X);
    expect(pr.predicted[1]).toBe(-1);
    for (const v of [pr.probabilities[0][1], pr.probabilities[1][1], pr.linearPredictor![1], pr.linearPredictorSE![1], pr.lower![1], pr.upper![1], pr.margin[1], pr.linkMargin![1]]) {
      expect(v).toBeNaN();
    }
    expect(pr.predicted[0]).not.toBe(-1);
    expect(pr.probabilities[1][2]).toBeGreaterThan(0);
  });

  test("a NaN offset makes only that row unscorable", () => {
    const X = design({ GPA: [3, 3], TUCE: [20, 20], PSI: [1, 1] });
    const pr = predictBinary(fit, X, { offset: Float64Array.of(0, NaN) });
    expect(pr.predicted[1]).toBe(-1);
    expect(pr.probabilities[1][0]).toBeGreaterThan(0);
  });

  test("a different number of columns than the model is refused with COLUMN_COUNT_MISMATCH", () => {
    const X = design({ GPA: [3], TUCE: [20] });
    expect(() => predictBinary(fit, X)).toThrow(OddsmithError);
    try {
      predictBinary(fit, X);
    } catch (e) {
      expect((e as OddsmithError).code).toBe("COLUMN_COUNT_MISMATCH");
      expect((e as OddsmithError).message).toContain("GPA, TUCE, PSI");
    }
  });

  test("a threshold outside (0, 1) is refused with BAD_OPTION_VALUE", () => {
    expect(() => predictBinary(fit, spX, { threshold: 1 })).toThrow(/threshold/);
    expect(() => predictBinary(fit, spX, { threshold: 0 })).toThrow(OddsmithError);
  });

  test("extreme predictors still give probabilities in [0, 1] and finite margins", () => {
    const X = design({ GPA: [1e6, -1e6], TUCE: [0, 0], PSI: [0, 0] });
    const pr = predictBinary(fit, X);
    expect(pr.probabilities[1][0]).toBe(1);
    expect(pr.probabilities[1][1]).toBe(0);
    expect(pr.predicted[0]).toBe(1);
    expect(pr.predicted[1]).toBe(0);
    expect(pr.margin[0]).toBe(0.5);
  });
});

describe("predictBinary with special fits", () => {
  const wd = ref.weighted.data as { x1: number; x2: number; y: number }[];
  const X2 = design({ x1: wd.map((r) => r.x1), x2: wd.map((r) => r.x2) });
  const y2 = Float64Array.from(wd.map((r) => r.y));

  test("an aliased term is ignored: same predictions and SEs as the fit without it", () => {
    const X3 = design({ x1: X2.columns[0], x2: X2.columns[1], x3: wd.map((r) => r.x1 + 2 * r.x2) });
    const withAlias = fitBinaryModel(X3, y2);
    const without = fitBinaryModel(X2, y2);
    const a = predictBinary(withAlias, X3);
    const b = predictBinary(without, X2);
    expectClose(a.linearPredictor!, b.linearPredictor!, 1e-10, "eta", 1e-6);
    expectClose(a.linearPredictorSE!, b.linearPredictorSE!, 1e-8, "se", 1e-6);
  });

  test("a row with zero weight is left out of the fit but still scored", () => {
    const w = new Float64Array(y2.length).fill(1);
    w[0] = 0;
    const fitW = fitBinaryModel(X2, y2, { weights: w });
    const pr = predictBinary(fitW, X2);
    expect(pr.predicted[0]).not.toBe(-1);
    expect(pr.probabilities[1][0]).toBeGreaterThan(0);
    expect(fitW.rowsUsed).toBe(y2.length - 1);
  });

  test("a penalized fit scores rows but has NaN standard errors and intervals (no covariance)", () => {
    const pen = fitBinaryModel(X2, y2, { penalty: 2 });
    const pr = predictBinary(pen, X2);
    expect(Number.isFinite(pr.probabilities[1][0])).toBe(true);
    expect(pr.linearPredictorSE![0]).toBeNaN();
    expect(pr.lower![0]).toBeNaN();
    expect(pr.predicted[0]).not.toBe(-1);
  });

  test("a separated unpenalized fit has no estimate, so every row is unscorable (-1)", () => {
    const sep = fitBinaryModel(design({ x: [1, 2, 3, 4] }), Float64Array.of(0, 0, 1, 1));
    const pr = predictBinary(sep, design({ x: [1.5, 3.5] }));
    expect(Array.from(pr.predicted)).toEqual([-1, -1]);
    expect(pr.probabilities[1][0]).toBeNaN();
  });
});
