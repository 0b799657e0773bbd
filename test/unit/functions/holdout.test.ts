/**
 * ODDS.HOLDOUT as the sheet calls it (evaluateCellFunction): scores of the training and held-out
 * rows against scikit-learn and statsmodels on the same split (test/fixtures/evaluation/
 * holdout-sklearn.json, written by holdout-sklearn.py from the Wisconsin breast cancer data and the
 * ANES 1996 extract); agreement with the metric cells run on its aligned outputs and with a plain
 * ODDS.PROB fitted on the training rows; the seeded split's stability and strata; no leakage from the
 * held-out rows; refusals with their messages.
 */
import { CellFunctionFailure } from "../../../src/functions/cellError";
import { evaluateCellFunction } from "../../../src/functions/registry";
import type { CellValue } from "../../../src/engine/types";
import fixture from "../../fixtures/evaluation/holdout-sklearn.json";

const cancer = fixture.cases["cancer-plain"];
const anes = fixture.cases["anes96-plain"];

const LABELS: CellValue[][] = [[cancer.label], ...cancer.labels.map((v) => [v])];
const PREDICTORS: CellValue[][] = [cancer.names, ...cancer.X];
const SPLIT: CellValue[][] = [["train"], ...cancer.train.map((t) => [t === 1])];
const N = cancer.labels.length;

const holdout = (split: CellValue[][] | null, options: string, labels = LABELS, predictors = PREDICTORS) =>
  evaluateCellFunction("ODDS.HOLDOUT", [labels, predictors, split, [[options]]]);
const row = (out: CellValue[][], first: string) => out.find((r) => r[0] === first) as CellValue[];

function failure(f: () => unknown): CellFunctionFailure {
  try {
    f();
  } catch (e) {
    if (e instanceof CellFunctionFailure) return e;
    throw e;
  }
  throw new Error("expected a cell error");
}

describe("ODDS.HOLDOUT against scikit-learn on the same split", () => {
  test("two classes: every score of both sides within 1e-6 (counts exact), breast cancer data", () => {
    const out = holdout(SPLIT, "positive=malignant");
    expect(out[0]).toEqual(["score", "training rows", "held-out rows", "held-out minus training"]);
    const sides = [
      [1, cancer.training],
      [2, cancer.heldOut],
    ] as const;
    for (const [c, ref] of sides) {
      expect(row(out, "rows")[c]).toBe(ref.rows);
      expect(row(out, "log-loss")[c] as number).toBeCloseTo(ref.logLoss, 6);
      expect(row(out, "Brier score")[c] as number).toBeCloseTo(ref.brier, 6);
      expect(row(out, "AUC")[c] as number).toBeCloseTo(ref.auc, 6);
      expect(row(out, "accuracy (threshold 0.5)")[c] as number).toBeCloseTo(ref.accuracy, 9);
      expect(row(out, "true positives (threshold 0.5)")[c]).toBe(ref.truePositives);
      expect(row(out, "false positives (threshold 0.5)")[c]).toBe(ref.falsePositives);
      expect(row(out, "true negatives (threshold 0.5)")[c]).toBe(ref.trueNegatives);
      expect(row(out, "false negatives (threshold 0.5)")[c]).toBe(ref.falseNegatives);
      expect(row(out, "calibration slope")[c] as number).toBeCloseTo(ref.calibrationSlope, 5);
      expect(row(out, "calibration intercept (with the slope)")[c] as number).toBeCloseTo(ref.calibrationIntercept, 5);
      expect(row(out, "calibration-in-the-large")[c] as number).toBeCloseTo(ref.calibrationInTheLarge, 5);
    }
    expect(row(out, "log-loss")[3]).toBeCloseTo(cancer.heldOut.logLoss - cancer.training.logLoss, 6);
    expect(row(out, "split")[1]).toBe("split column");
    expect(out[out.length - 1][0]).toMatch(/statistical associations, not causes/);
  });

  test("the held-out probabilities, aligned with the rows, equal scikit-learn's within 1e-6", () => {
    const out = holdout(SPLIT, "positive=malignant; show=held-out");
    expect(out).toHaveLength(N + 1);
    expect(out[0][0]).toBe("held-out P(malignant), training fit");
    let worst = 0;
    cancer.train.forEach((t, i) => {
      const v = out[i + 1][0];
      if (t === 1) expect(v).toBe("");
      else worst = Math.max(worst, Math.abs((v as number) - cancer.probabilities[i]));
    });
    expect(worst).toBeLessThan(1e-6);
  });

  test("several classes: log-loss, Brier score and accuracy of both sides within 1e-6, ANES 1996", () => {
    const labels: CellValue[][] = [[anes.label], ...anes.labels.map((v) => [v])];
    const predictors: CellValue[][] = [anes.names, ...anes.X];
    const split: CellValue[][] = [["train"], ...anes.train.map((t) => [t])];
    const out = holdout(split, "", labels, predictors);
    for (const [c, ref] of [
      [1, anes.training],
      [2, anes.heldOut],
    ] as const) {
      expect(row(out, "rows")[c]).toBe(ref.rows);
      expect(row(out, "log-loss")[c] as number).toBeCloseTo(ref.logLoss, 6);
      expect(row(out, "Brier score")[c] as number).toBeCloseTo(ref.brier, 6);
      expect(row(out, "accuracy (most probable class)")[c] as number).toBeCloseTo(ref.accuracy, 9);
    }
    expect(row(out, "AUC")).toBeUndefined();
    expect(row(out, "classes")[1]).toBe(anes.classes.join(", "));
  });
});

