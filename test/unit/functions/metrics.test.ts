/**
 * ODDS.LOGLOSS, ODDS.AUC, ODDS.CONFUSION and ODDS.CALIBRATION called as Excel calls them (ranges with
 * header rows, labels as text or numbers, blanks as null), checked against the reference fixtures of
 * the metrics engine:
 * - test/fixtures/metrics/sklearn-metrics.json (scikit-learn 1.2.1 sklearn.metrics, seeded data);
 * - test/fixtures/metrics/roc-asah.json (pROC 1.18.0 on the aSAH data, DeLong intervals; data from
 *   Turck et al. as shipped with pROC);
 * - test/fixtures/metrics/calibration.json (Hosmer-Lemeshow computed in R by hand, Hosmer & Lemeshow 1980).
 */
import * as sklearn from "../../fixtures/metrics/sklearn-metrics.json";
import * as asah from "../../fixtures/metrics/roc-asah.json";
import * as calib from "../../fixtures/metrics/calibration.json";
import { auc, calibration, confusion, logLoss } from "../../../src/functions/functions";
import { formatMessage } from "../../../src/shared/messages";
import { OMITTED, column, expectClose, expectCleanCells, failure, lookup, table } from "./excel";

/** Sums of up to 500 terms in a different order than the reference: a few ulps of the total. */
const SUM_TOLERANCE = 1e-12;
/** Values printed by R's jsonlite with 15 significant digits. */
const R_PRINT_TOLERANCE = 1e-9;

const yesNo = (labels: readonly number[]) => labels.map((y) => (y === 1 ? "yes" : "no"));

