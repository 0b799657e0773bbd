/**
 * ODDS.FIT called as Excel calls it, checked against the engine's reference fixtures:
 * - Spector & Mazzeo (1980) grades data: R glm (test/fixtures/binary/glm-references.json) and the
 *   Stata 11 results printed in statsmodels' results_discrete.py (test/fixtures/binary/spector.json);
 * - ANES 1996 party identification, 7 classes: Stata 11 mlogit via statsmodels
 *   (test/fixtures/multiclass/anes96.json);
 * - brglm2 Firth fits (endometrial data of Heinze & Schemper 2002; a 2x2 separated table);
 * - scikit-learn ridge fits (test/fixtures/binary/ridge.json).
 */
import * as glm from "../../fixtures/binary/glm-references.json";
import * as spector from "../../fixtures/binary/spector.json";
import * as anes from "../../fixtures/multiclass/anes96.json";
import * as ridge from "../../fixtures/binary/ridge.json";
import { formatMessage } from "../../../src/shared/messages";
import { fit } from "../../../src/functions/functions";
import { sharedFitCache } from "../../../src/shared/fitCache";
import { OMITTED, column, expectClose, expectCleanCells, failure, table, type Range } from "./excel";

/**
 * Our IRLS stops at a relative deviance change below 1e-10 and R's glm ran to 1e-14; coefficients and
 * SEs then agree to about 1e-9 relative (observed ~1e-12). 1e-7 leaves room without hiding a wrong formula.
 */
const R_TOLERANCE = 1e-7;
/** Stata held the Spector and ANES data in single precision and printed 8-10 digits: about 1e-6 relative. */
const STATA_TOLERANCE = 2e-6;
/** Profile-likelihood interval ends found by root search to ~1e-8 in the deviance. */
const PROFILE_TOLERANCE = 1e-5;

const d = spector.data;
const spectorLabels = column("GRADE", d.GRADE);
const spectorPredictors = table({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI });
const HEADER = [
  "class (positive: 1)",
  "term",
  "coefficient",
  "std. error",
  "z",
  "p",
  "lower 95%",
  "upper 95%",
  "odds ratio",
  "OR lower 95%",
  "OR upper 95%",
];

beforeEach(() => sharedFitCache().clear());

