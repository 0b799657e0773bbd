/**
 * Diagnostics of the multi-class fit: separation, aliasing, empty classes, too few rows,
 * non-convergence, skipped rows, bad input and options, penalized and symmetric fits.
 */
import { fitMulticlassModel } from "../../../src/engine/multiclass";
import { OddsmithError } from "../../../src/engine/messages";
import type { ModelFit } from "../../../src/engine/types";
import { designOf, expectAllClose, flat, loadMulticlassFixture } from "./multiclassHelpers";

/** Two fits of the same data that differ only in bookkeeping agree to the 1e-10 convergence rule. */
const SAME_FIT_REL = 1e-8;

function codes(fit: ModelFit): string[] {
  return fit.diagnostics.map((d) => d.code);
}
function thrownCode(f: () => unknown): string {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(OddsmithError);
    return (e as OddsmithError).code;
  }
  throw new Error("expected an OddsmithError");
}
function expectNoNumbers(fit: ModelFit): void {
  expect(fit.coefficients.every((b) => Array.from(b).every(Number.isNaN))).toBe(true);
  expect(fit.table.every((r) => Number.isNaN(r.estimate) && Number.isNaN(r.standardError) && Number.isNaN(r.p))).toBe(true);
  expect(fit.covariance).toBeNull();
}

const three = ["a", "b", "c"];

