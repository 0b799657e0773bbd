/**
 * ODDS.REPORT called as Excel calls it. References: R's glm on the Spector data
 * (test/fixtures/binary/glm-references.json), the Stata 11 results for Spector and ANES 1996
 * (spector.json, anes96.json). In-sample metrics are checked against identities and independent
 * computations from R's fitted values: log-loss = -logLik / n; Brier = mean (y - p)^2; AUC = share of
 * (positive, negative) pairs ranked correctly (Hanley & McNeil 1982).
 */
import * as glm from "../../fixtures/binary/glm-references.json";
import * as spector from "../../fixtures/binary/spector.json";
import * as anes from "../../fixtures/multiclass/anes96.json";
import { formatMessage } from "../../../src/shared/messages";
import { report } from "../../../src/functions/functions";
import { sharedFitCache } from "../../../src/shared/fitCache";
import { OMITTED, column, expectClose, expectCleanCells, failure, lookup, table } from "./excel";

/** See fit.test.ts. */
const R_TOLERANCE = 1e-7;
const STATA_TOLERANCE = 2e-6;

const sigmoid = (x: number) => 1 / (1 + Math.exp(-x));
const d = spector.data;
const labels = column("GRADE", d.GRADE);
const predictors = table({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI });

beforeEach(() => sharedFitCache().clear());

describe("ODDS.REPORT, two classes (Spector)", () => {
  const out = report(labels, predictors, OMITTED);
  const fitted = glm.spector.link.map(sigmoid);

  test("is a two-column table of clean cells starting with a header", () => {
    expectCleanCells(out);
    expect(out[0]).toEqual(["statistic", "value"]);
    expect(out.every((r) => r.length === 2)).toBe(true);
  });

  test("describes the data and the estimation", () => {
    expect(lookup(out, "model")).toBe("binary logistic");
    expect(lookup(out, "label column")).toBe("GRADE");
    expect(lookup(out, "classes")).toBe("0, 1");
    expect(lookup(out, "positive class")).toBe("1");
    expect(lookup(out, "rows used")).toBe(32);
    expect(lookup(out, "rows skipped")).toBe(0);
    expect(lookup(out, "parameters estimated")).toBe(4);
    expect(lookup(out, "converged")).toBe(true);
    expect(typeof lookup(out, "iterations")).toBe("number");
  });

  test("likelihood statistics agree with R's glm", () => {
    expectClose(lookup(out, "log-likelihood"), glm.spector.logLik, R_TOLERANCE, "logLik");
    expectClose(lookup(out, "deviance"), glm.spector.deviance, R_TOLERANCE, "deviance");
    expectClose(lookup(out, "null deviance"), glm.spector.nullDeviance, R_TOLERANCE, "null deviance");
    expectClose(lookup(out, "AIC"), glm.spector.aic, R_TOLERANCE, "AIC");
    expectClose(lookup(out, "BIC"), glm.spector.bic, R_TOLERANCE, "BIC");
  });

  test("pseudo-R2 and the likelihood-ratio test agree with Stata", () => {
    expectClose(lookup(out, "pseudo-R2 (McFadden)"), spector.stata.prsquared, STATA_TOLERANCE, "pseudo-R2");
    expectClose(lookup(out, "LR test statistic"), spector.stata.llr, STATA_TOLERANCE, "LR");
    expect(lookup(out, "LR test df")).toBe(3);
    expectClose(lookup(out, "LR test p"), spector.stata.llr_pvalue, STATA_TOLERANCE, "LR p");
  });

  test("in-sample log-loss is -logLik / n, Brier the mean squared error of R's fitted values", () => {
    expectClose(lookup(out, "log-loss"), -glm.spector.logLik / 32, R_TOLERANCE, "log-loss");
    const brier = fitted.reduce((s, p, i) => s + (d.GRADE[i] - p) ** 2, 0) / 32;
    expectClose(lookup(out, "Brier score"), brier, R_TOLERANCE, "Brier");
  });

  test("accuracy at the threshold and the AUC agree with counts over R's fitted values", () => {
    const correct = fitted.filter((p, i) => (p >= 0.5 ? 1 : 0) === d.GRADE[i]).length;
    expectClose(lookup(out, "accuracy (threshold 0.5)"), correct / 32, 1e-15, "accuracy");
    let concordant = 0;
    let pairs = 0;
    fitted.forEach((pi, i) => {
      if (d.GRADE[i] !== 1) return;
      fitted.forEach((pj, j) => {
        if (d.GRADE[j] !== 0) return;
        pairs++;
        concordant += pi > pj ? 1 : pi === pj ? 0.5 : 0;
      });
    });
    expectClose(lookup(out, "AUC"), concordant / pairs, 1e-12, "AUC");
    const lower = lookup(out, "AUC lower 95% (DeLong)") as number;
    expect(lower).toBeLessThan(concordant / pairs);
  });

  test("threshold= changes the accuracy row, not the fit", () => {
    const o = report(labels, predictors, [["threshold=0.3"]]);
    const correct = fitted.filter((p, i) => (p >= 0.3 ? 1 : 0) === d.GRADE[i]).length;
    expectClose(lookup(o, "accuracy (threshold 0.3)"), correct / 32, 1e-15, "accuracy at 0.3");
    expect(lookup(o, "log-likelihood")).toBe(lookup(out, "log-likelihood"));
  });

  test("lists each diagnostic in words: skipped rows as a warning", () => {
    const o = report(column("GRADE", [...d.GRADE, null]), table({ GPA: [...d.GPA, 3], TUCE: [...d.TUCE, 20], PSI: [...d.PSI, 0] }), OMITTED);
    expect(lookup(o, "rows skipped")).toBe(1);
    expect(lookup(o, "warning")).toBe(formatMessage("ROWS_SKIPPED", { count: 1, detail: "GRADE: 1" }));
  });

  test("a penalized fit says so and leaves the tests it cannot give blank", () => {
    const o = report(labels, predictors, [["penalty", 2]]);
    expectCleanCells(o);
    expect(lookup(o, "penalty")).toBe(2);
    expect(o.some((r) => r[1] === formatMessage("PENALIZED_NO_P_VALUES", { penalty: 2 }))).toBe(true);
  });
});