describe("ODDS.HOLDOUT agrees with the other cells", () => {
  test("LOGLOSS and AUC run on the aligned held-out column (blank for training rows) give the held-out scores", () => {
    const scores = holdout(SPLIT, "positive=malignant");
    const column = holdout(SPLIT, "positive=malignant; show=held-out");
    const ll = evaluateCellFunction("ODDS.LOGLOSS", [LABELS, column, [["positive=malignant"]]]);
    const auc = evaluateCellFunction("ODDS.AUC", [LABELS, column, [["positive=malignant"]]]);
    expect(ll[0][0] as number).toBeCloseTo(row(scores, "log-loss")[2] as number, 12);
    expect(auc[0][0]).toBe("AUC (positive: malignant)");
    expect(auc[1][0] as number).toBeCloseTo(row(scores, "AUC")[2] as number, 12);
    expect(auc[1][4]).toBe(cancer.heldOut.rows);
  });

  test("show=probabilities equals ODDS.PROB fitted on the training rows alone", () => {
    const all = holdout(SPLIT, "positive=malignant; show=probabilities");
    const trainingLabels: CellValue[][] = LABELS.map((r, i) => (i === 0 || cancer.train[i - 1] === 1 ? r : [null]));
    const prob = evaluateCellFunction("ODDS.PROB", [trainingLabels, PREDICTORS, null, [["positive=malignant"]]]);
    let worst = 0;
    for (let i = 1; i <= N; i++) worst = Math.max(worst, Math.abs((all[i][0] as number) - (prob[i][0] as number)));
    expect(worst).toBeLessThan(1e-12);
  });
});

describe("ODDS.HOLDOUT seeded split", () => {
  test("stable under recalculation, stratified by class, another seed gives another split", () => {
    const a = holdout(null, "positive=malignant; holdout=0.25; seed=7; show=split");
    expect(holdout(null, "positive=malignant; holdout=0.25; seed=7; show=split")).toEqual(a);
    const b = holdout(null, "positive=malignant; holdout=0.25; seed=8; show=split");
    expect(b).not.toEqual(a);
    for (const cls of ["malignant", "benign"]) {
      const rows = cancer.labels.map((l, i) => (l === cls ? i : -1)).filter((i) => i >= 0);
      const held = rows.filter((i) => a[i + 1][0] === "held out").length;
      expect(held).toBe(Math.round(0.25 * rows.length));
      expect(rows.filter((i) => a[i + 1][0] === "training").length).toBe(rows.length - held);
    }
    const scores = holdout(null, "positive=malignant; holdout=0.25; seed=7");
    expect(row(scores, "split")[1]).toBe("seeded, 0.25 of each class held out");
    expect(row(scores, "seed")[1]).toBe(7);
  });

  test("the default share is 0.3", () => {
    const out = holdout(null, "positive=malignant; show=split");
    expect(out.filter((r) => r[0] === "held out").length).toBe(Math.round(0.3 * 212) + Math.round(0.3 * 357));
  });
});