describe("separation", () => {
  const iris = loadMulticlassFixture("iris.json");
  const irisX = designOf(iris.X, iris.columns);
  const irisY = Int32Array.from(iris.y);

  test("Fisher's iris: setosa is separable; the error names setosa, the columns and its 50 rows, and no estimates are shown", () => {
    // R's multinom on the same data runs off to coefficients of about 26 (recorded in iris.json).
    expect(Math.max(...flat(iris.multinomCoefficients).map(Math.abs))).toBeGreaterThan(20);
    const fit = fitMulticlassModel(irisX, irisY, iris.classes);
    const sep = fit.diagnostics.find((d) => d.code === "CLASSES_SEPARATED")!;
    expect(sep).toBeDefined();
    expect(sep.severity).toBe("error");
    expect(sep.message).toContain('Class "setosa" (from every other class) can be told apart perfectly by');
    expect(sep.rows).toEqual(Array.from({ length: 50 }, (_, i) => i));
    expect(sep.columns).toContain("Petal.Length");
    expect(sep.message).toContain("for example rows 1, 2, 3, 4, 5, ...");
    expect(fit.converged).toBe(false);
    expectNoNumbers(fit);
    // The log-likelihood keeps the supremum the iterations approached (as the binary engine does).
    expect(fit.logLikelihood).toBeLessThan(0);
    expect(fit.logLikelihood).toBeGreaterThan(-iris.multinomDeviance / 2 - 1e-3);
  });

  test("iris with a penalty has finite estimates and no separation error", () => {
    const fit = fitMulticlassModel(irisX, irisY, iris.classes, { penalty: 1 });
    expect(codes(fit)).toEqual(["PENALIZED_NO_P_VALUES"]);
    expect(flat(fit.coefficients).every(Number.isFinite)).toBe(true);
  });

  test("complete separation of every class by one column is reported for every class", () => {
    const x = [0, 0.2, 0.4, 0.6, 1.0, 1.2, 1.4, 1.6, 2.0, 2.2, 2.4, 2.6];
    const y = Int32Array.from([0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2]);
    const fit = fitMulticlassModel(designOf([x], ["x"]), y, three);
    const sep = fit.diagnostics.find((d) => d.code === "CLASSES_SEPARATED")!;
    expect(sep.message).toContain('Every class ("a", "b" and "c") from every other');
    expect(sep.columns).toEqual(["x"]);
    expect(sep.rows).toHaveLength(12);
    expectNoNumbers(fit);
  });

  test("quasi-complete separation (class a never occurs with g = 1) names g and only the g = 1 rows", () => {
    const g = [0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 0, 0, 0, 1, 1, 1];
    const x = [0.1, 0.5, 0.9, 0.3, 0.7, 0.2, 0.4, 0.8, 0.6, 0.1, 0.9, 0.5, 0.3, 0.2, 0.7, 0.6, 0.4, 0.8];
    const y = Int32Array.from([0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2]);
    const fit = fitMulticlassModel(designOf([g, x], ["g", "x"]), y, three);
    const sep = fit.diagnostics.find((d) => d.code === "CLASSES_SEPARATED")!;
    expect(sep.severity).toBe("error");
    expect(sep.columns).toEqual(["g"]);
    expect(sep.rows).toEqual([9, 10, 11, 15, 16, 17]);
    expect(sep.message).toContain('Some rows of "b" and "c" (from "a")');
    expectNoNumbers(fit);
  });

  test("two groups of classes split by a column (a, b left of 0; c, d right) name the separated pairs and all rows", () => {
    const x = [-3, -2.5, -2, -1.5, -1, -0.5, -2.8, -2.2, -1.7, -1.2, -0.8, -0.3, 0.4, 0.9, 1.5, 2.0, 2.6, 3.1, 0.6, 1.1, 1.6, 2.2, 2.7, 3.3];
    const z = [0.2, 1.1, -0.4, 0.8, -1.0, 0.5, -0.3, 0.9, 1.4, -0.8, 0.1, 0.6, 0.7, -0.2, 1.0, -0.9, 0.4, 0.3, -0.6, 1.2, 0.0, -0.5, 0.9, -1.1];
    const y = Int32Array.from([0, 1, 0, 1, 0, 1, 1, 0, 1, 0, 1, 0, 2, 3, 2, 3, 2, 3, 3, 2, 3, 2, 3, 2]);
    const fit = fitMulticlassModel(designOf([x, z], ["x", "z"]), y, ["a", "b", "c", "d"]);
    const sep = fit.diagnostics.find((d) => d.code === "CLASSES_SEPARATED")!;
    expect(sep.severity).toBe("error");
    // The gap between the groups lets the separating hyperplane tilt along z too: the diverging
    // direction is not unique, so x must be named and z may be.
    expect(sep.columns).toContain("x");
    expect(sep.message).toContain('Classes "a" and "c", classes "a" and "d", classes "b" and "c" and classes "b" and "d"');
    expect(sep.rows).toHaveLength(24);
    expectNoNumbers(fit);
  });

  test("two classes that never meet but are bridged by a third overlapping both are not separation", () => {
    // a: x in [0, 1]; b: x in [0.5, 2.5]; c: x in [2, 3]. A direction pushing a away from c would
    // have to push b away from a or c too, which the overlap forbids: the estimates are finite.
    const x = [0, 0.2, 0.4, 0.6, 0.8, 1.0, 0.5, 0.9, 1.3, 1.7, 2.1, 2.5, 2.0, 2.2, 2.4, 2.6, 2.8, 3.0];
    const y = Int32Array.from([0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2]);
    const fit = fitMulticlassModel(designOf([x], ["x"]), y, three);
    expect(fit.diagnostics).toEqual([]);
    expect(fit.converged).toBe(true);
    expect(flat(fit.coefficients).every((v) => Number.isFinite(v) && Math.abs(v) < 50)).toBe(true);
  });
});

