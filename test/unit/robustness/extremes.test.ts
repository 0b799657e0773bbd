/**
 * Numeric extremes, one test per case. The expected behaviour of each case is written in
 * docs/numeric-extremes.md (same order, same wording); the two are kept in step by hand.
 *
 * Where no outside reference is stored, a fit is checked against the definition of the maximum-
 * likelihood estimate itself: the score equations sum_i w_i x_ij (y_i - p_i) = 0 (McCullagh &
 * Nelder, Generalized Linear Models, 2nd ed., 1989, §4.4.2; multinomial: Agresti, Categorical Data
 * Analysis, 3rd ed., 2013, §8.1.4), and against exact invariances of that estimate.
 */
import { MAX_PARAMETERS, PROFILE_BUDGET, scoreRows, trainModel, type ModelOptions, type TrainedModel } from "../../../src/engine/model";
import { brierScore, calibrationSlope, logLoss, rocAuc } from "../../../src/engine/metrics";
import { DEFAULT_LOG_CLIP } from "../../../src/engine/numerics";
import { ALIAS_TOLERANCE } from "../../../src/engine/binary";
import { MAX_CLASSES } from "../../../src/engine/data/labels";
import { MAX_LEVELS } from "../../../src/engine/data/design";
import { CellFunctionFailure } from "../../../src/functions/cellError";
import * as ODDS from "../../../src/functions/functions";
import type { CellValue } from "../../../src/engine/types";
import { expectCleanSpill, type Range } from "./support";

/**
 * Score equations at the estimate, relative to sum_i w_i |x_ij| (the size of the terms being summed):
 * the fit stops when the relative deviance change is below 1e-10, after a Newton step that leaves
 * the gradient near rounding level (measured below 1e-12 on these data); 1e-7 leaves room for
 * machines and for ill-conditioned designs.
 */
const SCORE_REL_TOL = 1e-7;
/** A closed-form log-loss computed the same way in the test: only the summation order differs. */
const LOGLOSS_REL_TOL = 1e-9;
/** Two fits of the same likelihood by the same code path agree to rounding (measured ~1e-15); 1e-9 allows for a different number of Newton steps. */
const SAME_FIT_REL_TOL = 1e-9;

const col = (header: string, values: readonly CellValue[]): Range => [[header], ...values.map((v) => [v])];
const table = (names: string[], rows: CellValue[][]): Range => [names, ...rows];

function closeTo(got: number, want: number, rel: number, what: string): void {
  const tol = rel * Math.max(1e-300, Math.abs(want));
  if (!(Math.abs(got - want) <= tol)) throw new Error(`${what}: expected ${want}, got ${got}, tolerance ${tol}`);
}

function errorCodes(m: TrainedModel): string[] {
  return m.fit.diagnostics.filter((d) => d.severity === "error").map((d) => d.code);
}

function codes(m: TrainedModel): string[] {
  return m.fit.diagnostics.map((d) => d.code);
}

function cellFailure(f: () => unknown): CellFunctionFailure {
  try {
    f();
  } catch (e) {
    if (e instanceof CellFunctionFailure) return e;
    throw e;
  }
  throw new Error("expected a cell error");
}

/**
 * Check the score equations of a fitted model on its training rows: for each equation e (class c_e)
 * and each estimable term j, sum_i w_i x_ij (1[y_i = c_e] - p_ic_e) = 0 relative to sum_i w_i |x_ij|.
 */
function expectScoreEquations(m: TrainedModel, weights: number[] | null = null): void {
  expect(errorCodes(m)).toEqual([]);
  const labels = LABELS_OF.get(m) as readonly CellValue[];
  const s = scoreRows(m, null);
  const fit = m.fit;
  const X = m.design; // used rows only
  const usedRows: number[] = [];
  m.rowMap.forEach((r, i) => {
    if (r >= 0) usedRows[r] = i;
  });
  const off = fit.intercept ? 1 : 0;
  fit.equationClasses.forEach((cls, e) => {
    const k = fit.classes.indexOf(cls);
    for (let t = 0; t < fit.terms.length; t++) {
      if (fit.aliased[t]) continue;
      let g = 0;
      let size = 0;
      for (let r = 0; r < X.rows; r++) {
        const i = usedRows[r];
        const w = weights ? weights[i] : 1;
        const x = t < off ? 1 : X.columns[t - off][r];
        const y = String(labels[i]) === cls ? 1 : 0;
        const p = s.prediction.probabilities[k][i];
        g += w * x * (y - p);
        size += w * Math.abs(x);
      }
      if (!(Math.abs(g) <= SCORE_REL_TOL * size)) {
        throw new Error(`score equation of ${cls}/${fit.terms[t]}: ${g} (relative ${g / size}, tolerance ${SCORE_REL_TOL})`);
      }
    }
  });
}

