/**
 * Binary and multi-class metrics against scikit-learn 1.2.1 (fixture
 * test/fixtures/metrics/sklearn-metrics.json, written by sklearn-metrics.py next to it, seed 20261201).
 */
import fixture from "../../../fixtures/metrics/sklearn-metrics.json";
import { accuracy, brierScore, confusionCounts, confusionMatrix, logLoss, multiclassAccuracy, multiclassBrierScore, multiclassLogLoss, rocAuc, rocCurve } from "../../../../src/engine/metrics";
import { expectAllClose, expectClose, f64 } from "./close";

/** Same formulas in double precision; only the order of summation differs (200 rows). */
const SAME_FORMULA_REL_TOL = 1e-12;

type BinaryRegime = typeof fixture.binary_smooth;
const regimes: [string, BinaryRegime][] = [
  ["probabilities inside (0.01, 0.99)", fixture.binary_smooth],
  ["probabilities rounded to one decimal (many ties)", fixture.binary_ties],
];

describe.each(regimes)("binary metrics match scikit-learn 1.2.1 — %s", (_name, r) => {
  const y = f64(r.labels);
  const p = f64(r.probabilities);
  const w = f64(r.weights);

  test("log-loss, unweighted and weighted, equals sklearn.metrics.log_loss(eps=1e-15)", () => {
    expectClose(logLoss(y, p).value, r.log_loss, SAME_FORMULA_REL_TOL, "log-loss");
    expectClose(logLoss(y, p, { weights: w }).value, r.log_loss_weighted, SAME_FORMULA_REL_TOL, "weighted log-loss");
  });

  test("Brier score, unweighted and weighted, equals sklearn.metrics.brier_score_loss", () => {
    expectClose(brierScore(y, p).value, r.brier, SAME_FORMULA_REL_TOL, "Brier");
    expectClose(brierScore(y, p, { weights: w }).value, r.brier_weighted, SAME_FORMULA_REL_TOL, "weighted Brier");
  });

  test("ROC AUC, unweighted and weighted, equals sklearn.metrics.roc_auc_score (ties count one half)", () => {
    expectClose(rocAuc(y, p).auc, r.roc_auc, SAME_FORMULA_REL_TOL, "AUC");
    expectClose(rocAuc(y, p, { weights: w }).auc, r.roc_auc_weighted, SAME_FORMULA_REL_TOL, "weighted AUC");
  });

  test("ROC curve points equal sklearn.metrics.roc_curve(drop_intermediate=False) after its first point", () => {
    const c = rocCurve(y, p);
    expect(c.thresholds[0]).toBe(Infinity);
    expectAllClose(c.thresholds.subarray(1), r.roc_curve.thresholds, 0, "thresholds");
    expectAllClose(c.truePositiveRate, r.roc_curve.tpr, SAME_FORMULA_REL_TOL, "TPR");
    expectAllClose(c.falsePositiveRate, r.roc_curve.fpr, SAME_FORMULA_REL_TOL, "FPR");
  });

  test("weighted ROC curve points equal sklearn's (both leave rows of weight 0 out)", () => {
    const c = rocCurve(y, p, { weights: w });
    expectAllClose(c.thresholds.subarray(1), r.roc_curve_weighted.thresholds, 0, "thresholds");
    expectAllClose(c.truePositiveRate, r.roc_curve_weighted.tpr, SAME_FORMULA_REL_TOL, "TPR");
    expectAllClose(c.falsePositiveRate, r.roc_curve_weighted.fpr, SAME_FORMULA_REL_TOL, "FPR");
  });

  test.each([0.5, 0.3])("confusion counts, accuracy, precision, recall and F1 at threshold %s equal sklearn's", (t) => {
    const key = String(t) as "0.5" | "0.3";
    const rr = r as unknown as Record<string, number & number[][]>;
    const c = confusionCounts(y, p, { threshold: t });
    // sklearn layout for labels [0, 1]: [[TN, FP], [FN, TP]]
    expect([[c.trueNegatives, c.falsePositives], [c.falseNegatives, c.truePositives]]).toEqual(rr[`confusion_${key}`]);
    const cw = confusionCounts(y, p, { threshold: t, weights: w });
    expect([[cw.trueNegatives, cw.falsePositives], [cw.falseNegatives, cw.truePositives]]).toEqual(rr[`confusion_weighted_${key}`]);
    expectClose(c.accuracy, rr[`accuracy_${key}`], SAME_FORMULA_REL_TOL, "accuracy");
    expectClose(accuracy(y, p, { threshold: t }).value, rr[`accuracy_${key}`], SAME_FORMULA_REL_TOL, "accuracy()");
    expectClose(accuracy(y, p, { threshold: t, weights: w }).value, rr[`accuracy_weighted_${key}`], SAME_FORMULA_REL_TOL, "weighted accuracy");
    expectClose(c.precision, rr[`precision_${key}`], SAME_FORMULA_REL_TOL, "precision");
    expectClose(c.sensitivity, rr[`recall_${key}`], SAME_FORMULA_REL_TOL, "recall");
    expectClose(c.f1, rr[`f1_${key}`], SAME_FORMULA_REL_TOL, "F1");
    expectClose(cw.f1, rr[`f1_weighted_${key}`], SAME_FORMULA_REL_TOL, "weighted F1");
  });
});