describe("ODDS.LOGLOSS", () => {
  const b = sklearn.binary_smooth;

  test("two classes, text labels with a header, one probability column: sklearn log_loss", () => {
    const out = logLoss(column("bought", yesNo(b.labels)), column("P(yes)", b.probabilities), OMITTED);
    expect(out).toHaveLength(1);
    expectClose(out[0][0], b.log_loss, SUM_TOLERANCE, "log-loss");
  });

  test("numeric 0/1 labels give the same value", () => {
    const out = logLoss(column("y", b.labels), column("p", b.probabilities), OMITTED);
    expectClose(out[0][0], b.log_loss, SUM_TOLERANCE, "log-loss");
  });

  test("the probability header names the positive class: P(no) flips the roles", () => {
    const pNo = b.probabilities.map((p) => 1 - p);
    const out = logLoss(column("bought", yesNo(b.labels)), column("P(no)", pNo), OMITTED);
    expectClose(out[0][0], b.log_loss, 1e-10, "log-loss with P(no)");
  });

  test("several classes: one column per class under class-name headers, sklearn log_loss", () => {
    const m = sklearn.multiclass;
    const names = ["ash", "birch", "cedar", "deodar"];
    const labels = column("tree", m.classes.map((k) => names[k]));
    const probs = table(Object.fromEntries(names.map((n, k) => [`P(${n})`, m.probabilities[k]])));
    expectClose(logLoss(labels, probs, OMITTED)[0][0], m.log_loss, SUM_TOLERANCE, "multi-class log-loss");
  });

  test("columns in another order are matched by their headers", () => {
    const m = sklearn.multiclass;
    const names = ["ash", "birch", "cedar", "deodar"];
    const order = [2, 0, 3, 1];
    const probs = table(Object.fromEntries(order.map((k) => [names[k], m.probabilities[k]])));
    const out = logLoss(column("tree", m.classes.map((k) => names[k])), probs, OMITTED);
    expectClose(out[0][0], m.log_loss, SUM_TOLERANCE, "reordered columns");
  });

  test("rows with a blank label or blank probabilities are skipped (rows ODDS.PROB left blank)", () => {
    const labels = column("y", [...b.labels, null, 1]);
    const probs = column("p", [...b.probabilities, 0.3, null]);
    expectClose(logLoss(labels, probs, OMITTED)[0][0], b.log_loss, SUM_TOLERANCE, "with skipped rows");
  });

  test("an overconfident wrong row gives a large finite loss: the observed-class probability clipped to 1e-15", () => {
    // The engine clips the observed-class probability q (symmetric in the classes); the fixture's
    // numpy-by-hand value does the same (sklearn 1.2 clips p instead, which differs in the 5th digit).
    const c = sklearn.binary_clip;
    const out = logLoss(column("y", c.labels), column("p", c.probabilities), OMITTED);
    expectClose(out[0][0], c.log_loss_observed_class_clip_numpy_by_hand, SUM_TOLERANCE, "clipped log-loss");
  });

  test("the two ranges share one header decision (a text label column alone could look headerless)", () => {
    // "Poor" recurs, so the labels alone would have no header; the probabilities' "P(Poor)" decides.
    const labels = [["Poor"], ["Good"], ["Poor"], ["Good"]];
    const out = logLoss(labels, [["P(Poor)"], [0.2], [0.7], [0.4]], OMITTED);
    expectClose(out[0][0], -(Math.log(0.8) + Math.log(0.7) + Math.log(0.6)) / 3, 1e-15, "three rows after the header");
  });

  test("a probability outside [0, 1] is #VALUE! naming its sheet row (header = row 1)", () => {
    const f = failure(() => logLoss(column("y", [1, 0, 1]), column("p", [0.9, 1.2, 0.4]), OMITTED));
    expect(f.cellError).toBe("#VALUE!");
    expect(f.code).toBe("BAD_PROBABILITY");
    expect(f.message).toBe(formatMessage("BAD_PROBABILITY", { row: 3, value: 1.2 }));
  });

  test("ranges of different heights are #VALUE! RANGE_SHAPE_MISMATCH", () => {
    const f = failure(() => logLoss(column("y", [1, 0, 1, 0]), column("p", [0.9, 0.2, 0.4]), OMITTED));
    expect(f.code).toBe("RANGE_SHAPE_MISMATCH");
    expect(f.message).toBe(
      formatMessage("RANGE_SHAPE_MISMATCH", { argument: "probabilities", got: 3, expectedArgument: "labels", expected: 4 }),
    );
  });

  test("several classes with one column is #VALUE! PROBABILITY_COLUMN_COUNT", () => {
    const f = failure(() => logLoss(column("y", ["a", "b", "c"]), column("p", [0.2, 0.3, 0.4]), OMITTED));
    expect(f.code).toBe("PROBABILITY_COLUMN_COUNT");
    expect(f.message).toBe(formatMessage("PROBABILITY_COLUMN_COUNT", { got: 1, count: 3, classes: '"a", "b" and "c"' }));
  });

  test("a class without a named column is #VALUE! PROBABILITY_COLUMN_MISSING", () => {
    const probs = table({ "P(a)": [0.5, 0.2, 0.3], "P(b)": [0.3, 0.5, 0.3], "P(z)": [0.2, 0.3, 0.4] });
    const f = failure(() => logLoss(column("y", ["a", "b", "c"]), probs, OMITTED));
    expect(f.code).toBe("PROBABILITY_COLUMN_MISSING");
    expect(f.message).toBe(formatMessage("PROBABILITY_COLUMN_MISSING", { label: "c", headers: '"P(a)", "P(b)" and "P(z)"' }));
  });

  test("an unknown option is #VALUE! listing the valid ones", () => {
    const f = failure(() => logLoss(column("y", [1, 0]), column("p", [0.9, 0.2]), [["treshold=0.3"]]));
    expect(f.code).toBe("UNKNOWN_OPTION");
    expect(f.message).toBe(formatMessage("UNKNOWN_OPTION", { name: "treshold", fn: "ODDS.LOGLOSS", valid: "positive, headers" }));
  });

  // Issue 12 point 7: one class is defined for log-loss once the column names its class; an unnamed
  // column (header "p") cannot say which class it is for, so it is still refused, by a message that says so.
  test("a label column of one class under an unnamed probability column is #VALUE! METRIC_CLASS_UNNAMED", () => {
    const f = failure(() => logLoss(column("y", ["a", "a"]), column("p", [0.9, 0.2]), OMITTED));
    expect(f.code).toBe("METRIC_CLASS_UNNAMED");
    expect(f.message).toBe(formatMessage("METRIC_CLASS_UNNAMED", { label: "a" }));
  });
});