/** Training labels of each model fitted through `train`, by data row. */
const LABELS_OF = new WeakMap<TrainedModel, readonly CellValue[]>();
function train(labels: CellValue[], predictors: Range, options: ModelOptions = {}): TrainedModel {
  const m = trainModel(col("y", labels), predictors, options);
  LABELS_OF.set(m, labels);
  return m;
}

/** Invented data: a moderately informative predictor, no separation. */
const X10 = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
const Y10 = [0, 0, 1, 0, 1, 0, 1, 1, 0, 1];

describe("numeric extremes: predictor magnitudes", () => {
  const base = train(Y10, col("x", X10));

  test("a predictor scaled by 1e150 gives the same intercept and the slope divided by 1e150", () => {
    const big = train(Y10, col("x", X10.map((v) => v * 1e150)));
    expect(codes(big)).toEqual([]);
    closeTo(big.fit.coefficients[0][0], base.fit.coefficients[0][0], SAME_FIT_REL_TOL, "intercept");
    closeTo(big.fit.coefficients[0][1], base.fit.coefficients[0][1] / 1e150, SAME_FIT_REL_TOL, "slope");
    closeTo(big.fit.table[1].standardError, base.fit.table[1].standardError / 1e150, SAME_FIT_REL_TOL, "slope SE");
    closeTo(big.fit.table[1].z, base.fit.table[1].z, SAME_FIT_REL_TOL, "z");
  });

  test("a predictor scaled by 1e-150 gives the same intercept and the slope multiplied by 1e150", () => {
    const small = train(Y10, col("x", X10.map((v) => v * 1e-150)));
    expect(codes(small)).toEqual([]);
    closeTo(small.fit.coefficients[0][0], base.fit.coefficients[0][0], SAME_FIT_REL_TOL, "intercept");
    closeTo(small.fit.coefficients[0][1], base.fit.coefficients[0][1] * 1e150, SAME_FIT_REL_TOL, "slope");
    closeTo(small.fit.table[1].z, base.fit.table[1].z, SAME_FIT_REL_TOL, "z");
  });

  test.each([1e300, 1e-300])("a predictor scaled by %p gives the same intercept, the slope divided by the scale and the same probabilities, or COEFFICIENT_OVERFLOW naming it", (scale) => {
    const m = train(Y10, col("x", X10.map((v) => v * scale)));
    if (errorCodes(m).includes("COEFFICIENT_OVERFLOW")) {
      // The slope's variance (about (0.25 / scale)^2) is beyond the double range: refused with advice, never shown wrong.
      expect(errorCodes(m)).toEqual(["COEFFICIENT_OVERFLOW"]);
      expect(m.fit.diagnostics[0].message).toContain('"x"');
      return;
    }
    expect(codes(m)).toEqual([]);
    closeTo(m.fit.coefficients[0][0], base.fit.coefficients[0][0], SAME_FIT_REL_TOL, "intercept");
    closeTo(m.fit.coefficients[0][1], base.fit.coefficients[0][1] / scale, SAME_FIT_REL_TOL, "slope");
    const p = scoreRows(m, null).prediction.probabilities[1];
    const q = scoreRows(base, null).prediction.probabilities[1];
    p.forEach((v, i) => closeTo(v, q[i], SAME_FIT_REL_TOL, `probability of row ${i}`));
  });

  test("one value of 1e300 among ordinary values is never called aliased: a fit solving the score equations, or its row reported as numerically separated", () => {
    // Exact MLE: slope about -6.9e-298, which gives that row a fitted probability near 1e-300 (numerically 0).
    const m = train(Y10, col("x", X10.map((v, i) => (i === 3 ? 1e300 : v))));
    expect(codes(m)).not.toContain("ALIASED_COLUMNS");
    if (errorCodes(m).length > 0) expect(errorCodes(m)).toEqual(["SEPARATION_QUASI"]);
    else expectScoreEquations(m);
  });

  test("-0 in a predictor is the same value as 0", () => {
    const zeros = [0, 0, 1, 0, 2, 0, 3, 0, 1, 2];
    const a = train(Y10, col("x", zeros));
    const b = train(Y10, col("x", zeros.map((v) => (v === 0 ? -0 : v))));
    expect(Array.from(b.fit.coefficients[0])).toEqual(Array.from(a.fit.coefficients[0]));
  });

  test("numeric text beyond the double range in a predictor ('1e999') is NOT_FINITE_VALUE naming the cell", () => {
    const e = cellFailure(() => ODDS.fit(col("y", Y10), col("x", X10.map((v, i) => (i === 3 ? "1e999" : v)))));
    expect([e.code, e.cellError]).toEqual(["NOT_FINITE_VALUE", "#VALUE!"]);
    expect(e.message).toContain("row 5, column 1");
  });
});