describe("aliased columns", () => {
  const anes = loadMulticlassFixture("anes96.json");
  const cols: number[][] = anes.X;
  const y = Int32Array.from(anes.y);

  test("a column that is the sum of two others is named, dropped, and NaN with estimable=false", () => {
    const sum = cols[1].map((v: number, i: number) => v + cols[2][i]);
    const X = designOf([...cols, sum], [...anes.columns, "selfLR+age"]);
    const fit = fitMulticlassModel(X, y, anes.classes);
    const d = fit.diagnostics.find((x) => x.code === "ALIASED_COLUMNS")!;
    expect(d.severity).toBe("warning");
    expect(d.columns).toEqual(["selfLR+age"]);
    expect(fit.aliased).toEqual([false, false, false, false, false, false, true]);
    const rows = fit.table.filter((r) => r.term === "selfLR+age");
    expect(rows).toHaveLength(6);
    expect(rows.every((r) => !r.estimable && Number.isNaN(r.estimate) && Number.isNaN(r.standardError))).toBe(true);
    expect(fit.parameters).toBe(36);
    // The remaining estimates are those of the fit without the column.
    const plain = fitMulticlassModel(designOf(cols, anes.columns), y, anes.classes);
    const kept = fit.table.filter((r) => r.estimable).map((r) => r.estimate);
    expectAllClose("coefficient", kept, plain.table.map((r) => r.estimate), SAME_FIT_REL);
    // Covariance rows of the aliased term are NaN, the others match.
    const m = 6 * 7;
    expect(Number.isNaN(fit.covariance![6 * m + 6])).toBe(true);
    expect(fit.covariance![1 * m + 1]).toBeCloseTo(plain.covariance![1 * 36 + 1], 10);
  });

  test("a constant column is aliased with the intercept", () => {
    const X = designOf([...cols, cols[0].map(() => 7)], [...anes.columns, "seven"]);
    const fit = fitMulticlassModel(X, y, anes.classes);
    expect(fit.diagnostics.find((x) => x.code === "ALIASED_COLUMNS")!.columns).toEqual(["seven"]);
    expect(fit.converged).toBe(true);
  });
});

describe("classes and rows", () => {
  const x = [0.3, 1.2, -0.5, 0.8, 2.1, -1.0, 0.1, 1.7, -0.2, 0.9];
  const y = Int32Array.from([0, 1, 0, 1, 1, 0, 2, 2, 0, 1]);

  test("a class with no rows is an error naming it, with no estimates", () => {
    const fit = fitMulticlassModel(designOf([x], ["x"]), y, ["a", "b", "c", "d"]);
    const d = fit.diagnostics.find((e) => e.code === "EMPTY_CLASS")!;
    expect(d.severity).toBe("error");
    expect(d.message).toContain('"d"');
    expectNoNumbers(fit);
  });

  test("a class whose rows all have weight 0 counts as a class with no rows", () => {
    const w = Float64Array.from(y, (c) => (c === 2 ? 0 : 1));
    const fit = fitMulticlassModel(designOf([x], ["x"]), y, three, { weights: w });
    expect(fit.diagnostics.find((e) => e.code === "EMPTY_CLASS")!.message).toContain('"c"');
  });

  test("fewer usable rows than coefficients per equation is TOO_FEW_ROWS (error)", () => {
    const X = designOf([[1, 2, 3], [3, 1, 2], [5, 5, 1]], ["p", "q", "r"]);
    const fit = fitMulticlassModel(X, Int32Array.from([0, 1, 2]), three);
    const d = fit.diagnostics.find((e) => e.code === "TOO_FEW_ROWS")!;
    expect(d.severity).toBe("error");
    expect(d.message).toBe("Only 3 usable rows for 4 parameters. Add rows, remove predictors, or set a penalty.");
    expectNoNumbers(fit);
  });

  test("rows with a missing predictor or a negative (missing) class are skipped and counted", () => {
    const xm = [...x, NaN, 0.4];
    const ym = Int32Array.from([...y, 1, -1]);
    const fit = fitMulticlassModel(designOf([xm], ["x"]), ym, three);
    const d = fit.diagnostics.find((e) => e.code === "ROWS_SKIPPED")!;
    expect(d.severity).toBe("warning");
    expect(d.message).toBe("2 rows were skipped because a used value was missing (labels: 1, x: 1).");
    const clean = fitMulticlassModel(designOf([x], ["x"]), y, three);
    expectAllClose("coefficient", flat(fit.coefficients), flat(clean.coefficients), SAME_FIT_REL);
    expect(fit.rowsUsed).toBe(10);
  });

  test("no complete row at all is NO_USABLE_ROWS", () => {
    expect(thrownCode(() => fitMulticlassModel(designOf([[NaN, NaN]], ["x"]), Int32Array.from([0, 1]), three))).toBe("NO_USABLE_ROWS");
  });

  test("a single class among the usable rows is ONE_CLASS_ONLY", () => {
    expect(thrownCode(() => fitMulticlassModel(designOf([x], ["x"]), new Int32Array(10), three))).toBe("ONE_CLASS_ONLY");
  });

  test("a class number outside the class list is CLASS_INDEX_OUT_OF_RANGE with the row", () => {
    const bad = Int32Array.from(y);
    bad[4] = 3;
    try {
      fitMulticlassModel(designOf([x], ["x"]), bad, three);
      throw new Error("no error");
    } catch (e) {
      expect((e as OddsmithError).code).toBe("CLASS_INDEX_OUT_OF_RANGE");
      expect((e as OddsmithError).message).toContain("Row 5 has class number 3");
    }
  });

  test("a negative or non-finite weight is BAD_WEIGHT", () => {
    const w = new Float64Array(10).fill(1);
    w[2] = -1;
    expect(thrownCode(() => fitMulticlassModel(designOf([x], ["x"]), y, three, { weights: w }))).toBe("BAD_WEIGHT");
    w[2] = NaN;
    expect(thrownCode(() => fitMulticlassModel(designOf([x], ["x"]), y, three, { weights: w }))).toBe("BAD_WEIGHT");
  });

  test("labels, weights or columns of another length are RANGE_SHAPE_MISMATCH", () => {
    expect(thrownCode(() => fitMulticlassModel(designOf([x], ["x"]), y.subarray(0, 9), three))).toBe("RANGE_SHAPE_MISMATCH");
    expect(thrownCode(() => fitMulticlassModel(designOf([x], ["x"]), y, three, { weights: new Float64Array(3) }))).toBe("RANGE_SHAPE_MISMATCH");
  });
});

