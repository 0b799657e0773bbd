import orchard from "../../fixtures/model/orchard.json";
import { fitBinaryModel } from "../../../src/engine/binary";
import { trainModel, scoreRows, GROUPED_CLASSES } from "../../../src/engine/model";
import { OddsmithError } from "../../../src/engine/messages";
import type { CellValue, DesignMatrix } from "../../../src/engine/types";
import { caught } from "../../support/caught";

/**
 * Agreement with R's glm: both iterate Newton/IRLS to full convergence (R: glm.control(epsilon =
 * 1e-14)); measured agreement is about 3e-15 on coefficients and 3e-12 on standard errors, so 1e-9
 * leaves room for floating-point differences between machines while catching any real difference.
 */
const GLM_REL_TOL = 1e-9;
/**
 * nnet::multinom optimizes by BFGS and stops on its relative tolerance (reltol = 1e-16 requested,
 * but BFGS stalls earlier); measured agreement is about 4e-7 on coefficients and 5e-8 on fitted
 * probabilities, so 1e-5.
 */
const MULTINOM_REL_TOL = 1e-5;


function expectClose(got: ArrayLike<number>, want: ArrayLike<number>, rel: number, what: string) {
  expect([what, got.length]).toEqual([what, want.length]);
  for (let i = 0; i < want.length; i++) {
    const tol = rel * Math.max(1, Math.abs(want[i]));
    if (!(Math.abs(got[i] - want[i]) <= tol)) {
      throw new Error(`${what}[${i}]: expected ${want[i]}, got ${got[i]}, tolerance ${tol}`);
    }
  }
}

/** R term names -> ours: "(Intercept)" -> "(intercept)", "varietyCox" -> "variety=Cox", "sprayedTRUE" -> "sprayed". */
function rTerm(t: string): string {
  if (t === "(Intercept)") return "(intercept)";
  if (t === "sprayedTRUE") return "sprayed";
  const m = /^variety(.+)$/.exec(t);
  return m ? `variety=${m[1]}` : t;
}

const LABELS = orchard.labelsBlight as CellValue[][];
const PREDICTORS = orchard.predictors as CellValue[][];

describe("trainModel against R glm on the orchard survey (text predictor, booleans, blank cells)", () => {
  const model = trainModel(LABELS, PREDICTORS, {});

  test("ranges whose first rows agree add no header note", () => {
    expect(model.fit.diagnostics.some((d) => d.code === "HEADERS_DISAGREE")).toBe(false);
  });

  test("names the positive class and fits a binary model", () => {
    expect(model.kind).toBe("binary");
    expect(model.fit.classes).toEqual(["no", "yes"]);
    expect(model.fit.positiveClass).toBe("yes");
    expect(model.labels.name).toBe("blight");
  });

  test("builds R's treatment coding: same terms, Bramley the reference variety", () => {
    expect(model.fit.terms).toEqual(orchard.binary.terms.map(rTerm));
  });

  test("skips the same rows as R's na.omit and agrees on coefficients, SEs and log-likelihood", () => {
    expect(model.fit.rowsUsed).toBe(orchard.binary.rowsUsed);
    expectClose(model.fit.coefficients[0], orchard.binary.coefficients, GLM_REL_TOL, "coefficients");
    expectClose(
      model.fit.table.map((r) => r.standardError),
      orchard.binary.standardErrors,
      GLM_REL_TOL,
      "standard errors",
    );
    expectClose([model.fit.logLikelihood], [orchard.binary.logLikelihood], GLM_REL_TOL, "logLik");
  });

  test("a named reference level (baseline) agrees with R's relevel", () => {
    const m = trainModel(LABELS, PREDICTORS, { referenceLevels: { variety: "Gala" } });
    expect(m.fit.terms).toEqual(orchard.binaryReferenceGala.terms.map(rTerm));
    expectClose(m.fit.coefficients[0], orchard.binaryReferenceGala.coefficients, GLM_REL_TOL, "coefficients");
  });

  test("equals a fit of the hand-built design matrix, exactly", () => {
    // Hand-built: rows complete in every column, variety as two indicators against Bramley.
    const rows: number[] = [];
    for (let i = 1; i < PREDICTORS.length; i++) {
      const [r, v, s] = PREDICTORS[i];
      if (r !== null && v !== null && s !== null && LABELS[i][0] !== null) rows.push(i);
    }
    const col = (f: (i: number) => number) => Float64Array.from(rows, f);
    const X: DesignMatrix = {
      rows: rows.length,
      names: ["rainfall", "variety=Cox", "variety=Gala", "sprayed"],
      columns: [
        col((i) => PREDICTORS[i][0] as number),
        col((i) => (PREDICTORS[i][1] === "Cox" ? 1 : 0)),
        col((i) => (PREDICTORS[i][1] === "Gala" ? 1 : 0)),
        col((i) => (PREDICTORS[i][2] ? 1 : 0)),
      ],
    };
    const y = col((i) => (LABELS[i][0] === "yes" ? 1 : 0));
    const direct = fitBinaryModel(X, y, {}, ["no", "yes"]);
    expect(Array.from(model.fit.coefficients[0])).toEqual(Array.from(direct.coefficients[0]));
    expect(model.fit.logLikelihood).toBe(direct.logLikelihood);
  });

  test("reports skipped rows per column in a ROWS_SKIPPED warning with the caller's row indices", () => {
    const d = model.fit.diagnostics.find((x) => x.code === "ROWS_SKIPPED");
    expect(d?.severity).toBe("warning");
    expect(d?.message).toBe(
      "6 rows were skipped because a used value was missing (blight: 2, rainfall: 2, variety: 1, sprayed: 1).",
    );
    expect(d?.rows).toEqual([4, 8, 11, 16, 29, 39]);
    expect(model.skipped.total).toBe(6);
  });

  test("keeps a row map from input rows to fitted rows", () => {
    expect(model.rows).toBe(48);
    expect(model.rowMap[3]).toBe(3);
    expect(model.rowMap[4]).toBe(-1);
    expect(model.rowMap[5]).toBe(4);
  });

  test("blank cells sent as empty text give the same fit as nulls", () => {
    const blanked = (cells: CellValue[][]) => cells.map((r) => r.map((v) => (v === null ? "" : v)));
    const m = trainModel(blanked(LABELS), blanked(PREDICTORS), {});
    expect(Array.from(m.fit.coefficients[0])).toEqual(Array.from(model.fit.coefficients[0]));
  });
});