describe("numeric extremes: aliasing", () => {
  const base = train(Y10, col("x", X10));

  test("a constant column is aliased with the intercept: named in ALIASED_COLUMNS, blank in FIT, others unchanged", () => {
    for (const c of [5, 0, -0, 1e300, 1e-300]) {
      const m = train(Y10, table(["x", "c"], X10.map((v) => [v, c])));
      expect(codes(m)).toEqual(["ALIASED_COLUMNS"]);
      expect(m.fit.aliased).toEqual([false, false, true]);
      expect(m.fit.table[2].estimable).toBe(false);
      closeTo(m.fit.coefficients[0][1], base.fit.coefficients[0][1], SAME_FIT_REL_TOL, `slope beside constant ${c}`);
      const out = ODDS.fit(col("y", Y10), table(["x", "c"], X10.map((v) => [v, c])));
      expectCleanSpill(out, "FIT");
      expect(out[3].slice(1, 4)).toEqual(["c", "", ""]);
    }
  });

  test("without an intercept a constant column takes its place: coefficient x constant = intercept", () => {
    const m = train(Y10, table(["x", "c"], X10.map((v) => [v, 5])), { intercept: false });
    expect(codes(m)).toEqual([]);
    closeTo(m.fit.coefficients[0][1] * 5, base.fit.coefficients[0][0], SAME_FIT_REL_TOL, "constant x 5");
    closeTo(m.fit.coefficients[0][0], base.fit.coefficients[0][1], SAME_FIT_REL_TOL, "slope");
  });

  test("an exact linear combination (z = 2x + 1) is aliased and the other estimates are unchanged", () => {
    const m = train(Y10, table(["x", "z"], X10.map((v) => [v, 2 * v + 1])));
    expect(codes(m)).toEqual(["ALIASED_COLUMNS"]);
    expect(m.fit.diagnostics[0].columns).toEqual(["z"]);
    closeTo(m.fit.coefficients[0][1], base.fit.coefficients[0][1], SAME_FIT_REL_TOL, "slope of x");
  });

  test(`near collinearity within the alias tolerance (1 - R^2 <= ${ALIAS_TOLERANCE}) is aliased`, () => {
    // z = 2x + 1 + 1e-6 * (0, 1 or 2): 1 - R^2 of z on (1, x) is about 1e-13.
    const m = train(Y10, table(["x", "z"], X10.map((v, i) => [v, 2 * v + 1 + 1e-6 * ((i * 7) % 3)])));
    expect(codes(m)).toEqual(["ALIASED_COLUMNS"]);
    closeTo(m.fit.coefficients[0][1], base.fit.coefficients[0][1], SAME_FIT_REL_TOL, "slope of x");
  });

  test("near collinearity beyond the alias tolerance is kept: large but finite estimates that solve the score equations", () => {
    // z = 2x + 1 + 1e-3 * (0, 1 or 2): 1 - R^2 about 1e-7, above the tolerance.
    const m = train(Y10, table(["x", "z"], X10.map((v, i) => [v, 2 * v + 1 + 1e-3 * ((i * 7) % 3)])));
    expect(codes(m)).toEqual([]);
    for (const r of m.fit.table) {
      expect(Number.isFinite(r.estimate) && Number.isFinite(r.standardError)).toBe(true);
      // Collinear estimates are large with larger standard errors: nothing looks significant.
      expect(Math.abs(r.z)).toBeLessThan(1);
    }
    expectScoreEquations(m);
  });
});

