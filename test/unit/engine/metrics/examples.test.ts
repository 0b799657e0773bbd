/**
 * The @example of every metric's JSDoc, checked (the values there are worked out by hand), plus the
 * K = 2 agreements between the binary and multi-class forms.
 */
import {
  accuracy,
  brierScore,
  calibrationSlope,
  calibrationTable,
  confusionCounts,
  confusionMatrix,
  hosmerLemeshow,
  logLoss,
  multiclassAccuracy,
  multiclassBrierScore,
  multiclassLogLoss,
  rocAuc,
  rocCurve,
} from "../../../../src/engine/metrics";
import { expectClose, f64 } from "./close";

/** A few floating-point operations on hand-checkable numbers. */
const HAND_REL_TOL = 1e-14;

test("logLoss example: (-ln 0.8 - ln 0.6) / 2", () => {
  expectClose(logLoss(f64([1, 0]), f64([0.8, 0.4])).value, (-Math.log(0.8) - Math.log(0.6)) / 2, HAND_REL_TOL, "log-loss");
});

test("multiclassLogLoss example: (-ln 0.5 - ln 0.6) / 2", () => {
  const r = multiclassLogLoss(Int32Array.from([0, 2]), [f64([0.5, 0.2]), f64([0.3, 0.2]), f64([0.2, 0.6])]);
  expectClose(r.value, (-Math.log(0.5) - Math.log(0.6)) / 2, HAND_REL_TOL, "log-loss");
});

test("brierScore example: (0.2^2 + 0.4^2) / 2 = 0.1", () => {
  expectClose(brierScore(f64([1, 0]), f64([0.8, 0.4])).value, 0.1, HAND_REL_TOL, "Brier");
});

test("multiclassBrierScore example: 0.3^2 + 0.2^2 + 0.1^2 = 0.14", () => {
  expectClose(multiclassBrierScore(Int32Array.from([0]), [f64([0.7]), f64([0.2]), f64([0.1])]).value, 0.14, HAND_REL_TOL, "Brier");
});

test("confusionCounts and accuracy example: one of each cell, every rate 0.5", () => {
  const y = f64([1, 1, 0, 0]);
  const p = f64([0.9, 0.4, 0.6, 0.1]);
  const c = confusionCounts(y, p);
  expect([c.truePositives, c.falseNegatives, c.falsePositives, c.trueNegatives]).toEqual([1, 1, 1, 1]);
  expect([c.sensitivity, c.specificity, c.precision, c.negativePredictiveValue, c.f1, c.accuracy]).toEqual([0.5, 0.5, 0.5, 0.5, 0.5, 0.5]);
  expect(accuracy(y, p).value).toBe(0.5);
});

test("confusionCounts at threshold 0.05 predicts every row positive: NPV undefined, F1 = 2/3", () => {
  const c = confusionCounts(f64([1, 1, 0, 0]), f64([0.9, 0.4, 0.6, 0.1]), { threshold: 0.05 });
  expect([c.truePositives, c.falsePositives, c.trueNegatives, c.falseNegatives]).toEqual([2, 2, 0, 0]);
  expect(c.negativePredictiveValue).toBeNaN();
  expect(c.specificity).toBe(0);
  expectClose(c.f1, 2 / 3, HAND_REL_TOL, "F1");
  expect(c.diagnostics.map((d) => d.code)).toEqual(["RATE_UNDEFINED"]);
});

test("confusionMatrix and multiclassAccuracy example: [[1, 0], [1, 1]], accuracy 2/3", () => {
  const c = Int32Array.from([0, 1, 1]);
  const P = [f64([0.9, 0.6, 0.2]), f64([0.1, 0.4, 0.8])];
  expect(confusionMatrix(c, P).counts.map((r) => Array.from(r))).toEqual([[1, 0], [1, 1]]);
  expectClose(multiclassAccuracy(c, P).value, 2 / 3, HAND_REL_TOL, "accuracy");
});

test("rocAuc example: 3 of 4 pairs ordered correctly", () => {
  expect(rocAuc(f64([0, 0, 1, 1]), f64([0.1, 0.4, 0.35, 0.8])).auc).toBe(0.75);
});