describe("scoreRows", () => {
  const model = trainModel(LABELS, PREDICTORS, {});

  test("scores the training rows aligned with the input rows, matching R's fitted values", () => {
    const s = scoreRows(model, null);
    expect(s.rows).toBe(48);
    expect(s.positiveClass).toBe("yes");
    const got = orchard.binary.fittedRows.map((i) => s.prediction.probabilities[1][i]);
    expectClose(got, orchard.binary.fitted, GLM_REL_TOL, "fitted probabilities");
  });

  test("a training row with a missing label but complete predictors is still scored", () => {
    const s = scoreRows(model, null);
    expect(s.scored[11]).toBe(1);
    expect(s.prediction.probabilities[1][11]).toBeGreaterThan(0);
  });

  test("a training row with a missing predictor is a per-row problem with its range row", () => {
    const s = scoreRows(model, null);
    expect(s.scored[4]).toBe(0);
    expect(Number.isNaN(s.prediction.probabilities[1][4])).toBe(true);
    expect(s.predictedClass[4]).toBeNull();
    const p = s.problems.find((x) => x.index === 4);
    expect(p?.code).toBe("MISSING_FOR_SCORING");
    // Data row 4 (0-based) is range row 6: the header is row 1.
    expect(p?.message).toBe("Row 6 has no value in rainfall, so it cannot be scored.");
  });

  test("new rows: unseen categories are per-row problems, the threshold decides the class", () => {
    const s = scoreRows(
      model,
      [
        ["rainfall", "variety", "sprayed"],
        [80, "Cox", false],
        [80, "Fuji", false],
        [20, "Gala", true],
      ],
      { threshold: 0.3 },
    );
    expect(s.rows).toBe(3);
    expect(Array.from(s.scored)).toEqual([1, 0, 1]);
    expect(s.problems[0].code).toBe("UNSEEN_LEVEL");
    const b = model.fit.coefficients[0];
    const p0 = 1 / (1 + Math.exp(-(b[0] + b[1] * 80 + b[2])));
    expect(s.prediction.probabilities[1][0]).toBeCloseTo(p0, 12);
    expect(s.predictedClass[0]).toBe(p0 >= 0.3 ? "yes" : "no");
    expect(s.threshold).toBe(0.3);
  });
});