describe("numeric extremes: separation", () => {
  const x8 = [1, 2, 3, 4, 5, 6, 7, 8];

  test("complete separation (binary) is SEPARATION_COMPLETE: no numbers, FIT shows #N/A naming the column", () => {
    const y = [0, 0, 0, 0, 1, 1, 1, 1];
    const m = train(y, col("dose", x8));
    expect(errorCodes(m)).toEqual(["SEPARATION_COMPLETE"]);
    expect(m.fit.coefficients[0].every((v) => Number.isNaN(v))).toBe(true);
    const e = cellFailure(() => ODDS.fit(col("y", y), col("dose", x8)));
    expect([e.code, e.cellError]).toEqual(["SEPARATION_COMPLETE", "#N/A"]);
    expect(e.message).toContain('"dose"');
    expect(cellFailure(() => ODDS.prob(col("y", y), col("dose", x8))).code).toBe("SEPARATION_COMPLETE");
  });

  test("quasi-complete separation (binary, tied rows at the boundary) is SEPARATION_QUASI", () => {
    const m = train([0, 0, 0, 0, 1, 1, 1, 1, 0, 1], col("dose", [...x8, 4, 4]));
    expect(errorCodes(m)).toEqual(["SEPARATION_QUASI"]);
  });

  test("separation with firth=true gives finite estimates and a SEPARATION_HANDLED note", () => {
    const m = train([0, 0, 0, 0, 1, 1, 1, 1], col("dose", x8), { firth: true });
    expect(codes(m)).toEqual(["SEPARATION_HANDLED"]);
    expect(m.fit.table.every((r) => Number.isFinite(r.estimate) && Number.isFinite(r.standardError))).toBe(true);
  });

  test("separation with a penalty gives finite estimates (no p-values)", () => {
    const m = train([0, 0, 0, 0, 1, 1, 1, 1], col("dose", x8), { penalty: 1 });
    expect(errorCodes(m)).toEqual([]);
    expect(codes(m)).toContain("PENALIZED_NO_P_VALUES");
    expect(m.fit.coefficients[0].every((v) => Number.isFinite(v))).toBe(true);
  });

  test("complete separation of three classes is CLASSES_SEPARATED with no numbers", () => {
    const y = ["a", "a", "a", "b", "b", "b", "c", "c", "c"];
    const m = train(y, col("x", [1, 2, 3, 4, 5, 6, 7, 8, 9]));
    expect(errorCodes(m)).toEqual(["CLASSES_SEPARATED"]);
    expect(m.fit.coefficients.every((b) => b.every((v) => Number.isNaN(v)))).toBe(true);
    expect(cellFailure(() => ODDS.fit(col("y", y), col("x", [1, 2, 3, 4, 5, 6, 7, 8, 9]))).cellError).toBe("#N/A");
  });

  test("quasi-complete separation of three classes (ties at a boundary) is CLASSES_SEPARATED", () => {
    const m = train(["a", "a", "a", "b", "b", "b", "c", "c", "c", "b", "c"], col("x", [1, 2, 3, 4, 5, 6, 6, 8, 9, 5, 7]));
    expect(errorCodes(m)).toEqual(["CLASSES_SEPARATED"]);
  });

  test("three separated classes with a penalty give finite estimates", () => {
    const m = train(["a", "a", "a", "b", "b", "b", "c", "c", "c"], col("x", [1, 2, 3, 4, 5, 6, 7, 8, 9]), { penalty: 1 });
    expect(errorCodes(m)).toEqual([]);
    expect(m.fit.coefficients.every((b) => b.every((v) => Number.isFinite(v)))).toBe(true);
  });
});

