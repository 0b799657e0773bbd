/**
 * Edge cases of the metrics, one test each: one class only, constant probabilities, ties,
 * probabilities exactly 0 and 1, zero weights, length mismatch, missing (NaN) values, and other
 * invalid input. Expected values are worked out by hand in the comments.
 */
import {
  accuracy,
  brierScore,
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
import { expectClose, expectProblem, f64 } from "./close";

/** Hand-computed values with a handful of floating-point operations. */
const HAND_REL_TOL = 1e-14;
/** -ln(1e-15): the largest per-row log-loss under the default clip. */
const CAP = -Math.log(1e-15);

describe("all rows in one class", () => {
  const y = f64([1, 1, 1]);
  const p = f64([0.2, 0.5, 0.9]);

  test("ROC AUC is undefined and says so: METRIC_NEEDS_BOTH_CLASSES naming the label found", () => {
    const e = expectProblem(() => rocAuc(y, p), "METRIC_NEEDS_BOTH_CLASSES");
    expect(e.message).toBe(
      "The ROC AUC compares positive with negative rows, but every row with a positive weight has label 1. It is undefined here: evaluate on rows that include both classes.",
    );
  });

  test("the ROC curve is undefined too", () => {
    expectProblem(() => rocCurve(f64([0, 0]), f64([0.1, 0.2])), "METRIC_NEEDS_BOTH_CLASSES");
  });

  test("a class present only with weight zero counts as absent for the AUC", () => {
    const e = expectProblem(() => rocAuc(f64([1, 0, 1]), p, { weights: f64([1, 0, 2]) }), "METRIC_NEEDS_BOTH_CLASSES");
    expect(e.params.label).toBe(1);
  });

  test("log-loss and Brier score stay defined", () => {
    expectClose(logLoss(y, p).value, -(Math.log(0.2) + Math.log(0.5) + Math.log(0.9)) / 3, HAND_REL_TOL, "log-loss");
    expectClose(brierScore(y, p).value, (0.64 + 0.25 + 0.01) / 3, HAND_REL_TOL, "Brier");
  });

  test("confusion counts leave specificity empty (NaN) with a RATE_UNDEFINED note instead of 0", () => {
    const c = confusionCounts(y, p);
    expect(c.specificity).toBeNaN();
    expect(c.sensitivity).toBeCloseTo(2 / 3, 15);
    expect(c.diagnostics.map((d) => [d.code, d.severity])).toEqual([["RATE_UNDEFINED", "note"]]);
    expect(c.diagnostics[0].message).toContain("Specificity is undefined");
  });
});

describe("constant probabilities", () => {
  const y = f64([0, 1, 0, 1, 1]);
  const p = f64([0.4, 0.4, 0.4, 0.4, 0.4]);

  test("AUC is exactly 0.5 with DeLong variance 0 (every pair tied)", () => {
    const r = rocAuc(y, p);
    expect([r.auc, r.variance, r.lower, r.upper]).toEqual([0.5, 0, 0.5, 0.5]);
  });

  test("the ROC curve has only its two end points", () => {
    const c = rocCurve(y, p);
    expect(Array.from(c.thresholds)).toEqual([Infinity, 0.4]);
    expect(Array.from(c.truePositiveRate)).toEqual([0, 1]);
    expect(Array.from(c.falsePositiveRate)).toEqual([0, 1]);
  });

  test("the calibration table has a single group holding every row", () => {
    const t = calibrationTable(y, p);
    expect(t.groups.length).toBe(1);
    expect(t.groups[0]).toMatchObject({ lower: 0.4, upper: 0.4, rows: 5, weight: 5, observed: 3 });
    expectClose(t.groups[0].expected, 2, HAND_REL_TOL, "expected");
  });

  test("Hosmer-Lemeshow refuses: one group cannot carry a test", () => {
    const e = expectProblem(() => hosmerLemeshow(y, p), "TOO_FEW_CALIBRATION_GROUPS");
    expect(e.params).toMatchObject({ groups: 1, requested: 10, needed: 3 });
  });
});

describe("ties", () => {
  test("tied positive and negative scores count one half (mid-ranks): 3.5 of 4 pairs", () => {
    // positives 0.5, 0.8; negatives 0.5, 0.2: pairs 0.5|0.5 -> 1/2, the other three -> 1
    expect(rocAuc(f64([1, 1, 0, 0]), f64([0.5, 0.8, 0.5, 0.2])).auc).toBe(0.875);
  });

  test("AUC and DeLong variance with heavy ties and weights equal the O(n^2) pairwise definition", () => {
    let seed = 12345;
    const rand = (): number => {
      seed = (seed * 1103515245 + 12345) % 2147483648;
      return seed / 2147483648;
    };
    const n = 300;
    const y = new Float64Array(n);
    const s = new Float64Array(n);
    const w = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      y[i] = rand() < 0.4 ? 1 : 0;
      s[i] = Math.floor(rand() * 8) + (y[i] ? 1 : 0); // 9 distinct values, many ties across classes
      w[i] = Math.floor(rand() * 4); // 0..3
    }
    // brute force: placements by direct comparison of every pair
    let W1 = 0;
    let W0 = 0;
    for (let i = 0; i < n; i++) (y[i] ? (W1 += w[i]) : (W0 += w[i]));
    const psi = (a: number, b: number): number => (a > b ? 1 : a === b ? 0.5 : 0);
    const v10: number[] = [];
    const v01: number[] = [];
    let auc = 0;
    for (let i = 0; i < n; i++) {
      if (!w[i]) continue;
      let v = 0;
      for (let j = 0; j < n; j++) {
        if (!w[j] || y[j] === y[i]) continue;
        v += w[j] * (y[i] ? psi(s[i], s[j]) : psi(s[j], s[i]));
      }
      if (y[i]) {
        v10.push(v / W0, w[i]);
        auc += (w[i] * v) / W0;
      } else v01.push(v / W1, w[i]);
    }
    auc /= W1;
    let s10 = 0;
    let s01 = 0;
    for (let k = 0; k < v10.length; k += 2) s10 += v10[k + 1] * (v10[k] - auc) ** 2;
    for (let k = 0; k < v01.length; k += 2) s01 += v01[k + 1] * (v01[k] - auc) ** 2;
    const variance = s10 / (W1 - 1) / W1 + s01 / (W0 - 1) / W0;
    const r = rocAuc(y, s, { weights: w });
    expectClose(r.auc, auc, 1e-13, "AUC");
    expectClose(r.variance, variance, 1e-12, "variance");
  });

  test("integer weights give the same AUC, variance and interval as repeating the rows", () => {
    const y = f64([1, 0, 1, 0, 1, 0, 0]);
    const s = f64([0.9, 0.3, 0.3, 0.6, 0.7, 0.1, 0.7]);
    const w = [2, 3, 1, 1, 2, 1, 2];
    const yy: number[] = [];
    const ss: number[] = [];
    w.forEach((k, i) => {
      for (let r = 0; r < k; r++) {
        yy.push(y[i]);
        ss.push(s[i]);
      }
    });
    const a = rocAuc(y, s, { weights: f64(w) });
    const b = rocAuc(f64(yy), f64(ss));
    expectClose(a.auc, b.auc, HAND_REL_TOL, "AUC");
    expectClose(a.variance, b.variance, 1e-13, "variance");
    expectClose(a.lower, b.lower, 1e-13, "lower");
  });

  test("a row exactly at the threshold is predicted positive", () => {
    const c = confusionCounts(f64([1, 0]), f64([0.5, 0.5]), { threshold: 0.5 });
    expect([c.truePositives, c.falsePositives, c.trueNegatives, c.falseNegatives]).toEqual([1, 1, 0, 0]);
  });

  test("multi-class argmax ties go to the lowest class index", () => {
    const m = confusionMatrix(Int32Array.from([1, 2]), [f64([0.4, 0.2]), f64([0.4, 0.4]), f64([0.2, 0.4])]);
    expect(Array.from(m.predicted)).toEqual([0, 1]);
  });

  test("scores -0 and +0 form one tie group", () => {
    const c = rocCurve(f64([1, 0]), f64([-0, 0]));
    expect(c.thresholds.length).toBe(2);
    expect(rocAuc(f64([1, 0]), f64([-0, 0])).auc).toBe(0.5);
  });
});