test("rocCurve example: a tie moves the curve diagonally", () => {
  const c = rocCurve(f64([0, 1, 1]), f64([0.2, 0.2, 0.9]));
  expect(Array.from(c.thresholds)).toEqual([Infinity, 0.9, 0.2]);
  expect(Array.from(c.truePositiveRate)).toEqual([0, 0.5, 1]);
  expect(Array.from(c.falsePositiveRate)).toEqual([0, 0, 1]);
});

test("calibrationTable example: two groups split at the median", () => {
  const t = calibrationTable(f64([0, 0, 1, 1]), f64([0.1, 0.3, 0.6, 0.9]), { groups: 2 });
  expect(t.groups.map((g) => [g.lower, g.upper, g.rows, g.observed])).toEqual([[0.1, 0.3, 2, 0], [0.6, 0.9, 2, 2]]);
  expectClose(t.groups[0].expected, 0.4, HAND_REL_TOL, "expected 1");
  expectClose(t.groups[1].expected, 1.5, HAND_REL_TOL, "expected 2");
  expectClose(t.groups[1].meanPredicted, 0.75, HAND_REL_TOL, "mean predicted");
});

/** Values printed by R 4.2.2 with 7 significant digits (see the JSDoc examples). */
const R_PRINTED_7_DIGITS = 5e-7;
const exampleY = Float64Array.of(0, 0, 1, 0, 1, 1, 0, 1, 1, 1);
const exampleP = Float64Array.of(0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.85, 0.9);

test("hosmerLemeshow example: five groups of two, statistic 3.139488 on 5 df, p 0.6784909 as computed by hand in R", () => {
  const r = hosmerLemeshow(exampleY, exampleP, { groups: 5, sample: "external" });
  expect(r.groups.map((g) => [g.lower, g.upper, g.rows, g.observed])).toEqual([
    [0.1, 0.2, 2, 0],
    [0.3, 0.4, 2, 1],
    [0.5, 0.6, 2, 2],
    [0.7, 0.8, 2, 1],
    [0.85, 0.9, 2, 2],
  ]);
  expect(r.df).toBe(5);
  expectClose(r.statistic, 3.139488, R_PRINTED_7_DIGITS, "statistic");
  expectClose(r.p, 0.6784909, R_PRINTED_7_DIGITS, "p");
  // 10 rows cannot give expected counts of 5: the test says its p-value is doubtful
  expect(r.diagnostics.map((d) => d.code)).toEqual(["SMALL_EXPECTED_COUNTS"]);
});

test("calibrationSlope example: slope 1.192001 and calibration-in-the-large 0.370633 as R's glm", () => {
  const r = calibrationSlope(exampleY, exampleP);
  expectClose(r.slope.estimate, 1.192001, R_PRINTED_7_DIGITS, "slope");
  expectClose(r.interceptWithSlope.estimate, 0.385281, R_PRINTED_7_DIGITS, "intercept of slope model");
  expectClose(r.intercept.estimate, 0.370633, R_PRINTED_7_DIGITS, "calibration-in-the-large");
});

describe("binary and multi-class forms agree for K = 2", () => {
  const y = f64([1, 0, 1, 1, 0]);
  const p = f64([0.7, 0.2, 0.45, 0.9, 0.6]);
  const classes = Int32Array.from(y);
  const P = [f64(Array.from(p, (v) => 1 - v)), p];
  const w = f64([1, 2, 0.5, 1, 3]);

  test("log-loss is the same", () => {
    expectClose(multiclassLogLoss(classes, P, { weights: w }).value, logLoss(y, p, { weights: w }).value, HAND_REL_TOL, "log-loss");
  });

  test("the multi-class Brier score is twice the binary one (sum over both classes)", () => {
    expectClose(multiclassBrierScore(classes, P, { weights: w }).value, 2 * brierScore(y, p, { weights: w }).value, HAND_REL_TOL, "Brier");
  });

  test("argmax accuracy equals binary accuracy at 0.5 when no probability is exactly 0.5", () => {
    expect(multiclassAccuracy(classes, P, { weights: w }).value).toBe(accuracy(y, p, { weights: w }).value);
  });
});