describe("numeric extremes: rare events and tiny classes", () => {
  test("one positive in 10,000 rows (inside the predictor's range) converges and solves the score equations", () => {
    const n = 10000;
    // Row 4320 has x = 0.80, inside the range (x runs over 0.00 .. 9.99 with ties).
    const y = Array.from({ length: n }, (_, i) => (i === 4320 ? 1 : 0));
    const x = Array.from({ length: n }, (_, i) => ((i * 7919) % 1000) / 100);
    const start = performance.now();
    const m = train(y, col("x", x));
    const ms = performance.now() - start;
    expect(codes(m)).toEqual([]);
    expect(m.fit.converged).toBe(true);
    expectScoreEquations(m);
    // The intercept equation says the fitted probabilities add up to the one positive.
    const p = scoreRows(m, null).prediction.probabilities[1];
    // This is the intercept's score equation, so it holds to the same tolerance.
    closeTo(p.reduce((s, v) => s + v, 0), 1, SCORE_REL_TOL, "sum of fitted probabilities");
    // Generous bound on a shared two-core machine (measured ~0.2 s).
    expect(ms).toBeLessThan(10000);
  });

  test("one positive in 50,000 rows (the large-data path with a subsample warm start) converges and solves the score equations", () => {
    const n = 50000;
    const y = Array.from({ length: n }, (_, i) => (i === 4320 ? 1 : 0));
    const x = Array.from({ length: n }, (_, i) => ((i * 7919) % 1000) / 100);
    const m = train(y, col("x", x));
    expect(codes(m)).toEqual([]);
    expect(m.fit.converged).toBe(true);
    expectScoreEquations(m);
  });

  test("one positive in 10,000 rows sharing the largest x with negatives is quasi-separated (SEPARATION_QUASI)", () => {
    const n = 10000;
    // Row 4321 has x = 9.99, the largest value, which ten negative rows share.
    const x = Array.from({ length: n }, (_, i) => ((i * 7919) % 1000) / 100);
    const m = train(Array.from({ length: n }, (_, i) => (i === 4321 ? 1 : 0)), col("x", x));
    expect(errorCodes(m)).toEqual(["SEPARATION_QUASI"]);
  });

  test("one positive at the end of the predictor's range is separated (SEPARATION_COMPLETE)", () => {
    const m = train([0, 0, 0, 0, 0, 0, 0, 1], col("x", [1, 2, 3, 4, 5, 6, 7, 8]));
    expect(errorCodes(m)).toEqual(["SEPARATION_COMPLETE"]);
  });

  test("a binary class with a single row inside the range is fitted", () => {
    const m = train([0, 0, 0, 1, 0, 0, 0, 0], col("x", [1, 2, 3, 4, 5, 6, 7, 8]));
    expect(codes(m)).toEqual([]);
    expectScoreEquations(m);
  });

  test("a multi-class class with a single row inside the range is fitted", () => {
    const m = train(["a", "b", "a", "b", "a", "b", "a", "b", "c", "a", "b", "a"], col("x", [1, 2, 3, 4, 5, 6, 1, 2, 3, 4, 5, 6]));
    expect(codes(m)).toEqual([]);
    expectScoreEquations(m);
  });
});

describe("numeric extremes: weights", () => {
  const base = train(Y10, col("x", X10));

  test("rows of weight zero are left out: the fit equals the fit without them", () => {
    const w = X10.map((_, i) => (i % 4 === 1 ? 0 : 1));
    const m = train(Y10, col("x", X10), { weights: col("w", w) });
    const keep = X10.map((_, i) => i).filter((i) => w[i] === 1);
    const ref = train(keep.map((i) => Y10[i]), col("x", keep.map((i) => X10[i])));
    m.fit.table.forEach((r, t) => {
      closeTo(r.estimate, ref.fit.table[t].estimate, SAME_FIT_REL_TOL, `estimate ${r.term}`);
      closeTo(r.standardError, ref.fit.table[t].standardError, SAME_FIT_REL_TOL, `SE ${r.term}`);
    });
    expect(m.fit.rowsUsed).toBe(keep.length);
  });

  test("all weights zero is NO_USABLE_ROWS (FIT shows #N/A)", () => {
    const m = train(Y10, col("x", X10), { weights: col("w", X10.map(() => 0)) });
    expect(errorCodes(m)).toEqual(["NO_USABLE_ROWS"]);
  });

  test("every weight 1e12 leaves the estimates unchanged and divides the standard errors by 1e6", () => {
    const m = train(Y10, col("x", X10), { weights: col("w", X10.map(() => 1e12)) });
    m.fit.table.forEach((r, t) => {
      closeTo(r.estimate, base.fit.table[t].estimate, SAME_FIT_REL_TOL, `estimate ${r.term}`);
      closeTo(r.standardError, base.fit.table[t].standardError / 1e6, SAME_FIT_REL_TOL, `SE ${r.term}`);
    });
  });

  test("weights mixing 1e12 and 1 give estimates that solve the weighted score equations", () => {
    const w = X10.map((_, i) => (i % 2 ? 1e12 : 1));
    const m = train(Y10, col("x", X10), { weights: col("w", w) });
    expect(errorCodes(m)).toEqual([]);
    expectScoreEquations(m, w);
  });
});