describe("options", () => {
  const anes = loadMulticlassFixture("anes96.json");
  const X = designOf(anes.X, anes.columns);
  const y = Int32Array.from(anes.y);

  test("not converging within the iteration cap is a warning that keeps the last estimate (one severity policy with the binary fit)", () => {
    const fit = fitMulticlassModel(X, y, anes.classes, { maxIterations: 1 });
    const d = fit.diagnostics.find((e) => e.code === "NOT_CONVERGED")!;
    expect(d.severity).toBe("warning");
    expect(d.message).toContain("did not converge in 1 iteration ("); // singular (issue 12, point 8)
    expect(fit.converged).toBe(false);
    expect(fit.iterations).toBe(1);
    expect(fit.coefficients.every((b) => Array.from(b).every(Number.isFinite))).toBe(true);
    // The estimate after one step is not the converged one.
    const full = fitMulticlassModel(X, y, anes.classes);
    expect(full.converged).toBe(true);
    expect(Math.abs(fit.logLikelihood - full.logLikelihood)).toBeGreaterThan(1e-6);
    expect(fit.logLikelihood).toBeLessThan(full.logLikelihood);
  });

  test("the symmetric form without a penalty is refused with SYMMETRIC_NEEDS_PENALTY", () => {
    expect(thrownCode(() => fitMulticlassModel(X, y, anes.classes, { form: "symmetric" }))).toBe("SYMMETRIC_NEEDS_PENALTY");
    expect(thrownCode(() => fitMulticlassModel(X, y, anes.classes, { form: "symmetric", penalty: 0 }))).toBe("SYMMETRIC_NEEDS_PENALTY");
  });

  test("the symmetric form is labelled: K equations, no reference class, no covariance, NaN SE and p, sum-to-zero coefficients", () => {
    const fit = fitMulticlassModel(X, y, anes.classes, { form: "symmetric", penalty: 4 });
    expect(fit.form).toBe("symmetric");
    expect(fit.referenceClass).toBe("");
    expect(fit.equationClasses).toEqual(anes.classes);
    expect(fit.coefficients).toHaveLength(7);
    expect(fit.covariance).toBeNull();
    expect(fit.penalized).toBe(true);
    expect(codes(fit)).toEqual(["PENALIZED_NO_P_VALUES"]);
    expect(fit.table.every((r) => Number.isNaN(r.standardError) && Number.isNaN(r.p) && Number.isNaN(r.lower))).toBe(true);
    expect(fit.table.every((r) => Math.abs(r.ratio - Math.exp(r.estimate)) < 1e-12 * r.ratio)).toBe(true);
    for (let t = 0; t < fit.terms.length; t++) {
      const s = fit.coefficients.reduce((acc, b) => acc + b[t], 0);
      expect(Math.abs(s)).toBeLessThan(1e-9);
    }
    expect(Number.isNaN(fit.lrTest.p)).toBe(true);
  });

  test("a penalty in the reference form shrinks the coefficients and drops classical inference", () => {
    const plain = fitMulticlassModel(X, y, anes.classes);
    const fit = fitMulticlassModel(X, y, anes.classes, { penalty: 50 });
    expect(codes(fit)).toEqual(["PENALIZED_NO_P_VALUES"]);
    const slopes = (f: ModelFit) => f.coefficients.flatMap((b) => Array.from(b).slice(1));
    const norm = (v: number[]) => Math.hypot(...v);
    expect(norm(slopes(fit))).toBeLessThan(norm(slopes(plain)));
    expect(fit.table.every((r) => Number.isNaN(r.p))).toBe(true);
    expect(fit.logLikelihood).toBeLessThan(plain.logLikelihood);
  });

  test("two-class-only options (offset, bias reduction, profile intervals) are refused", () => {
    expect(thrownCode(() => fitMulticlassModel(X, y, anes.classes, { offset: new Float64Array(944) }))).toBe("BAD_OPTION_VALUE");
    expect(thrownCode(() => fitMulticlassModel(X, y, anes.classes, { biasReduction: true }))).toBe("BAD_OPTION_VALUE");
    expect(thrownCode(() => fitMulticlassModel(X, y, anes.classes, { intervalMethod: "profile" }))).toBe("BAD_OPTION_VALUE");
  });

  test("out-of-range option values are BAD_OPTION_VALUE", () => {
    expect(thrownCode(() => fitMulticlassModel(X, y, anes.classes, { penalty: -1 }))).toBe("BAD_OPTION_VALUE");
    expect(thrownCode(() => fitMulticlassModel(X, y, anes.classes, { reference: 7 }))).toBe("BAD_OPTION_VALUE");
    expect(thrownCode(() => fitMulticlassModel(X, y, anes.classes, { level: 1 }))).toBe("BAD_OPTION_VALUE");
  });

  test("a 90% level narrows the Wald intervals to estimate +/- 1.645 SE", () => {
    const fit = fitMulticlassModel(X, y, anes.classes, { level: 0.9 });
    const r = fit.table[1];
    expect(r.upper - r.estimate).toBeCloseTo(1.6448536269514722 * r.standardError, 12);
  });

  test("without an intercept the null model is 1/K for every class and the LR test counts every coefficient", () => {
    const fit = fitMulticlassModel(X, y, anes.classes, { intercept: false });
    expect(fit.terms).toEqual(anes.columns);
    expect(fit.nullLogLikelihood).toBeCloseTo(944 * Math.log(1 / 7), 9);
    expect(fit.lrTest.df).toBe(30);
    expect(fit.converged).toBe(true);
  });
});

describe("numerical range", () => {
  test("predictors in the millions do not overflow the softmax", () => {
    const x = [1e6, 2e6, 3e6, 4e6, 5e6, 6e6, 7e6, 8e6, 9e6, 1e7, 1.1e7, 1.2e7];
    const y = Int32Array.from([0, 1, 0, 2, 1, 0, 2, 1, 2, 0, 2, 1]);
    const fit = fitMulticlassModel(designOf([x], ["big"]), y, three);
    expect(fit.converged).toBe(true);
    expect(flat(fit.coefficients).every(Number.isFinite)).toBe(true);
    expect(Number.isFinite(fit.logLikelihood)).toBe(true);
  });
});