describe("trainModel: ranges and options", () => {
  const labels: CellValue[][] = [["bought"], ["yes"], ["no"], ["yes"], ["no"], ["yes"], ["no"], ["no"], ["yes"]];
  const preds: CellValue[][] = [["visits"], [5], [1], [4], [2], [3], [3], [1], [2]];

  test("labels and predictors of different lengths are RANGE_SHAPE_MISMATCH", () => {
    const e = caught(() => trainModel(labels.slice(0, 6), preds, {}));
    expect(e.code).toBe("RANGE_SHAPE_MISMATCH");
    expect(e.message).toBe(
      "The predictors range has 8 rows but labels has 5. Select ranges that cover the same rows.",
    );
  });

  test("a labels range ending in blank cells lines up with a longer predictors range", () => {
    const m = trainModel([...labels.slice(0, 8), [null]], preds, {});
    expect(m.rows).toBe(8);
    expect(m.skipped.total).toBe(1);
  });

  test("under auto headers, strong evidence in one range decides for both", () => {
    // The labels' first word never recurs (weak evidence of a name); the predictors start with a number.
    const m = trainModel([["maybe"], ["no"], ["yes"], ["no"], ["yes"], ["no"], ["yes"], ["no"]], [[1], [2], [3], [4], [5], [6], [7], [8]], {});
    expect(m.header).toBe(false);
    expect(m.fit.classes).toEqual(["maybe", "no", "yes"]);
    expect(m.fit.diagnostics.find((d) => d.code === "HEADERS_DISAGREE")?.message).toBe(
      "The first row of predictors looks like data, but the first row of labels looks like column names; every first row was read as data. Set headers=yes or headers=no if that is wrong.",
    );
  });

  test("a labels range of two columns is SINGLE_COLUMN_NEEDED", () => {
    const e = caught(() => trainModel(preds.map((r, i) => [labels[i][0], r[0]]), preds, {}));
    expect(e.code).toBe("SINGLE_COLUMN_NEEDED");
    expect(e.message).toBe("The labels range has 2 columns. Select a single column.");
  });

  test("a negative weight is BAD_WEIGHT with its range row", () => {
    const w: CellValue[][] = [["w"], [1], [1], [-1], [1], [1], [1], [1], [1]];
    const e = caught(() => trainModel(labels, preds, { weights: w }));
    expect(e.code).toBe("BAD_WEIGHT");
    expect(e.message).toBe("The weight in row 4 is -1. Weights must be finite numbers of zero or more.");
  });

  test("text in the weights is NOT_A_NUMBER", () => {
    const w: CellValue[][] = [["w"], ["one"], ["two"], [1], [1], ["x"], ["y"], [1], [1]];
    const e = caught(() => trainModel(labels, preds, { weights: w }));
    expect(e.code).toBe("NOT_A_NUMBER");
    expect(e.message).toBe('The weights value in row 2, column 1 ("one") is not a number. Enter a number or clear the cell.');
  });

  test("a weight of 2 fits like the row entered twice", () => {
    const w: CellValue[][] = [["w"], [2], [1], [1], [1], [1], [1], [1], [1]];
    const weighted = trainModel(labels, preds, { weights: w });
    const doubled = trainModel([...labels, ["yes"]], [...preds, [5]], {});
    expectClose(weighted.fit.coefficients[0], doubled.fit.coefficients[0], 1e-9, "coefficients");
  });

  test("a blank weight skips its row and is counted under the weights column", () => {
    const w: CellValue[][] = [["w"], [1], [null], [1], [1], [1], [1], [1], [1]];
    const m = trainModel(labels, preds, { weights: w });
    expect(m.fit.diagnostics.find((d) => d.code === "ROWS_SKIPPED")?.message).toContain("(w: 1)");
  });

  test("grouped counts (successes of trials) fit like the same rows one by one", () => {
    const grouped = trainModel(
      [["dead"], [1], [4], [9], [13]],
      [["dose"], [1], [2], [3], [4]],
      { trials: [["n"], [20], [20], [20], [20]] },
    );
    const ones: CellValue[][] = [["dead"]];
    const doses: CellValue[][] = [["dose"]];
    [1, 4, 9, 13].forEach((dead, k) => {
      for (let i = 0; i < 20; i++) {
        ones.push([i < dead ? 1 : 0]);
        doses.push([k + 1]);
      }
    });
    const expanded = trainModel(ones, doses, {});
    expect(grouped.fit.classes).toEqual([...GROUPED_CLASSES]);
    expectClose(grouped.fit.coefficients[0], expanded.fit.coefficients[0], 1e-9, "coefficients");
  });

  test("successes above trials is BAD_TRIALS with its range row", () => {
    const e = caught(() => trainModel([["dead"], [1], [25]], [["dose"], [1], [2]], { trials: [["n"], [20], [20]] }));
    expect(e.code).toBe("BAD_TRIALS");
    expect(e.message).toBe(
      "Row 3 has 25 successes out of 20 trials. Successes must lie between 0 and the number of trials.",
    );
  });

  test("grouped counts with no success at all are ONE_CLASS_ONLY", () => {
    const e = caught(() => trainModel([["dead"], [0], [0]], [["dose"], [1], [2]], { trials: [["n"], [20], [20]] }));
    expect(e.code).toBe("ONE_CLASS_ONLY");
    expect(e.message).toBe(
      'Every usable row has the label "failure". A classifier needs at least two classes in the label column.',
    );
  });

  test("an offset enters the fit and is required to score new rows", () => {
    const off: CellValue[][] = [["o"], [0.1], [0.2], [0], [-0.3], [0.5], [0], [0.2], [0.1]];
    const m = trainModel(labels, preds, { offset: off });
    const X: DesignMatrix = { rows: 8, names: ["visits"], columns: [Float64Array.from(preds.slice(1), (r) => r[0] as number)] };
    const y = Float64Array.from(labels.slice(1), (r) => (r[0] === "yes" ? 1 : 0));
    const direct = fitBinaryModel(X, y, { offset: Float64Array.from(off.slice(1), (r) => r[0] as number) }, ["no", "yes"]);
    expect(Array.from(m.fit.coefficients[0])).toEqual(Array.from(direct.coefficients[0]));
    const s = scoreRows(m, [["visits"], [3]]);
    expect(s.problems.map((p) => p.message)).toEqual(["Row 2 has no value in offset, so it cannot be scored."]);
    const s2 = scoreRows(m, [["visits"], [3]], { offset: [["o"], [0.4]] });
    const b = m.fit.coefficients[0];
    expect(s2.prediction.linearPredictor?.[0]).toBeCloseTo(0.4 + b[0] + 3 * b[1], 12);
  });

  test("rows named by a fit diagnostic are the caller's data rows, and range rows in its message", () => {
    // Quasi-complete separation by x (both classes only at x = 3); data row 0 is skipped (no label).
    const m = trainModel(
      [["y"], [null], [0], [0], [0], [1], [0], [1], [1], [1]],
      [["x"], [9], [1], [2], [3], [3], [2], [4], [5], [6]],
      {},
    );
    const d = m.fit.diagnostics.find((x) => x.code === "SEPARATION_QUASI");
    expect(d).toBeDefined();
    const rows = d?.rows as number[];
    expect(rows.length).toBeGreaterThan(0);
    expect(rows).not.toContain(0);
    // Data row r sits in range row r + 2 (header in row 1).
    const more = rows.length > 5 ? ", ..." : "";
    expect(d?.message).toContain(`for example rows ${rows.slice(0, 5).map((r) => r + 2).join(", ")}${more})`);
  });

  test("weights of two columns are SINGLE_COLUMN_NEEDED", () => {
    const w: CellValue[][] = preds.map(() => [1, 1]);
    const e = caught(() => trainModel(labels, preds, { weights: w }));
    expect(e.message).toBe("The weights range has 2 columns. Select a single column.");
  });

  test("headers=yes takes the first row of every range as names, even over numbers", () => {
    const m = trainModel([[1], [0], [1], [0], [1], [0], [0], [1]], [[2], [1], [3], [1], [3], [2], [1], [2]], { headers: "yes" });
    expect(m.rows).toBe(7);
    expect(m.labels.name).toBe("1");
    expect(m.fit.terms).toEqual(["(intercept)", "2"]);
  });

  test("a named positive class that does not occur is CLASS_NOT_FOUND", () => {
    expect(caught(() => trainModel(labels, preds, { positive: "maybe" })).code).toBe("CLASS_NOT_FOUND");
  });
});