describe("numeric extremes: perfect predictions in the metrics", () => {
  const y = Float64Array.of(1, 0, 1, 0);
  const perfect = Float64Array.of(1, 0, 1, 0);

  test("log-loss of probabilities exactly 0/1 and right is about 1e-15 (p = 1 is clipped to 1 - eps), finite", () => {
    const r = logLoss(y, perfect);
    // -ln(1 - 1e-15) = 1e-15 to first order; no row lies below eps, so none is counted as clipped.
    closeTo(r.value, -Math.log1p(-DEFAULT_LOG_CLIP), LOGLOSS_REL_TOL, "log-loss");
    expect(r.clippedRows).toBe(0);
    expect(ODDS.logLoss(col("y", Array.from(y)), col("p", Array.from(perfect)))).toEqual([[r.value]]);
  });

  test("log-loss of probabilities exactly 0/1 and wrong is -ln(1e-15) = 34.54 per wrong row, finite", () => {
    const r = logLoss(y, Float64Array.of(0, 1, 1, 0));
    closeTo(r.value, (2 * -Math.log(DEFAULT_LOG_CLIP) - 2 * Math.log1p(-DEFAULT_LOG_CLIP)) / 4, LOGLOSS_REL_TOL, "log-loss");
  });

  test("Brier score of perfect 0/1 probabilities is exactly 0", () => {
    expect(brierScore(y, perfect).value).toBe(0);
  });

  test("AUC of a perfect ranking is 1 with a zero-width DeLong interval", () => {
    const r = rocAuc(y, perfect);
    expect(r.auc).toBe(1);
    const out = ODDS.auc(col("y", Array.from(y)), col("p", Array.from(perfect)));
    expectCleanSpill(out, "AUC");
    expect(out[1].slice(0, 3)).toEqual([1, 1, 1]);
  });

  test("calibration slope of a perfect ranking is CALIBRATION_SLOPE_UNBOUNDED, not a huge number", () => {
    const r = calibrationSlope(y, Float64Array.of(0.9, 0.2, 0.8, 0.1));
    expect(Number.isNaN(r.slope.estimate)).toBe(true);
    expect(r.diagnostics.map((d) => d.code)).toContain("CALIBRATION_SLOPE_UNBOUNDED");
  });

  test("CONFUSION and CALIBRATION of perfect 0/1 probabilities spill clean tables", () => {
    expectCleanSpill(ODDS.confusion(col("y", Array.from(y)), col("p", Array.from(perfect))), "CONFUSION");
    expectCleanSpill(ODDS.calibration(col("y", Array.from(y)), col("p", Array.from(perfect))), "CALIBRATION");
  });
});

describe("numeric extremes: more columns than rows", () => {
  const rows = [
    [1, 2, 3, 4, 5],
    [2, 1, 3, 5, 4],
    [3, 3, 1, 2, 2],
    [4, 5, 1, 1, 3],
  ];

  test("binary: more parameters than rows is TOO_FEW_ROWS (#N/A)", () => {
    const m = train([0, 1, 0, 1], table(["a", "b", "c", "d", "e"], rows));
    expect(errorCodes(m)).toEqual(["TOO_FEW_ROWS"]);
    expect(cellFailure(() => ODDS.fit(col("y", [0, 1, 0, 1]), table(["a", "b", "c", "d", "e"], rows))).cellError).toBe("#N/A");
  });

  test("multi-class: more parameters per equation than rows is TOO_FEW_ROWS", () => {
    const m = train(["a", "b", "c", "a"], table(["a", "b", "c", "d", "e"], rows));
    expect(errorCodes(m)).toEqual(["TOO_FEW_ROWS"]);
  });

  test("with a penalty, more columns than rows gives finite estimates", () => {
    const m = train([0, 1, 0, 1], table(["a", "b", "c", "d", "e"], rows), { penalty: 1 });
    expect(errorCodes(m)).toEqual([]);
    expect(m.fit.coefficients[0].every((v) => Number.isFinite(v))).toBe(true);
  });
});

describe("numeric extremes: many distinct labels", () => {
  test("thousands of distinct text labels (an identifier column) are TOO_MANY_LABELS at once, not a fit that never ends", () => {
    const n = 5000;
    const labels: Range = [["id"], ...Array.from({ length: n }, (_, i): CellValue[] => [`customer-${i}`])];
    const predictors: Range = [["x"], ...Array.from({ length: n }, (_, i): CellValue[] => [i % 7])];
    const start = performance.now();
    const e = cellFailure(() => ODDS.fit(labels, predictors));
    expect([e.code, e.cellError]).toEqual(["TOO_MANY_LABELS", "#VALUE!"]);
    expect(e.message).toContain(`${n} different labels across ${n} rows`);
    // Reading and counting 5,000 labels takes milliseconds; the bound is generous for a shared machine.
    expect(performance.now() - start).toBeLessThan(2000);
  });

  test(`${MAX_CLASSES} classes are still fitted; ${MAX_CLASSES + 1} are TOO_MANY_LABELS`, () => {
    const rows = (k: number) => Array.from({ length: 4 * k }, (_, i) => i);
    const fitK = (k: number) => trainModel(col("y", rows(k).map((i) => `class ${i % k}`)), col("x", rows(k).map((i) => (i * 37) % 11)), { penalty: 1 });
    expect(fitK(MAX_CLASSES).fit.classes.length).toBe(MAX_CLASSES);
    expect(() => fitK(MAX_CLASSES + 1)).toThrow(expect.objectContaining({ code: "TOO_MANY_LABELS" }));
  });
});