describe("ODDS.HOLDOUT learns nothing from the held-out rows", () => {
  test("changing held-out predictor values leaves the training side unchanged (spline knots from training rows)", () => {
    const changed: CellValue[][] = PREDICTORS.map((r, i) => (i > 0 && cancer.train[i - 1] === 0 ? [(r[0] as number) * 1.7, r[1], r[2]] : r));
    const options = "positive=malignant; recipe=mean radius: ns(3)";
    const a = holdout(SPLIT, options);
    const b = holdout(SPLIT, options, LABELS, changed);
    expect(b.map((r) => r[1])).toEqual(a.map((r) => r[1]));
    expect(row(b, "log-loss")[2]).not.toEqual(row(a, "log-loss")[2]);
  });

  test("a held-out level unseen in training gets no probability and is counted with an example row", () => {
    const labels: CellValue[][] = [["y"], ...Array.from({ length: 40 }, (_, i) => [i % 3 === 0 ? "yes" : "no"])];
    const predictors: CellValue[][] = [["x", "site"], ...Array.from({ length: 40 }, (_, i) => [Math.sin(i) * 3 + (i % 3 === 0 ? 1 : 0), i === 39 ? "Z" : ["A", "B"][i % 2]])];
    const split: CellValue[][] = [["train"], ...Array.from({ length: 40 }, (_, i) => [i < 30 ? 1 : 0])];
    const out = holdout(split, "positive=yes", labels, predictors);
    expect(row(out, "held-out rows without a probability")[1]).toBe(1);
    expect(row(out, "rows")[2]).toBe(9);
    expect(out.some((r) => typeof r[0] === "string" && /row 41/.test(r[0]))).toBe(true);
  });
});

describe("ODDS.HOLDOUT refusals", () => {
  test("an unreadable mark names its row and the accepted values", () => {
    const split = SPLIT.map((r, i) => (i === 5 ? ["maybe"] : r));
    const e = failure(() => holdout(split, ""));
    expect(e.code).toBe("HOLDOUT_BAD_MARK");
    expect(e.message).toContain('row 6 ("maybe")');
    expect(e.message).toContain("TRUE or 1");
  });

  test("a split column and the holdout option together are refused", () => {
    expect(failure(() => holdout(SPLIT, "holdout=0.2")).code).toBe("HOLDOUT_BOTH_SPLITS");
  });

  test("no held-out row, a split column of the wrong length, two columns", () => {
    const all = SPLIT.map((r, i) => (i === 0 ? r : [1]));
    expect(failure(() => holdout(all, "")).code).toBe("HOLDOUT_EMPTY_SIDE");
    expect(failure(() => holdout(SPLIT.slice(0, 100), "")).code).toBe("RANGE_SHAPE_MISMATCH");
    expect(failure(() => holdout(SPLIT.map((r) => [r[0], r[0]]), "")).code).toBe("SINGLE_COLUMN_NEEDED");
  });

  test("a held-out class without training rows is refused with its name", () => {
    const split = SPLIT.map((r, i) => (i > 0 && cancer.labels[i - 1] === "malignant" ? [0] : r));
    const e = failure(() => holdout(split, ""));
    expect(e.code).toBe("HOLDOUT_CLASS_UNTRAINED");
    expect(e.message).toContain('"malignant"');
  });
});