describe("probabilities exactly 0 and 1", () => {
  test("a 0 or 1 for the wrong class costs -ln(1e-15) = 34.54 nats, finite, with a PROBABILITIES_CLIPPED warning", () => {
    const r = logLoss(f64([1, 0]), f64([0, 1]));
    expect(Number.isFinite(r.value)).toBe(true);
    expectClose(r.value, CAP, HAND_REL_TOL, "capped loss");
    expect(r.clippedRows).toBe(2);
    expect(r.diagnostics.map((d) => [d.code, d.severity, d.rows])).toEqual([["PROBABILITIES_CLIPPED", "warning", [0]]]);
    expect(r.diagnostics[0].message).toContain("2 probabilities (first in row 1)");
  });

  test("a 0 or 1 for the right class costs (almost exactly) nothing and is not reported", () => {
    const r = logLoss(f64([1, 0]), f64([1, 0]));
    expect(r.value).toBeLessThan(2e-15);
    expect(r.clippedRows).toBe(0);
    expect(r.diagnostics).toEqual([]);
  });

  test("the eps option moves the cap: eps = 1e-6 caps a row at -ln(1e-6)", () => {
    expectClose(logLoss(f64([1]), f64([0]), { eps: 1e-6 }).value, -Math.log(1e-6), HAND_REL_TOL, "eps 1e-6");
  });

  test("multi-class: a 0 for the observed class is capped the same way", () => {
    const r = multiclassLogLoss(Int32Array.from([2]), [f64([0.5]), f64([0.5]), f64([0])]);
    expectClose(r.value, CAP, HAND_REL_TOL, "capped multi-class loss");
    expect(r.clippedRows).toBe(1);
  });

  test("Brier score takes 0 and 1 as they are: a confident wrong row scores 1", () => {
    expect(brierScore(f64([1, 0]), f64([0, 0])).value).toBe(0.5);
    expect(multiclassBrierScore(Int32Array.from([0]), [f64([0]), f64([1])]).value).toBe(2);
  });

  test("the calibration table keeps probabilities 0 and 1; Hosmer-Lemeshow is infinite when a p = 1 row is negative", () => {
    // 5 groups of 10 rows: cuts at cumulative 2, 4, 6, 8 -> values 0, 0.3, 0.5, 0.7; the cut at 0 equals
    // the minimum and merges, so the groups are [0, 0.3], (0.3, 0.5], (0.5, 0.7], (0.7, 1].
    const y = f64([1, 0, 0, 0, 1, 1, 0, 1, 0, 1]);
    const p = f64([0, 0, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 1, 1]);
    const r = hosmerLemeshow(y, p, { groups: 5, sample: "external" });
    expect(r.groups.map((g) => [g.lower, g.upper, g.rows])).toEqual([[0, 0.3, 4], [0.4, 0.5, 2], [0.6, 0.7, 2], [1, 1, 2]]);
    // last group: expected negatives 2 - 2 = 0 but one negative observed -> infinite statistic
    expect(r.groups[3]).toMatchObject({ observed: 1, expected: 2 });
    expect(r.statistic).toBe(Infinity);
    expect(r.p).toBe(0);
  });
});

