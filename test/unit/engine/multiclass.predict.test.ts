/** predictMulticlass: probabilities, predicted class, margin, unusable rows, input checks. */
import { fitBinaryModel } from "../../../src/engine/binary";
import { OddsmithError } from "../../../src/engine/messages";
import { fitMulticlassModel } from "../../../src/engine/multiclass";
import { predictMulticlass } from "../../../src/engine/predictMulticlass";
import type { ModelFit } from "../../../src/engine/types";
import { designOf, loadMulticlassFixture } from "./multiclassHelpers";

/** Probabilities are computed through log-sum-exp: they sum to 1 to a few units of rounding. */
const SUM_TOL = 1e-14;

const three = ["a", "b", "c"];
const x = [0.3, 1.2, -0.5, 0.8, 2.1, -1.0, 0.1, 1.7, -0.2, 0.9, 0.5, -0.7];
const y = Int32Array.from([0, 1, 0, 1, 2, 0, 2, 2, 0, 1, 1, 0]);
const fit = fitMulticlassModel(designOf([x], ["x"]), y, three);

/** A hand-made reference-form fit with known coefficients, for exact expectations. */
function handFit(coefs: number[][], aliased = [false, false]): ModelFit {
  return { ...fit, coefficients: coefs.map((c) => Float64Array.from(c)), aliased };
}

describe("predictMulticlass", () => {
  test("probabilities are the softmax of the equations with the reference class at 0", () => {
    // eta_a = 0, eta_b = 1 + 2x, eta_c = -1 + x at x = 0.5: (0, 2, -0.5).
    const pred = predictMulticlass(handFit([[1, 2], [-1, 1]]), designOf([[0.5]], ["x"]));
    const e = [1, Math.exp(2), Math.exp(-0.5)];
    const s = e[0] + e[1] + e[2];
    expect(pred.probabilities[0][0]).toBeCloseTo(e[0] / s, 15);
    expect(pred.probabilities[1][0]).toBeCloseTo(e[1] / s, 15);
    expect(pred.probabilities[2][0]).toBeCloseTo(e[2] / s, 15);
    expect(pred.predicted[0]).toBe(1);
    expect(pred.margin[0]).toBeCloseTo(e[1] / s - e[0] / s, 15);
  });

  test("probabilities sum to 1 and the predicted class is the most probable on every row", () => {
    const pred = predictMulticlass(fit, designOf([x], ["x"]));
    for (let i = 0; i < x.length; i++) {
      const p = [0, 1, 2].map((k) => pred.probabilities[k][i]);
      expect(Math.abs(p[0] + p[1] + p[2] - 1)).toBeLessThan(SUM_TOL);
      expect(pred.predicted[i]).toBe(p.indexOf(Math.max(...p)));
      const sorted = [...p].sort((a, b) => b - a);
      expect(pred.margin[i]).toBeCloseTo(sorted[0] - sorted[1], 15);
    }
  });

  test("linear predictors of +/-1000 do not overflow: probabilities stay finite and sum to 1", () => {
    const pred = predictMulticlass(handFit([[0, 1000], [0, -1000]]), designOf([[1, -1, 0]], ["x"]));
    expect(pred.probabilities[1][0]).toBe(1);
    expect(pred.probabilities[2][1]).toBe(1);
    expect(pred.probabilities[0][2]).toBeCloseTo(1 / 3, 15);
    expect(pred.margin[2]).toBe(0);
  });

  test("a row with a missing value gets NaN probabilities and margin and predicted -1; other rows are unaffected", () => {
    const pred = predictMulticlass(fit, designOf([[0.2, NaN, 1.1]], ["x"]));
    expect([0, 1, 2].every((k) => Number.isNaN(pred.probabilities[k][1]))).toBe(true);
    expect(pred.predicted[1]).toBe(-1);
    expect(Number.isNaN(pred.margin[1])).toBe(true);
    const clean = predictMulticlass(fit, designOf([[0.2, 1.1]], ["x"]));
    expect(pred.probabilities[2][2]).toBe(clean.probabilities[2][1]);
    expect(pred.predicted[0]).toBe(clean.predicted[0]);
  });

  test("an aliased column is not used, so a missing value in it does not stop scoring", () => {
    const f = fitMulticlassModel(designOf([x, x.map((v) => 2 * v)], ["x", "2x"]), y, three);
    expect(f.aliased).toEqual([false, false, true]);
    const pred = predictMulticlass(f, designOf([[0.4], [NaN]], ["x", "2x"]));
    expect(pred.predicted[0]).toBeGreaterThanOrEqual(0);
    expect(Number.isFinite(pred.probabilities[0][0])).toBe(true);
  });

  test("a failed fit (no estimates) scores every row as NaN with predicted -1", () => {
    const iris = loadMulticlassFixture("iris.json");
    const f = fitMulticlassModel(designOf(iris.X, iris.columns), Int32Array.from(iris.y), iris.classes);
    expect(f.diagnostics[0].severity).toBe("error");
    const pred = predictMulticlass(f, designOf(iris.X, iris.columns));
    expect(Array.from(pred.predicted).every((k) => k === -1)).toBe(true);
    expect(Array.from(pred.probabilities[0]).every(Number.isNaN)).toBe(true);
  });

  test("a symmetric (penalized) fit scores with all K equations", () => {
    const f = fitMulticlassModel(designOf([x], ["x"]), y, three, { form: "symmetric", penalty: 1 });
    const pred = predictMulticlass(f, designOf([[0.5]], ["x"]));
    const eta = f.coefficients.map((b) => b[0] + b[1] * 0.5);
    const m = Math.max(...eta);
    const s = eta.reduce((acc, v) => acc + Math.exp(v - m), 0);
    for (let k = 0; k < 3; k++) expect(pred.probabilities[k][0]).toBeCloseTo(Math.exp(eta[k] - m) / s, 15);
  });

  test("a different number of columns than the model is COLUMN_COUNT_MISMATCH naming the model's columns", () => {
    try {
      predictMulticlass(fit, designOf([x, x], ["x", "z"]));
      throw new Error("no error");
    } catch (e) {
      expect((e as OddsmithError).code).toBe("COLUMN_COUNT_MISMATCH");
      expect((e as OddsmithError).message).toContain("trained on 1 (x)");
    }
  });

  test("a binary model is refused with BAD_OPTION_VALUE", () => {
    const bin = fitBinaryModel(designOf([x], ["x"]), Float64Array.from(y, (k) => (k === 1 ? 1 : 0)));
    expect(() => predictMulticlass(bin, designOf([x], ["x"]))).toThrow(OddsmithError);
  });
});