describe("ODDS.REPORT, a fit without usable estimates", () => {
  test("still answers: statistics blank, no in-sample metrics, the reason as a problem row", () => {
    const x = [0, 0, 0, 1, 1, 1];
    const o = report(column("y", x), column("x", x), OMITTED);
    expectCleanCells(o);
    const problemRow = o.find((r) => r[0] === "problem");
    expect(problemRow).toBeDefined();
    expect(String(problemRow?.[1])).toContain('"x"');
    expect(o.some((r) => r[0] === "log-loss")).toBe(false);
  });
});

describe("ODDS.REPORT, several classes (ANES 1996)", () => {
  const o = report(column("PID", anes.y), table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]]))), OMITTED);

  test("likelihood statistics agree with Stata's mlogit", () => {
    expect(lookup(o, "model")).toBe("softmax, reference-class form");
    expect(lookup(o, "reference class")).toBe("0");
    expect(lookup(o, "rows used")).toBe(anes.stata.observations);
    expectClose(lookup(o, "log-likelihood"), anes.stata.logLikelihood, STATA_TOLERANCE, "logLik");
    expectClose(lookup(o, "null log-likelihood"), anes.stata.nullLogLikelihood, STATA_TOLERANCE, "null logLik");
    expectClose(lookup(o, "AIC"), anes.stata.aic, STATA_TOLERANCE, "AIC");
    expectClose(lookup(o, "BIC"), anes.stata.bic, STATA_TOLERANCE, "BIC");
    expectClose(lookup(o, "pseudo-R2 (McFadden)"), anes.stata.pseudoR2, STATA_TOLERANCE, "pseudo-R2");
    expect(lookup(o, "LR test df")).toBe(anes.stata.lrDf);
  });

  test("a threshold is refused with several classes (it would be ignored)", () => {
    const f = failure(() =>
      report(column("PID", anes.y), table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]]))), [["threshold=0.4"]]),
    );
    expect(f.code).toBe("BAD_OPTION_VALUE");
    expect(f.message).toContain("two classes only");
  });

  test("multi-class log-loss is -logLik / n; no AUC row", () => {
    expectClose(lookup(o, "log-loss"), -anes.stata.logLikelihood / anes.stata.observations, STATA_TOLERANCE, "log-loss");
    expect(o.some((r) => r[0] === "AUC")).toBe(false);
    const acc = lookup(o, "accuracy (most probable class)") as number;
    expect(acc).toBeGreaterThan(0);
    expect(acc).toBeLessThan(1);
  });
});
