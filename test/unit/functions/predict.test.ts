/**
 * ODDS.PROB, ODDS.CLASS and ODDS.MARGIN called as Excel calls them. References: the fitted
 * probabilities and linear predictors of R's glm on the Spector data
 * (test/fixtures/binary/glm-references.json) and Stata's phat (spector.json); statsmodels MNLogit
 * probabilities on ANES 1996 (test/fixtures/multiclass/anes96.json).
 */
import * as glm from "../../fixtures/binary/glm-references.json";
import * as spector from "../../fixtures/binary/spector.json";
import * as anes from "../../fixtures/multiclass/anes96.json";
import { formatMessage } from "../../../src/shared/messages";
import { margin, predictClass, prob } from "../../../src/functions/functions";
import { sharedFitCache } from "../../../src/shared/fitCache";
import { OMITTED, column, expectClose, expectCleanCells, failure, table } from "./excel";

/** See fit.test.ts: our IRLS against R's glm at epsilon 1e-14. */
const R_TOLERANCE = 1e-7;
/** Stata's phat was computed from single-precision data. */
const STATA_TOLERANCE = 1e-6;

const sigmoid = (x: number) => 1 / (1 + Math.exp(-x));
const d = spector.data;
const labels = column("GRADE", d.GRADE);
const predictors = table({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI });
const beta = glm.spector.coefficients; // (intercept), GPA, TUCE, PSI
const eta = (gpa: number, tuce: number, psi: number) => beta[0] + beta[1] * gpa + beta[2] * tuce + beta[3] * psi;

beforeEach(() => sharedFitCache().clear());

describe("ODDS.PROB", () => {
  test("training rows: one column for the positive class, lined up with the input, as R's fitted values", () => {
    const out = prob(labels, predictors, OMITTED, OMITTED);
    expectCleanCells(out);
    expect(out[0]).toEqual(["P(1)"]);
    expect(out).toHaveLength(33);
    for (let i = 0; i < 32; i++) {
      expectClose(out[1 + i][0], sigmoid(glm.spector.link[i]), R_TOLERANCE, `row ${i}`);
      expectClose(out[1 + i][0], spector.stata.phat[i], STATA_TOLERANCE, `Stata phat row ${i}`);
    }
  });

  test("a skipped row keeps its place as a blank; a row with a blank label is still scored", () => {
    const gpa: (number | null)[] = [...d.GPA];
    gpa[4] = null; // row 6 of the sheet: cannot be scored
    const grade: (number | null)[] = [...d.GRADE, null]; // an extra row to predict, label left blank
    const out = prob(
      column("GRADE", grade),
      table({ GPA: [...gpa, 3.0], TUCE: [...d.TUCE, 22], PSI: [...d.PSI, 1] }),
      OMITTED,
      OMITTED,
    );
    expectCleanCells(out);
    expect(out).toHaveLength(34);
    expect(out[5]).toEqual([""]);
    // The refit without row 5 differs from R's full fit, so compare the unlabeled row with the fit's own
    // coefficients: it must equal the probability of the same predictors passed as a new row.
    const asNew = prob(column("GRADE", grade), table({ GPA: [...gpa, 3.0], TUCE: [...d.TUCE, 22], PSI: [...d.PSI, 1] }), table({ GPA: [3.0], TUCE: [22], PSI: [1] }), OMITTED);
    expect(out[33][0]).toBe(asNew[1][0]);
  });

  test("new rows are matched to the training columns by header name, in any order", () => {
    const rows = table({ PSI: [1, 0], GPA: [3.2, 2.5], TUCE: [25, 19], note: ["x", "y"] });
    const out = prob(labels, predictors, rows, OMITTED);
    expect(out).toHaveLength(3);
    expectClose(out[1][0], sigmoid(eta(3.2, 25, 1)), R_TOLERANCE, "new row 1");
    expectClose(out[2][0], sigmoid(eta(2.5, 19, 0)), R_TOLERANCE, "new row 2");
  });

  test("a new row with a category not seen in training is blank; the other rows are scored", () => {
    const track = d.PSI.map((v) => (v === 1 ? "new method" : "lecture"));
    const train = table({ GPA: d.GPA, TUCE: d.TUCE, track });
    const rows = table({ GPA: [3.2, 3.2], TUCE: [25, 25], track: ["new method", "seminar"] });
    const out = prob(labels, train, rows, OMITTED);
    expectCleanCells(out);
    expectClose(out[1][0], sigmoid(eta(3.2, 25, 1)), R_TOLERANCE, "known category");
    expect(out[2]).toEqual([""]);
  });

  test("ranges without a header row give output without one, so rows still line up", () => {
    const out = prob(d.GRADE.map((g) => [g]), d.GPA.map((g, i) => [g, d.TUCE[i], d.PSI[i]]), OMITTED, OMITTED);
    expect(out).toHaveLength(32);
    expectClose(out[0][0], sigmoid(glm.spector.link[0]), R_TOLERANCE, "first row");
  });

  test("several classes: one column per class, as statsmodels' MNLogit probabilities", () => {
    const out = prob(column("PID", anes.y), table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]]))), OMITTED, OMITTED);
    expectCleanCells(out);
    expect(out[0]).toEqual(["P(0)", "P(1)", "P(2)", "P(3)", "P(4)", "P(5)", "P(6)"]);
    expect(out).toHaveLength(945);
    anes.statsmodels.probabilitiesFirstRows.forEach((ref, i) => {
      for (let k = 0; k < 7; k++) expectClose(out[1 + i][k], ref[k], 1e-6, `row ${i} class ${k}`);
    });
    for (const row of out.slice(1)) expectClose((row as number[]).reduce((a, b) => a + b, 0), 1, 1e-12, "row sum");
  });

  test("a fit without usable estimates (separation) is #N/A with the reason", () => {
    const x = [0, 0, 0, 1, 1, 1];
    const f = failure(() => prob(column("y", x), column("x", x), OMITTED, OMITTED));
    expect(f.cellError).toBe("#N/A");
    expect(f.message).toContain('"x"');
  });

  test("new rows missing a training column are #VALUE! with the columns expected", () => {
    const f = failure(() => prob(labels, predictors, table({ GPA: [3], PSI: [1] }), OMITTED));
    expect(f.cellError).toBe("#VALUE!");
    expect(f.message).toContain("TUCE");
  });
});