describe("zero weights", () => {
  const y = f64([1, 0, 1, 0, 1, 0]);
  const p = f64([0.9, 0.2, 0.4, 0.6, 0.7, 0.05]);
  const w = f64([1, 0, 2, 1, 0, 3]);
  const keep = [0, 2, 3, 5];
  const yk = f64(keep.map((i) => y[i]));
  const pk = f64(keep.map((i) => p[i]));
  const wk = f64(keep.map((i) => w[i]));

  test("rows of weight zero change no metric: same as removing them", () => {
    expectClose(logLoss(y, p, { weights: w }).value, logLoss(yk, pk, { weights: wk }).value, HAND_REL_TOL, "log-loss");
    expectClose(brierScore(y, p, { weights: w }).value, brierScore(yk, pk, { weights: wk }).value, HAND_REL_TOL, "Brier");
    expect(accuracy(y, p, { weights: w }).value).toBe(accuracy(yk, pk, { weights: wk }).value);
    expect(confusionCounts(y, p, { weights: w })).toEqual(confusionCounts(yk, pk, { weights: wk }));
    expect(rocAuc(y, p, { weights: w })).toEqual(rocAuc(yk, pk, { weights: wk }));
    expect(rocCurve(y, p, { weights: w })).toEqual(rocCurve(yk, pk, { weights: wk }));
    expect(calibrationTable(y, p, { weights: w, groups: 2 })).toEqual(calibrationTable(yk, pk, { weights: wk, groups: 2 }));
  });

  test("multi-class: rows of weight zero change nothing", () => {
    const c = Int32Array.from([0, 1, 1]);
    const P = [f64([0.7, 0.5, 0.1]), f64([0.3, 0.5, 0.9])];
    const w3 = f64([2, 0, 1]);
    const P2 = [f64([0.7, 0.1]), f64([0.3, 0.9])];
    const c2 = Int32Array.from([0, 1]);
    const w2 = f64([2, 1]);
    expectClose(multiclassLogLoss(c, P, { weights: w3 }).value, multiclassLogLoss(c2, P2, { weights: w2 }).value, HAND_REL_TOL, "log-loss");
    expect(multiclassAccuracy(c, P, { weights: w3 }).value).toBe(1);
    expect(confusionMatrix(c, P, { weights: w3 }).counts.map((r) => Array.from(r))).toEqual([[2, 0], [0, 1]]);
  });

  test("a zero-weight row is still checked: an invalid probability there is reported", () => {
    expectProblem(() => logLoss(f64([1, 0]), f64([0.5, 7]), { weights: f64([1, 0]) }), "BAD_PROBABILITY");
  });

  test("all weights zero: ZERO_TOTAL_WEIGHT instead of 0/0", () => {
    const e = expectProblem(() => brierScore(f64([1, 0]), f64([0.5, 0.5]), { weights: f64([0, 0]) }), "ZERO_TOTAL_WEIGHT");
    expect(e.message).toContain("Every weight is zero");
    expectProblem(() => multiclassLogLoss(Int32Array.from([0]), [f64([1]), f64([0])], { weights: f64([0]) }), "ZERO_TOTAL_WEIGHT");
  });

  test("negative, infinite or NaN weights are rejected with the row", () => {
    expect(expectProblem(() => logLoss(f64([1, 0]), f64([0.5, 0.5]), { weights: f64([1, -1]) }), "BAD_WEIGHT").message).toBe(
      "The weight in row 2 is -1. Weights must be finite numbers of zero or more.",
    );
    expectProblem(() => rocAuc(f64([1, 0]), f64([0.5, 0.5]), { weights: f64([Infinity, 1]) }), "BAD_WEIGHT");
    expectProblem(() => accuracy(f64([1, 0]), f64([0.5, 0.5]), { weights: f64([NaN, 1]) }), "BAD_WEIGHT");
  });
});