describe("ODDS.AUC", () => {
  const marker = asah.markers.find((m) => m.marker === "s100b") as (typeof asah.markers)[number];
  // s100b is a concentration (up to about 2), not a probability, and every metric now refuses values
  // outside [0, 1]: it is divided by a constant above its maximum. The AUC and its DeLong interval
  // depend only on the order of the values (DeLong et al. 1988), which a positive scaling keeps.
  const s100bMax = Math.max(...asah.s100b);
  const s100b = asah.s100b.map((v) => v / (2 * s100bMax));

  test("aSAH s100b: AUC and DeLong 95% interval agree with pROC", () => {
    const labels = column("outcome", asah.label.map((y) => (y === 1 ? "Poor" : "Good")));
    const out = auc(labels, column("s100b", s100b), [["positive=Poor"]]);
    expectCleanCells(out);
    expect(out[0]).toEqual(["AUC (positive: Poor)", "lower 95%", "upper 95%", "std. error", "rows used"]);
    expectClose(out[1][0], marker.auc, R_PRINT_TOLERANCE, "AUC");
    expectClose(out[1][1], marker.ci95[0], R_PRINT_TOLERANCE, "lower");
    expectClose(out[1][2], marker.ci95[1], R_PRINT_TOLERANCE, "upper");
    expectClose(out[1][3], Math.sqrt(marker.variance), R_PRINT_TOLERANCE, "SE");
    expect(out[1][4]).toBe(113);
  });

  test("level=0.9 gives pROC's 90% interval", () => {
    const out = auc(column("y", asah.label), column("s100b", s100b), [["level", 0.9]]);
    expect(out[0][1]).toBe("lower 90%");
    expectClose(out[1][1], marker.ci90[0], R_PRINT_TOLERANCE, "lower 90");
    expectClose(out[1][2], marker.ci90[1], R_PRINT_TOLERANCE, "upper 90");
  });

  test("sklearn roc_auc with tied probabilities (mid-ranks)", () => {
    const t = sklearn.binary_ties;
    const out = auc(column("y", t.labels), column("p", t.probabilities), OMITTED);
    expectClose(out[1][0], t.roc_auc, SUM_TOLERANCE, "AUC with ties");
  });

  test("several classes are #VALUE! BINARY_METRIC_ONLY", () => {
    const probs = table({ a: [0.5, 0.2, 0.3], b: [0.3, 0.5, 0.3], c: [0.2, 0.3, 0.4] });
    const f = failure(() => auc(column("y", ["a", "b", "c"]), probs, OMITTED));
    expect(f.code).toBe("BINARY_METRIC_ONLY");
    expect(f.message).toBe(formatMessage("BINARY_METRIC_ONLY", { fn: "ODDS.AUC", count: 3, classes: '"a", "b" and "c"' }));
  });

  test("a level outside (0, 1) is #VALUE! BAD_OPTION_VALUE", () => {
    const f = failure(() => auc(column("y", [1, 0]), column("p", [0.9, 0.2]), [["level=95"]]));
    expect(f.code).toBe("BAD_OPTION_VALUE");
    expect(f.message).toContain("level");
  });

  test("one row per class gives the AUC with a blank interval and a note saying why", () => {
    const out = auc(column("y", [1, 0]), column("p", [0.9, 0.2]), OMITTED);
    expectCleanCells(out);
    expect(out[1][0]).toBe(1);
    expect(out[1][1]).toBe("");
    expect(out[3][0]).toBe(formatMessage("AUC_INTERVAL_UNDEFINED", { positives: 1, negatives: 1 }));
  });
});

describe("ODDS.CONFUSION", () => {
  const b = sklearn.binary_smooth;

  test("two classes at the default 0.5: counts, precision, recall, F1 and accuracy as sklearn", () => {
    const out = confusion(column("bought", yesNo(b.labels)), column("P(yes)", b.probabilities), OMITTED);
    expectCleanCells(out);
    const [[tn, fp], [fn, tp]] = b["confusion_0.5"];
    expect(out.slice(0, 3)).toEqual([
      ["actual \\ predicted", "no", "yes"],
      ["no", tn, fp],
      ["yes", fn, tp],
    ]);
    expect(lookup(out, "threshold")).toBe(0.5);
    expectClose(lookup(out, "precision"), b["precision_0.5"], 1e-15, "precision");
    expectClose(lookup(out, "sensitivity (yes)"), b["recall_0.5"], 1e-15, "recall");
    expectClose(lookup(out, "F1"), b["f1_0.5"], 1e-15, "F1");
    expectClose(lookup(out, "accuracy"), b["accuracy_0.5"], 1e-15, "accuracy");
    expectClose(lookup(out, "specificity (no)"), tn / (tn + fp), 1e-15, "specificity");
    expect(lookup(out, "rows used")).toBe(200);
  });

  test("threshold=0.3 moves rows to the positive side as sklearn at 0.3", () => {
    const out = confusion(column("y", b.labels), column("p", b.probabilities), [["threshold=0.3"]]);
    const [[tn, fp], [fn, tp]] = b["confusion_0.3"];
    expect(out[1].slice(1)).toEqual([tn, fp]);
    expect(out[2].slice(1)).toEqual([fn, tp]);
    expectClose(lookup(out, "F1"), b["f1_0.3"], 1e-15, "F1 at 0.3");
  });

  test("several classes: the most probable class, sklearn's confusion matrix and accuracy", () => {
    const m = sklearn.multiclass;
    const names = ["ash", "birch", "cedar", "deodar"];
    const probs = table(Object.fromEntries(names.map((n, k) => [`P(${n})`, m.probabilities[k]])));
    const out = confusion(column("tree", m.classes.map((k) => names[k])), probs, OMITTED);
    expectCleanCells(out);
    expect(out[0]).toEqual(["actual \\ predicted", ...names]);
    for (let a = 0; a < 4; a++) expect(out[1 + a]).toEqual([names[a], ...m.confusion[a]]);
    expectClose(lookup(out, "accuracy"), m.accuracy, 1e-15, "accuracy");
    const row = m.confusion[1];
    expectClose(lookup(out, "recall (birch)"), row[1] / row.reduce((s, v) => s + v, 0), 1e-15, "recall");
  });

  test("a threshold with several classes is #VALUE! rather than silently ignored", () => {
    const probs = table({ a: [0.5, 0.2, 0.3], b: [0.3, 0.5, 0.3], c: [0.2, 0.3, 0.4] });
    const f = failure(() => confusion(column("y", ["a", "b", "c"]), probs, [["threshold=0.3"]]));
    expect(f.code).toBe("BAD_OPTION_VALUE");
    expect(f.message).toContain("two classes only");
  });

  test("a rate with a zero denominator is blank, with the engine's note below", () => {
    // Nobody predicted positive at 0.5: precision is 0/0.
    const out = confusion(column("y", [1, 0, 1]), column("p", [0.1, 0.2, 0.3]), OMITTED);
    expectCleanCells(out);
    expect(lookup(out, "precision")).toBe("");
    expect(out.some((r) => typeof r[0] === "string" && r[0].startsWith("Precision is undefined"))).toBe(true);
  });
});