describe("ODDS.FIT, two classes (Spector grades data)", () => {
  const out = fit(spectorLabels, spectorPredictors, OMITTED);

  test("spills a header row and one row per term, intercept first, with clean cells", () => {
    expectCleanCells(out);
    expect(out[0]).toEqual(HEADER);
    expect(out.slice(1).map((r) => r[1])).toEqual(["(intercept)", "GPA", "TUCE", "PSI"]);
    expect(out.slice(1).every((r) => r[0] === "1")).toBe(true);
    expect(out).toHaveLength(5);
  });

  test("coefficients, standard errors and p-values agree with R's glm", () => {
    const ref = glm.spector;
    for (let j = 0; j < 4; j++) {
      expectClose(out[1 + j][2], ref.coefficients[j], R_TOLERANCE, `coef ${ref.terms[j]}`);
      expectClose(out[1 + j][3], ref.standardErrors[j], R_TOLERANCE, `SE ${ref.terms[j]}`);
      expectClose(out[1 + j][4], ref.coefficients[j] / ref.standardErrors[j], R_TOLERANCE, `z ${ref.terms[j]}`);
      expectClose(out[1 + j][5], ref.pValues[j], R_TOLERANCE, `p ${ref.terms[j]}`);
    }
  });

  test("agrees with the published Stata 11 results (single-precision data)", () => {
    // Stata's order is GPA, TUCE, PSI, const.
    const order = [3, 0, 1, 2];
    for (let j = 0; j < 4; j++) {
      expectClose(out[1 + j][2], spector.stata.params[order[j]], STATA_TOLERANCE, `Stata coef ${j}`);
      expectClose(out[1 + j][3], spector.stata.bse[order[j]], STATA_TOLERANCE, `Stata SE ${j}`);
      expectClose(out[1 + j][4], spector.stata.z[order[j]], STATA_TOLERANCE, `Stata z ${j}`);
    }
  });

  test("Wald 95% intervals agree with statsmodels' conf_int; odds ratios are their exponentials", () => {
    const ci = spector.statsmodels.conf_int_95; // GPA, TUCE, PSI, const; lower/upper pairs
    const order = [3, 0, 1, 2];
    for (let j = 0; j < 4; j++) {
      const row = out[1 + j];
      expectClose(row[6], ci[2 * order[j]], R_TOLERANCE, `lower ${j}`);
      expectClose(row[7], ci[2 * order[j] + 1], R_TOLERANCE, `upper ${j}`);
      expectClose(row[8], Math.exp(row[2] as number), 1e-15, `OR ${j}`);
      expectClose(row[9], Math.exp(row[6] as number), 1e-15, `OR lower ${j}`);
      expectClose(row[10], Math.exp(row[7] as number), 1e-15, `OR upper ${j}`);
    }
  });

  test("threshold= is accepted and changes nothing (one options cell can serve every function)", () => {
    expect(fit(spectorLabels, spectorPredictors, [["threshold=0.3"]])).toEqual(out);
  });

  test("level=0.9 relabels and narrows the intervals", () => {
    const o = fit(spectorLabels, spectorPredictors, [["level=0.9"]]);
    expect(o[0][6]).toBe("lower 90%");
    expect(o[0][9]).toBe("OR lower 90%");
    const z90 = 1.6448536269514722; // qnorm(0.95), from memory
    expectClose(o[2][6], glm.spector.coefficients[1] - z90 * glm.spector.standardErrors[1], R_TOLERANCE, "GPA lower 90%");
  });

  test("interval=profile gives profile-likelihood intervals (R, exact root search)", () => {
    const o = fit(spectorLabels, spectorPredictors, [["interval", "profile"]]);
    expect(o[0][6]).toBe("lower 95% (profile)");
    const ref = glm.spector.exactProfile95;
    for (let j = 0; j < 4; j++) {
      expectClose(o[1 + j][6], ref[2 * j], PROFILE_TOLERANCE, `profile lower ${j}`);
      expectClose(o[1 + j][7], ref[2 * j + 1], PROFILE_TOLERANCE, `profile upper ${j}`);
    }
  });

  test("text labels with positive= choose the modelled class and name it in every row", () => {
    const labels = column("result", d.GRADE.map((g) => (g === 1 ? "improved" : "same")));
    const o = fit(labels, spectorPredictors, [["positive", "same"]]);
    expect(o[0][0]).toBe("class (positive: same)");
    expect(o.slice(1).every((r) => r[0] === "same")).toBe(true);
    // Modelling the other class negates every coefficient.
    for (let j = 0; j < 4; j++) expectClose(o[1 + j][2], -glm.spector.coefficients[j], R_TOLERANCE, `negated ${j}`);
  });

  test("a predictor text column becomes indicator terms against its first category", () => {
    const track = d.PSI.map((v) => (v === 1 ? "new method" : "lecture"));
    const o = fit(spectorLabels, table({ GPA: d.GPA, TUCE: d.TUCE, track }), OMITTED);
    expect(o[4][1]).toBe("track=new method");
    expectClose(o[4][2], glm.spector.coefficients[3], R_TOLERANCE, "indicator coefficient");
  });

  test("rows with a blank predictor are skipped and reported under the table", () => {
    const gpa: (number | null)[] = [...d.GPA, null];
    const o = fit(column("GRADE", [...d.GRADE, 1]), table({ GPA: gpa, TUCE: [...d.TUCE, 20], PSI: [...d.PSI, 1] }), OMITTED);
    expectCleanCells(o);
    expectClose(o[2][2], glm.spector.coefficients[1], R_TOLERANCE, "same fit without the blank row");
    expect(o[5]).toEqual(["", "", "", "", "", "", "", "", "", "", ""]);
    expect(o[6][0]).toBe(formatMessage("ROWS_SKIPPED", { count: 1, detail: "GPA: 1" }));
  });

  test("firth=true matches brglm2's bias-reduced fit", () => {
    const o = fit(spectorLabels, spectorPredictors, [["firth=true"]]);
    const ref = glm.spector.firth;
    for (let j = 0; j < 4; j++) {
      expectClose(o[1 + j][2], ref.coefficients[j], 1e-6, `Firth coef ${j}`);
      expectClose(o[1 + j][3], ref.standardErrors[j], 1e-6, `Firth SE ${j}`);
    }
  });

  test("a penalty leaves SE, z, p and intervals blank and says why below the table", () => {
    const o = fit(spectorLabels, spectorPredictors, [["penalty=1"]]);
    expectCleanCells(o);
    for (let j = 1; j <= 4; j++) {
      expect(typeof o[j][2]).toBe("number");
      expect(o[j].slice(3, 8)).toEqual(["", "", "", "", ""]);
      expect(typeof o[j][8]).toBe("number");
    }
    expect(o.some((r) => r[0] === formatMessage("PENALIZED_NO_P_VALUES", { penalty: 1 }))).toBe(true);
  });

  test("penalty on the original scale matches scikit-learn's L2 fit", () => {
    const c = ridge.cases.find((x) => x.penalty === 0.5 && x.penaltyScale === "original" && !x.weighted);
    if (!c) throw new Error("fixture case missing");
    const r = ridge.data;
    const o = fit(column("y", r.y), table({ x1: r.x1, x2: r.x2, x3: r.x3, x4: r.x4 }), [["penalty", 0.5], ["scale", "original"]]);
    for (let j = 0; j < 5; j++) expectClose(o[1 + j][2], c.coefficients[j], 1e-6, `ridge coef ${j}`);
  });
});