describe("numeric extremes: basis columns of data near 1e300 and 1e-300", () => {
  test("ns whose quantile knots would fall a few subnormal steps apart (values 0, 5e-323, 1) is BASIS_TOO_FEW_VALUES, not NaN", () => {
    const e = cellFailure(() => ODDS.basis([["a"], [0], [1], [5e-323]], [["a: ns(20)"]]));
    expect([e.code, e.cellError]).toEqual(["BASIS_TOO_FEW_VALUES", "#VALUE!"]);
  });

  test("ns with a knot 1e-13 of the range from the boundary still gives finite columns", () => {
    expectCleanSpill(ODDS.basis([["a"], [0], [1], [1e-13], [0.5]], [["a: ns(3)"]]), "ns near-boundary knot");
  });

  // z, minmax, ns, rbf and bins depend on x only through (x - centre) / spread, so multiplying the
  // data by c leaves every column unchanged (poly's powers and log's shifts are not scale-free).
  const base = [0, 1, 2, 0.5, 3, 1.5, 2.5, 0.25];
  /** Relative agreement of columns computed at different scales: only rounding of the scaled sums (measured ~5e-16). */
  const SCALE_FREE_TOL = 1e-12;
  test.each(["a: z", "a: minmax", "a: ns(3)", "a: rbf(3)", "a: bins(3)"])("%s gives the same columns for data x 1e300 and x 1e-300 as for the data itself", (recipe) => {
    const at = (c: number) => ODDS.basis([["a"], ...base.map((v): CellValue[] => [v * c])], [[recipe]]) as CellValue[][];
    const want = at(1);
    for (const c of [1e300, 1e-300]) {
      const got = at(c);
      expectCleanSpill(got, `${recipe} x ${c}`);
      // Bin names carry the cut points in the data's units; every other name is scale-free.
      if (!recipe.includes("bins")) expect(got[0]).toEqual(want[0]);
      got.slice(1).forEach((row, i) => row.forEach((v, j) => closeTo(v as number, want[i + 1][j] as number, SCALE_FREE_TOL, `${recipe} x ${c} [${i}][${j}]`)));
    }
  });
});

describe("numeric extremes: text predictors with many distinct values", () => {
  const n = 3000;
  const labels: Range = [["y"], ...Array.from({ length: n }, (_, i): CellValue[] => [(i * 7) % 3 === 0 ? 1 : 0])];

  test("an identifier column as a predictor (3,000 distinct values) is TOO_MANY_LEVELS at once, not a fit that never ends", () => {
    const predictors: Range = [["id", "x"], ...Array.from({ length: n }, (_, i): CellValue[] => [`row-${i}`, (i * 13) % 17])];
    const start = performance.now();
    const e = cellFailure(() => ODDS.fit(labels, predictors));
    expect([e.code, e.cellError]).toEqual(["TOO_MANY_LEVELS", "#VALUE!"]);
    expect(e.message).toContain(`id column has ${n} different categories`);
    expect(performance.now() - start).toBeLessThan(2000);
  });

  test(`${MAX_LEVELS} levels are encoded; ${MAX_LEVELS + 1} are TOO_MANY_LEVELS; pooling rare levels brings a column back under the limit`, () => {
    const rows = (k: number): Range => [["g"], ...Array.from({ length: 3 * k }, (_, i): CellValue[] => [`g${i % k}`])];
    const y = (k: number): Range => [["y"], ...Array.from({ length: 3 * k }, (_, i): CellValue[] => [i % 2])];
    expect(trainModel(y(MAX_LEVELS), rows(MAX_LEVELS), { penalty: 1 }).fit.terms.length).toBe(MAX_LEVELS);
    expect(() => trainModel(y(MAX_LEVELS + 1), rows(MAX_LEVELS + 1), { penalty: 1 })).toThrow(expect.objectContaining({ code: "TOO_MANY_LEVELS" }));
    // 200 levels: 150 seen 3 times, 50 seen 30 times; pool=5 leaves 50 levels and "(other)".
    const pooled: Range = [["g"], ...Array.from({ length: 150 * 3 + 50 * 30 }, (_, i): CellValue[] => [i < 450 ? `rare${i % 150}` : `common${i % 50}`])];
    const m = trainModel([["y"], ...pooled.slice(1).map((_, i): CellValue[] => [i % 2])], pooled, { penalty: 1, minLevelCount: 5 });
    expect(m.fit.terms.length).toBe(51);
  });
});