describe("trainModel: multi-class against nnet::multinom on the orchard survey", () => {
  const model = trainModel(orchard.labelsGrade as CellValue[][], PREDICTORS, {});

  test("three classes give a multi-class fit with the first sorted class as reference", () => {
    expect(model.kind).toBe("multiclass");
    expect(model.fit.classes).toEqual(orchard.multiclass.classes);
    expect(model.fit.referenceClass).toBe("high");
    expect(model.fit.equationClasses).toEqual(orchard.multiclass.equationClasses);
    expect(model.fit.terms).toEqual(orchard.multiclass.terms.map(rTerm));
    expect(model.fit.rowsUsed).toBe(orchard.multiclass.rowsUsed);
  });

  test("agrees with multinom on coefficients, standard errors and log-likelihood", () => {
    orchard.multiclass.coefficients.forEach((want, k) => {
      expectClose(model.fit.coefficients[k], want, MULTINOM_REL_TOL, `coefficients of ${orchard.multiclass.equationClasses[k]}`);
    });
    const ses = model.fit.table.map((r) => r.standardError);
    expectClose(ses, orchard.multiclass.standardErrors.flat(), MULTINOM_REL_TOL, "standard errors");
    expectClose([model.fit.logLikelihood], [orchard.multiclass.logLikelihood], 1e-8, "logLik");
  });

  test("scores the training rows like multinom's fitted probabilities, aligned with the input rows", () => {
    const s = scoreRows(model, null);
    expect(s.rows).toBe(48);
    expect(s.classes).toEqual(orchard.multiclass.classes);
    orchard.multiclass.fittedRows.forEach((i, r) => {
      const got = s.prediction.probabilities.map((p) => p[i]);
      expectClose(got, orchard.multiclass.fitted[r], MULTINOM_REL_TOL, `probabilities of data row ${i}`);
      const best = got.indexOf(Math.max(...got));
      expect(s.predictedClass[i]).toBe(orchard.multiclass.classes[best]);
    });
    expect(s.scored[4]).toBe(0);
    expect(s.predictedClass[4]).toBeNull();
  });

  test.each([
    [{ firth: true }, "firth", "TRUE", "Bias reduction"],
    [{ intervalMethod: "profile" as const }, "interval", "profile", "The profile-likelihood interval"],
    [{ offset: orchard.labelsGrade.map((r, i) => [i === 0 ? "o" : 0.1]) as CellValue[][] }, "offset", "a column", "An offset"],
  ])("a two-class-only option (%p) with three classes is BAD_OPTION_VALUE naming the option", (opts, name, value, what) => {
    const e = caught(() => trainModel(orchard.labelsGrade as CellValue[][], PREDICTORS, opts));
    expect(e.code).toBe("BAD_OPTION_VALUE");
    expect(e.message).toBe(
      `The option ${name} cannot be "${value}". ${what} is available for two-class labels only, and the label column has 3 classes ("high", "low" and "medium").`,
    );
  });

  test("a named reference class is used", () => {
    const m = trainModel(orchard.labelsGrade as CellValue[][], PREDICTORS, { reference: "low" });
    expect(m.fit.referenceClass).toBe("low");
    expect(m.fit.equationClasses).toEqual(["high", "medium"]);
  });
});