describe("ODDS.FIT, separation", () => {
  const x = [0, 0, 0, 1, 1, 1];
  test("complete separation without a remedy is #N/A naming the column", () => {
    const f = failure(() => fit(column("y", x), column("x", x), OMITTED));
    expect(f.cellError).toBe("#N/A");
    expect(["SEPARATION_COMPLETE", "SEPARATION_QUASI"]).toContain(f.code);
    expect(f.message).toContain('"x"');
  });

  test("firth=true on the separated 2x2 table gives slope log 49 and intercept log(1/7) (analytic)", () => {
    const o = fit(column("y", x), column("x", x), [["firth", true]]);
    expectClose(o[1][2], Math.log(1 / 7), 1e-8, "intercept");
    expectClose(o[2][2], Math.log(49), 1e-8, "slope");
    expectClose(o[2][3], glm.firthTiny.standardErrors[1], 1e-6, "slope SE (brglm2)");
  });

  test("endometrial data (NV separates): Firth fit agrees with brglm2", () => {
    const e = glm.endometrial.data;
    const o = fit(column("HG", e.map((r) => r.HG)), table({ NV: e.map((r) => r.NV), PI: e.map((r) => r.PI), EH: e.map((r) => r.EH) }), [["firth=yes"]]);
    for (let j = 0; j < 4; j++) expectClose(o[1 + j][2], glm.endometrial.firth.coefficients[j], 1e-6, `endometrial ${j}`);
  });
});

describe("ODDS.FIT, several classes (ANES 1996, 7 classes, Stata 11 mlogit)", () => {
  const labels = column("PID", anes.y);
  const predictors = table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]])));
  const out = fit(labels, predictors, OMITTED);

  test("header names the reference class; one row per class and term; relative-risk ratios", () => {
    expectCleanCells(out);
    expect(out[0][0]).toBe("class (reference: 0)");
    expect(out[0][8]).toBe("relative-risk ratio");
    expect(out).toHaveLength(1 + 6 * 6);
    expect(out[1].slice(0, 2)).toEqual(["1", "(intercept)"]);
    expect(out[36].slice(0, 2)).toEqual(["6", "income"]);
  });

  test("coefficients and standard errors agree with Stata's printed results", () => {
    for (let k = 0; k < 6; k++) {
      for (let j = 0; j < 6; j++) {
        const row = out[1 + 6 * k + j];
        expectClose(row[2], anes.stata.coefficients[k][j], STATA_TOLERANCE, `coef ${k},${j}`);
        expectClose(row[3], anes.stata.standardErrors[k][j], STATA_TOLERANCE, `SE ${k},${j}`);
      }
    }
  });

  test("coefficients agree with statsmodels' MNLogit on the same doubles", () => {
    for (let k = 0; k < 6; k++) {
      for (let j = 0; j < 6; j++) {
        expectClose(out[1 + 6 * k + j][2], anes.statsmodels.coefficients[k][j], R_TOLERANCE, `coef ${k},${j}`);
      }
    }
  });

  test("reference= changes the reference class", () => {
    const o = fit(labels, predictors, [["reference=6"]]);
    expect(o[0][0]).toBe("class (reference: 6)");
    expect(o[1][0]).toBe("0");
  });
});