describe("length mismatch", () => {
  test("probabilities shorter than labels: RANGE_SHAPE_MISMATCH naming both arguments and lengths", () => {
    const e = expectProblem(() => logLoss(f64([1, 0, 1]), f64([0.5, 0.5])), "RANGE_SHAPE_MISMATCH");
    expect(e.message).toBe("The probabilities range has 2 rows but labels has 3. Select ranges that cover the same rows.");
  });

  test("scores of another length than labels (AUC)", () => {
    expect(expectProblem(() => rocAuc(f64([1, 0]), f64([0.5])), "RANGE_SHAPE_MISMATCH").params.argument).toBe("scores");
  });

  test("weights of another length than labels", () => {
    expect(expectProblem(() => brierScore(f64([1, 0]), f64([0.5, 0.5]), { weights: f64([1]) }), "RANGE_SHAPE_MISMATCH").params.argument).toBe("weights");
  });

  test("a multi-class probability column of another length names the column", () => {
    const e = expectProblem(() => multiclassBrierScore(Int32Array.from([0, 1]), [f64([0.5, 0.5]), f64([0.5])]), "RANGE_SHAPE_MISMATCH");
    expect(e.message).toContain("probabilities (column 2) range has 1 row but classes has 2");
  });

  test("empty input: EMPTY_RANGE", () => {
    expectProblem(() => logLoss(f64([]), f64([])), "EMPTY_RANGE");
    expectProblem(() => confusionMatrix(new Int32Array(0), [f64([]), f64([])]), "EMPTY_RANGE");
  });
});

describe("missing values (NaN)", () => {
  test("a NaN label is reported as missing with its 1-based row", () => {
    const e = expectProblem(() => logLoss(f64([1, NaN]), f64([0.5, 0.5])), "METRIC_MISSING_VALUE");
    expect(e.message).toBe(
      "The labels value in row 2 is missing (not a number). Metrics need a value in every row: remove the incomplete rows first.",
    );
    expect(e.params.index).toBe(1);
  });

  test("a NaN probability is reported as missing, not as out of range", () => {
    expect(expectProblem(() => brierScore(f64([1, 0]), f64([NaN, 0.5])), "METRIC_MISSING_VALUE").params.argument).toBe("probabilities");
  });

  test("a NaN score is reported as missing by the AUC and the ROC curve", () => {
    expect(expectProblem(() => rocAuc(f64([1, 0]), f64([0.5, NaN])), "METRIC_MISSING_VALUE").params.argument).toBe("scores");
    expectProblem(() => rocCurve(f64([1, 0]), f64([NaN, 0.5])), "METRIC_MISSING_VALUE");
  });

  test("a NaN multi-class probability names its column", () => {
    const e = expectProblem(() => multiclassLogLoss(Int32Array.from([0]), [f64([0.5]), f64([NaN])]), "METRIC_MISSING_VALUE");
    expect(e.params.argument).toBe("probabilities (column 2)");
  });
});