describe("ODDS.CALIBRATION", () => {
  const labels = column("event", calib.labels);

  test("deciles of a development sample: table and Hosmer-Lemeshow statistic as computed in R", () => {
    const ref = calib.development.hl10;
    const out = calibration(labels, column("p", calib.development.probabilities), OMITTED);
    expectCleanCells(out);
    expect(out[0][0]).toBe("group");
    for (let g = 0; g < ref.groups; g++) {
      const row = out[1 + g];
      expect(row[0]).toBe(g + 1);
      expect(row[1]).toBe(ref.table.count[g]);
      expectClose(row[2], ref.table.lower[g], R_PRINT_TOLERANCE, `lower ${g}`);
      expectClose(row[3], ref.table.upper[g], R_PRINT_TOLERANCE, `upper ${g}`);
      expectClose(row[6], ref.table.expected[g], R_PRINT_TOLERANCE, `expected ${g}`);
      expect(row[7]).toBe(ref.table.observed[g]);
    }
    expectClose(lookup(out, "Hosmer-Lemeshow statistic"), ref.statistic, R_PRINT_TOLERANCE, "statistic");
    expect(lookup(out, "df")).toBe(ref.df);
    expectClose(lookup(out, "p"), ref.p, R_PRINT_TOLERANCE, "p");
    expect(String(lookup(out, "grouping rule"))).toContain("type-1");
  });

  test("sample=external uses df = groups, as R's reference", () => {
    const ref = calib.external.hl10External;
    const out = calibration(labels, column("p", calib.external.probabilities), [["sample", "external"]]);
    expect(lookup(out, "df")).toBe(ref.df);
    expectClose(lookup(out, "p"), ref.p, R_PRINT_TOLERANCE, "p external");
  });

  test("groups=5", () => {
    const ref = calib.external.hl5;
    const out = calibration(labels, column("p", calib.external.probabilities), [["groups=5"]]);
    expect(lookup(out, "groups formed")).toBe(5);
    expectClose(lookup(out, "Hosmer-Lemeshow statistic"), ref.statistic, R_PRINT_TOLERANCE, "statistic 5 groups");
  });

  test("too few distinct probabilities: the table stands and the missing test is explained", () => {
    const out = calibration(labels, column("p", calib.threeValues.probabilities), OMITTED);
    expectCleanCells(out);
    expect(lookup(out, "groups formed")).toBe(calib.threeValues.hl10.groups);
    expect(String(lookup(out, "Hosmer-Lemeshow test"))).toBe(
      formatMessage("TOO_FEW_CALIBRATION_GROUPS", { groups: 2, requested: 10, needed: 3 }),
    );
  });

  test("groups=1 is #VALUE! BAD_OPTION_VALUE", () => {
    const f = failure(() => calibration(labels, column("p", calib.development.probabilities), [["groups=1"]]));
    expect(f.code).toBe("BAD_OPTION_VALUE");
    expect(f.message).toContain("groups");
  });
});