describe("ODDS.CLASS", () => {
  test("two classes: the positive class from probability 0.5, named in the header", () => {
    const out = predictClass(labels, predictors, OMITTED, OMITTED);
    expectCleanCells(out);
    expect(out[0]).toEqual(["predicted class (threshold 0.5)"]);
    for (let i = 0; i < 32; i++) expect(out[1 + i][0]).toBe(sigmoid(glm.spector.link[i]) >= 0.5 ? "1" : "0");
  });

  test("threshold=0.3 predicts the positive class from 0.3 on", () => {
    const out = predictClass(labels, predictors, OMITTED, [["threshold", 0.3]]);
    expect(out[0]).toEqual(["predicted class (threshold 0.3)"]);
    for (let i = 0; i < 32; i++) expect(out[1 + i][0]).toBe(sigmoid(glm.spector.link[i]) >= 0.3 ? "1" : "0");
  });

  test("several classes: the most probable class", () => {
    const out = predictClass(column("PID", anes.y), table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]]))), OMITTED, OMITTED);
    anes.statsmodels.probabilitiesFirstRows.forEach((ref, i) => {
      const best = ref.indexOf(Math.max(...ref));
      expect(out[1 + i][0]).toBe(String(best));
    });
  });

  test("a threshold with several classes is #VALUE! rather than silently ignored", () => {
    const f = failure(() =>
      predictClass(column("PID", anes.y), table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]]))), OMITTED, [["threshold=0.3"]]),
    );
    expect(f.code).toBe("BAD_OPTION_VALUE");
    expect(f.message).toBe(
      formatMessage("BAD_OPTION_VALUE", {
        name: "threshold",
        value: 0.3,
        expected:
          "A threshold applies to two classes only; with several classes each row gets its most probable class. Remove the threshold option.",
      }),
    );
  });
});

describe("ODDS.MARGIN", () => {
  test("two classes: |P(positive) - threshold|", () => {
    const out = margin(labels, predictors, OMITTED, [["threshold=0.4"]]);
    expectCleanCells(out);
    expect(out[0]).toEqual(["margin |P(1) - 0.4|"]);
    for (let i = 0; i < 32; i++) expectClose(out[1 + i][0], Math.abs(sigmoid(glm.spector.link[i]) - 0.4), R_TOLERANCE, `row ${i}`);
  });

  test("several classes: the gap between the two most probable classes", () => {
    const out = margin(column("PID", anes.y), table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]]))), OMITTED, OMITTED);
    anes.statsmodels.probabilitiesFirstRows.forEach((ref, i) => {
      const sorted = [...ref].sort((a, b) => b - a);
      expectClose(out[1 + i][0], sorted[0] - sorted[1], 1e-5, `row ${i}`);
    });
  });
});