describe("other invalid input", () => {
  test("a label other than 0 or 1: BAD_BINARY_LABEL", () => {
    expect(expectProblem(() => accuracy(f64([1, 2]), f64([0.5, 0.5])), "BAD_BINARY_LABEL").message).toBe(
      "The label in row 2 is 2. Binary metrics need labels coded 1 for the positive class and 0 for the negative class.",
    );
  });

  test("a probability outside [0, 1]: BAD_PROBABILITY (scores for the AUC may be any number)", () => {
    expectProblem(() => logLoss(f64([1]), f64([1.5])), "BAD_PROBABILITY");
    expectProblem(() => calibrationTable(f64([1]), f64([-0.1])), "BAD_PROBABILITY");
    expect(rocAuc(f64([1, 0]), f64([150, -3])).auc).toBe(1);
  });

  test("a class index outside 0..K-1: BAD_CLASS_INDEX", () => {
    expect(expectProblem(() => multiclassAccuracy(Int32Array.from([3]), [f64([0.5]), f64([0.5])]), "BAD_CLASS_INDEX").message).toBe(
      "The class index in row 1 is 3. With 2 probability columns, class indices must be whole numbers from 0 to 1.",
    );
  });

  test("class probabilities that do not sum to 1: PROBABILITIES_NOT_SUMMING", () => {
    expectProblem(() => multiclassLogLoss(Int32Array.from([0]), [f64([0.5]), f64([0.4])]), "PROBABILITIES_NOT_SUMMING");
  });

  test("fewer than two probability columns: TOO_FEW_PROBABILITY_COLUMNS", () => {
    expectProblem(() => multiclassLogLoss(Int32Array.from([0]), [f64([1])]), "TOO_FEW_PROBABILITY_COLUMNS");
  });

  test("options out of range: BAD_OPTION_VALUE naming the option", () => {
    const y = f64([1, 0]);
    const p = f64([0.6, 0.3]);
    expect(expectProblem(() => confusionCounts(y, p, { threshold: 1.5 }), "BAD_OPTION_VALUE").message).toBe(
      'The option threshold cannot be "1.5". Give a number from 0 to 1.',
    );
    expectProblem(() => rocAuc(y, p, { level: 1 }), "BAD_OPTION_VALUE");
    expectProblem(() => logLoss(y, p, { eps: 0 }), "BAD_OPTION_VALUE");
    expectProblem(() => calibrationTable(y, p, { groups: 2.5 }), "BAD_OPTION_VALUE");
    expectProblem(() => hosmerLemeshow(y, p, { sample: "other" as "external" }), "BAD_OPTION_VALUE");
  });

  test("an omitted option arriving as null takes its default", () => {
    const y = f64([1, 0]);
    const p = f64([0.6, 0.3]);
    expect(accuracy(y, p, { threshold: null as unknown as number }).value).toBe(1);
    expect(rocAuc(y, p, { level: null as unknown as number }).level).toBe(0.95);
  });
});

describe("small samples and direction", () => {
  test("one positive row: AUC given, DeLong variance undefined with an AUC_INTERVAL_UNDEFINED warning", () => {
    const r = rocAuc(f64([1, 0, 0]), f64([0.7, 0.2, 0.9]));
    expect(r.auc).toBe(0.5);
    expect([r.variance, r.lower, r.upper].every(Number.isNaN)).toBe(true);
    expect(r.diagnostics.map((d) => d.code)).toEqual(["AUC_INTERVAL_UNDEFINED"]);
  });

  test("an AUC below 0.5 is reported as it is, not flipped", () => {
    expect(rocAuc(f64([1, 1, 0, 0]), f64([0.1, 0.2, 0.8, 0.9])).auc).toBe(0);
  });

  test("the interval is cut to [0, 1] as pROC does", () => {
    const r = rocAuc(f64([1, 1, 1, 0, 0, 1, 0]), f64([0.9, 0.8, 0.7, 0.6, 0.1, 0.95, 0.2]));
    expect(r.auc).toBe(1);
    expect(r.upper).toBe(1);
  });
});