describe("ODDS.FIT, input problems", () => {
  test("an empty labels range is #VALUE! EMPTY_RANGE", () => {
    const f = failure(() => fit([[null], [null]], spectorPredictors, OMITTED));
    expect(f.cellError).toBe("#VALUE!");
    expect(f.code).toBe("EMPTY_RANGE");
    expect(f.message).toBe(formatMessage("EMPTY_RANGE", { argument: "labels" }));
  });

  test("labels of two columns is #VALUE! SINGLE_COLUMN_NEEDED", () => {
    const f = failure(() => fit(table({ a: d.GRADE, b: d.GRADE }), spectorPredictors, OMITTED));
    expect(f.code).toBe("SINGLE_COLUMN_NEEDED");
    expect(f.message).toBe(formatMessage("SINGLE_COLUMN_NEEDED", { argument: "labels", columns: 2 }));
  });

  test("ranges covering different rows are #VALUE! RANGE_SHAPE_MISMATCH", () => {
    const f = failure(() => fit(column("GRADE", d.GRADE.slice(0, 30)), spectorPredictors, OMITTED));
    expect(f.code).toBe("RANGE_SHAPE_MISMATCH");
  });

  test("a positive class that is not in the labels is #VALUE! CLASS_NOT_FOUND", () => {
    const f = failure(() => fit(spectorLabels, spectorPredictors, [["positive=2"]]));
    expect(f.code).toBe("CLASS_NOT_FOUND");
    expect(f.message).toBe(formatMessage("CLASS_NOT_FOUND", { role: "positive", label: "2", classes: '"0" and "1"' }));
  });

  test("options text that cannot be read is #VALUE! OPTION_SYNTAX", () => {
    const f = failure(() => fit(spectorLabels, spectorPredictors, [["penalty 0.1"]]));
    expect(f.code).toBe("OPTION_SYNTAX");
  });

  test("a bad option value is #VALUE! BAD_OPTION_VALUE", () => {
    const f = failure(() => fit(spectorLabels, spectorPredictors, [["interval=bootstrap"]]));
    expect(f.code).toBe("BAD_OPTION_VALUE");
    expect(f.message).toContain("wald or profile");
  });

  test("text in a numeric predictor column is #VALUE! NOT_A_NUMBER with its position", () => {
    const gpa: (number | string)[] = d.GPA.slice();
    gpa[4] = "4,0";
    const f = failure(() => fit(spectorLabels, table({ GPA: gpa, TUCE: d.TUCE, PSI: d.PSI }), OMITTED));
    expect(f.code).toBe("NOT_A_NUMBER");
    expect(f.message).toBe(formatMessage("NOT_A_NUMBER", { argument: "predictors", row: 6, column: 1, value: "4,0" }));
  });

  test("a label column of one class is #VALUE! ONE_CLASS_ONLY", () => {
    const f = failure(() => fit(column("y", d.GRADE.map(() => "yes")), spectorPredictors, OMITTED));
    expect(f.code).toBe("ONE_CLASS_ONLY");
  });

  test("a whole-column reference is #VALUE! RANGE_TOO_LARGE pointing to the task pane", () => {
    const whole: Range = Array.from({ length: 1_048_576 }, (_, i) => [i === 0 ? "GRADE" : i <= 32 ? d.GRADE[i - 1] : null]);
    const f = failure(() => fit(whole, spectorPredictors, OMITTED));
    expect(f.code).toBe("RANGE_TOO_LARGE");
    expect(f.message).toContain("task pane");
  });
});