describe("log-loss where clipping decides the value (probabilities exactly 0 and 1)", () => {
  const r = fixture.binary_clip;
  const y = f64(r.labels);
  const p = f64(r.probabilities);

  test("equals the observed-class clip computed by hand with numpy", () => {
    expectClose(logLoss(y, p).value, r.log_loss_observed_class_clip_numpy_by_hand, SAME_FORMULA_REL_TOL, "clipped log-loss");
  });

  test("differs from sklearn's eps=1e-15 value only by its floor 1 - (1 - 1e-15) for the negative row at p = 1", () => {
    // sklearn clips p, then uses 1 - p: the negative row with p = 1 gets 1 - (1 - 1e-15) = 9.992e-16
    // instead of 1e-15. One such row among 8.
    const sklearnFloor = 1 - (1 - 1e-15);
    const shift = (Math.log(1e-15) - Math.log(sklearnFloor)) / y.length;
    expectClose(logLoss(y, p).value + shift, r["log_loss_eps_1e-15"], SAME_FORMULA_REL_TOL, "shifted log-loss");
  });

  test("reproduces sklearn's default (eps = machine epsilon) when given that eps", () => {
    // With eps = 2.22e-16, 1 - (1 - eps) is exactly eps, so both clipping conventions coincide.
    expectClose(logLoss(y, p, { eps: r.machine_epsilon }).value, r.log_loss_eps_auto, SAME_FORMULA_REL_TOL, "eps=auto");
  });
});

describe("multi-class metrics match scikit-learn 1.2.1 (150 rows, 4 classes, weights 0..3)", () => {
  const r = fixture.multiclass;
  const y = Int32Array.from(r.classes);
  const P = r.probabilities.map((col) => f64(col));
  const w = f64(r.weights);

  test("log-loss equals sklearn.metrics.log_loss, unweighted and weighted", () => {
    expectClose(multiclassLogLoss(y, P).value, r.log_loss, SAME_FORMULA_REL_TOL, "log-loss");
    expectClose(multiclassLogLoss(y, P, { weights: w }).value, r.log_loss_weighted, SAME_FORMULA_REL_TOL, "weighted log-loss");
  });

  test("Brier score (sum over classes) equals the numpy computation by hand", () => {
    expectClose(multiclassBrierScore(y, P).value, r.brier_numpy_by_hand, SAME_FORMULA_REL_TOL, "Brier");
    expectClose(multiclassBrierScore(y, P, { weights: w }).value, r.brier_weighted_numpy_by_hand, SAME_FORMULA_REL_TOL, "weighted Brier");
  });

  test("argmax confusion matrix equals sklearn.metrics.confusion_matrix (rows observed, columns predicted)", () => {
    expect(confusionMatrix(y, P).counts.map((row) => Array.from(row))).toEqual(r.confusion);
    expect(confusionMatrix(y, P, { weights: w }).counts.map((row) => Array.from(row))).toEqual(r.confusion_weighted);
  });

  test("accuracy equals sklearn.metrics.accuracy_score, unweighted and weighted", () => {
    expectClose(multiclassAccuracy(y, P).value, r.accuracy, SAME_FORMULA_REL_TOL, "accuracy");
    expectClose(multiclassAccuracy(y, P, { weights: w }).value, r.accuracy_weighted, SAME_FORMULA_REL_TOL, "weighted accuracy");
    expectClose(confusionMatrix(y, P, { weights: w }).accuracy, r.accuracy_weighted, SAME_FORMULA_REL_TOL, "matrix accuracy");
  });
});