describe("property: any input gives a result or a catalogue message, never a raw exception", () => {
  const fc = require("fast-check") as typeof import("fast-check");
  test("random small ranges of numbers, words, booleans, blanks and non-finite numbers", () => {
    const cell = fc.oneof(
      { arbitrary: fc.constant(null), weight: 1 },
      { arbitrary: fc.constant(""), weight: 1 },
      { arbitrary: fc.integer({ min: -3, max: 3 }), weight: 6 },
      { arbitrary: fc.constantFrom(NaN, Infinity, 1e300, -1e-300), weight: 1 },
      { arbitrary: fc.constantFrom("a", "b", "yes", "no", " 1.5 ", "x y"), weight: 2 },
      { arbitrary: fc.boolean(), weight: 1 },
    );
    const label = fc.oneof(
      { arbitrary: fc.constant(null), weight: 1 },
      { arbitrary: fc.constantFrom("yes", "no"), weight: 6 },
      { arbitrary: fc.constantFrom("maybe", 1, true), weight: 1 },
    );
    const column = <T,>(n: number, a: import("fast-check").Arbitrary<T>) => fc.array(fc.array(a, { minLength: 1, maxLength: 1 }), { minLength: n, maxLength: n });
    const inputs = fc.integer({ min: 1, max: 14 }).chain((n) =>
      fc.tuple(
        column(n, label),
        fc.array(fc.array(cell, { minLength: 2, maxLength: 2 }), { minLength: n, maxLength: n }),
        fc.option(column(n, fc.oneof(fc.integer({ min: 0, max: 3 }), fc.constant(null), fc.constant(-1))), { nil: null }),
      ),
    );
    let fitted = 0;
    fc.assert(
      fc.property(inputs, ([labels, predictors, weights]) => {
        try {
          const m = trainModel(labels, predictors, { weights });
          scoreRows(m, null);
          scoreRows(m, predictors.slice(0, 3));
          fitted++;
        } catch (e) {
          if (!(e instanceof OddsmithError)) throw e;
        }
      }),
      { seed: 7, numRuns: 500 },
    );
    // Some random inputs must get through to a fit, or the property only exercises rejections.
    expect(fitted).toBeGreaterThan(5);
  });
});