describe("numeric extremes: models too large to fit in reasonable time", () => {
  test("2,000 predictor columns over 30 rows with a penalty are TOO_MANY_PARAMETERS at once (not 33 s or out of memory)", () => {
    const names = Array.from({ length: 2000 }, (_, j) => `c${j}`);
    const predictors: Range = [names, ...Array.from({ length: 30 }, (_, i): CellValue[] => names.map((_, j) => ((i * 31 + j * 7) % 13) / 13))];
    const start = performance.now();
    const e = cellFailure(() => ODDS.fit(col("y", Array.from({ length: 30 }, (_, i) => i % 2)), predictors, [["penalty=1"]]));
    expect([e.code, e.cellError]).toEqual(["TOO_MANY_PARAMETERS", "#VALUE!"]);
    expect(e.message).toContain("2001 coefficients (2001 terms)");
    expect(performance.now() - start).toBeLessThan(2000);
  });

  test("50 classes x 20 predictors (1,029 coefficients) are TOO_MANY_PARAMETERS at once (not 31 s)", () => {
    const names = Array.from({ length: 20 }, (_, j) => `x${j}`);
    const predictors: Range = [names, ...Array.from({ length: 2000 }, (_, i): CellValue[] => names.map((_, j) => ((i * 17 + j * 5) % 29) / 29))];
    const start = performance.now();
    expect(() => trainModel(col("y", Array.from({ length: 2000 }, (_, i) => `c${i % 50}`)), predictors, {})).toThrow(
      expect.objectContaining({ code: "TOO_MANY_PARAMETERS", message: expect.stringContaining("49 class equations of 21 terms each") }),
    );
    expect(performance.now() - start).toBeLessThan(2000);
  });

  test(`profile intervals beyond rows x terms^3 = ${PROFILE_BUDGET} fall back to Wald intervals with PROFILE_NOT_AVAILABLE (2,000 rows x 100 terms: not 38 s)`, () => {
    let state = 9;
    const u = () => (state = (Math.imul(state, 1664525) + 1013904223) >>> 0) / 4294967296;
    const names = Array.from({ length: 99 }, (_, j) => `x${j}`);
    const rows = Array.from({ length: 2000 }, (): CellValue[] => names.map(() => u()));
    const y = rows.map((r) => (u() < 1 / (1 + Math.exp(-((r[0] as number) - (r[1] as number)))) ? 1 : 0));
    const start = performance.now();
    const m = train(y, [names, ...rows], { intervalMethod: "profile" });
    expect(performance.now() - start).toBeLessThan(10000);
    expect(codes(m)).toEqual(["PROFILE_NOT_AVAILABLE"]);
    expect(m.fit.intervalMethod).toBe("wald");
    // Small models keep their profile intervals.
    expect(train(Y10, col("x", X10), { intervalMethod: "profile" }).fit.intervalMethod).toBe("profile");
  });

  test(`exactly ${MAX_PARAMETERS} coefficients are fitted; one more is refused`, () => {
    const fitWith = (p: number) => {
      const names = Array.from({ length: p }, (_, j) => `x${j}`);
      const predictors: Range = [names, ...Array.from({ length: 40 }, (_, i): CellValue[] => names.map((_, j) => ((i * 17 + j * 5) % 29) / 29 + (i === j ? 1 : 0)))];
      return trainModel(col("y", Array.from({ length: 40 }, (_, i) => i % 2)), predictors, { penalty: 1 });
    };
    expect(fitWith(MAX_PARAMETERS - 1).fit.terms.length).toBe(MAX_PARAMETERS);
    expect(() => fitWith(MAX_PARAMETERS)).toThrow(expect.objectContaining({ code: "TOO_MANY_PARAMETERS" }));
  });
});
