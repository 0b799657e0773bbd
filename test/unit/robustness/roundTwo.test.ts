/**
 * Regression tests of robustness issue 12 (round two), one block per point of the issue. Each
 * reproduces the reported call through the registry (as the sheet calls it) and states what must
 * happen now; docs/numeric-extremes.md and docs/errors.md say the same in words.
 */
import { evaluateCellFunction as call } from "../../../src/functions/registry";
import { CellFunctionFailure } from "../../../src/functions/cellError";
import { fitCellText, levelLabel } from "../../../src/shared/cellOutput";
import { MAX_CELL_TEXT } from "../../../src/shared/sheetLimits";
import { checkFirthWork, FIRTH_WORK_LIMIT } from "../../../src/engine/data/fitWork";
import { MAX_PARAM_CHARS } from "../../../src/engine/messages";
import { formatMessage } from "../../../src/shared/messages";
import { readTable } from "../../../src/engine/data/table";
import type { CellValue } from "../../../src/engine/types";
import { FIRTH_CASE, firthCaseRanges } from "../../../bench/firthLimit";
import rReference from "../../fixtures/binary/extremes.json";

type Range = CellValue[][];

function failure(f: () => unknown): CellFunctionFailure {
  try {
    f();
  } catch (e) {
    if (e instanceof CellFunctionFailure) return e;
    throw e;
  }
  throw new Error("expected a cell error");
}

/** 14 rows of a small binary problem (labels, one numeric column) with headers. */
const Y: Range = [["y"], ...[0, 1, 0, 1, 1, 0, 1, 0, 1, 0, 1, 1, 0, 0].map((v) => [v])];
const column = (f: (i: number) => CellValue): Range => Y.slice(1).map((_, i) => [f(i)]);

/** Probabilities of a softmax row add up to 1 within this (a sum of a few doubles of at most 1). */
const SUM_TOLERANCE = 1e-12;

describe("1. outputs are sized before the work and refused with the sheet's limits", () => {
  test("BASIS levels on 5,000 distinct texts is refused at once, naming the output and the limits", () => {
    const data: Range = [["a"], ...Array.from({ length: 5000 }, (_, i) => [`t${i}`])];
    const e = failure(() => call("BASIS", [data, [["a: levels"]]]));
    expect(e.code).toBe("OUTPUT_TOO_LARGE");
    expect(e.message).toContain("ODDS.BASIS would return 5,001 rows x 5,000 columns");
    expect(e.message).toContain("1,048,576 rows and 16,384 columns");
  });

  test("pairs on 200 columns and poly(10) on 12 columns exceed 16,384 columns: refused", () => {
    const wide = (m: number): Range => [Array.from({ length: m }, (_, j) => `c${j}`), ...Array.from({ length: 4 }, (_, i) => Array.from({ length: m }, (_, j) => i * j + 1))];
    expect(failure(() => call("BASIS", [wide(200), [["*: pairs"]]])).message).toContain("19,900 columns");
    expect(failure(() => call("BASIS", [wide(12), [["*: poly(10)"]]])).code).toBe("OUTPUT_TOO_LARGE");
  });

  test("PROB with 45 classes on 10,000 rows blames the output, not the input", () => {
    const labels: Range = [["y"], ...Array.from({ length: 10000 }, (_, i) => [`k${i % 45}`])];
    const predictors: Range = [["x"], ...Array.from({ length: 10000 }, (_, i) => [i % 7])];
    const e = failure(() => call("PROB", [labels, predictors]));
    expect(e.code).toBe("OUTPUT_TOO_LARGE");
    expect(e.message).toContain("ODDS.PROB");
  });

  test("SCORE with 300 classes over 5,000 rows is refused before scoring", () => {
    const table: Range = [["class (reference: c0)", "term", "coefficient"], ...Array.from({ length: 299 }, (_, k) => [`c${k + 1}`, "(intercept)", k / 100])];
    const rows: Range = [["x"], ...Array.from({ length: 5000 }, (_, i) => [i])];
    expect(failure(() => call("SCORE", [table, rows])).code).toBe("OUTPUT_TOO_LARGE");
  });
});

describe("2. no text over 32,767 characters reaches a cell", () => {
  test("a long header is cut with a note saying how much was dropped", () => {
    const name = "h".repeat(40_000);
    const out = call("BASIS", [[[name], [1], [2], [3]], [[`"${name}": z`]]]);
    const header = out[0][0] as string;
    expect(header.length).toBeLessThanOrEqual(MAX_CELL_TEXT);
    expect(header).toMatch(/cut: [\d,]+ more characters; a cell holds at most 32,767\]$/);
  });

  test("fitCellText keeps short text and never splits a surrogate pair", () => {
    expect(fitCellText("abc")).toBe("abc");
    const cut = fitCellText("🍎".repeat(20_000));
    expect(cut.length).toBeLessThanOrEqual(MAX_CELL_TEXT);
    expect(cut).not.toMatch(/[\ud800-\udbff](?![\udc00-\udfff])/);
  });

  test("a message quoting a huge cell stays short (placeholders are capped)", () => {
    const m = formatMessage("NOT_A_NUMBER", { argument: "x", row: 2, column: 1, value: "v".repeat(40_000) });
    expect(m.length).toBeLessThan(MAX_PARAM_CHARS + 200);
  });
});

describe("3. error cells are missing values (counted, named) or refused, per argument", () => {
  const predictors: Range = [["x"], ...column((i) => (i * 7) % 5)];
  test("#N/A in a yes/no label column skips the row with a warning, never a third class", () => {
    const labels: Range = [["y"], ...column((i) => (i === 2 ? ({ code: "#N/A" } as unknown as CellValue) : i % 3 === 0 ? "yes" : "no")) as Range];
    const out = call("FIT", [labels, predictors]);
    expect(out[0][0]).toBe("class (positive: yes)");
    expect(out.some((r) => /1 cell of the labels range holds an error value \(first: #N\/A in row 4, column 1\)/.test(String(r[0])))).toBe(true);
  });

  test("an error literal in a text predictor is blank, not a category", () => {
    const labels: Range = [["y"], ...column((i) => (i % 3 === 0 ? "yes" : "no"))];
    const text: Range = [["x", "r"], ...Y.slice(1).map((_, i) => [(i * 7) % 5, i === 5 ? "#N/A" : ["S", "T"][i % 2]])];
    const terms = call("FIT", [labels, text]).map((r) => r[1]);
    expect(terms).not.toContain("r=#N/A");
    expect(readTable(text, { argument: "predictors" }).errorCells).toEqual({ count: 1, first: { row: 7, column: 2, value: "#N/A" } });
  });

  test("metrics refuse an error cell, naming the argument and the cell", () => {
    const e = failure(() => call("LOGLOSS", [[["y"], [1], [0]], [["p"], [{ code: "#DIV/0!" } as unknown as CellValue], [0.2]]]));
    expect(e.code).toBe("ERROR_VALUE_CELL");
    expect(e.message).toContain("The probabilities range holds the error value #DIV/0! in row 2, column 1");
  });
});

describe("4. Firth's cost is bounded by a work estimate", () => {
  test("2,000 rows x 400 terms is refused before fitting, with an accepted size as example", () => {
    expect(() => checkFirthWork(2000, 401)).toThrow(/at most 111 terms at 2,000 rows/);
    expect(() => checkFirthWork(1100, 150)).not.toThrow();
    expect(1100 * 150 * 150).toBeLessThanOrEqual(FIRTH_WORK_LIMIT);
  });

  test("FIT firth=true over the limit is FIRTH_TOO_COSTLY; the benchmark's case is accepted by the limit", () => {
    const { labels, predictors } = firthCaseRanges(300, 300);
    expect(failure(() => call("FIT", [labels, predictors, [["firth=true"]]])).code).toBe("FIRTH_TOO_COSTLY");
    // The benchmark's case (bench/firthLimit.ts: predictors plus the intercept) lies within the limit.
    expect(() => checkFirthWork(FIRTH_CASE.rows, FIRTH_CASE.predictors + 1)).not.toThrow();
    expect(FIRTH_CASE.rows * (FIRTH_CASE.predictors + 1) ** 2).toBeLessThanOrEqual(FIRTH_WORK_LIMIT);
  });
});

describe("5. wrong or blank answers at the ends of the double range", () => {
  test("minmax on [1.7e308, -1.7e308, 0] is 1, 0, 0.5", () => {
    expect(call("BASIS", [[["a"], [1.7e308], [-1.7e308], [0]], [["a: minmax"]]])).toEqual([["minmax(a)"], [1], [0], [0.5]]);
  });

  test("SCORE's multi-class probabilities add up to 1 for intercepts of 1e15 and more", () => {
    for (const b of [1e15, 1e200]) {
      const out = call("SCORE", [[["class (reference: A)", "term", "coefficient"], ["B", "(intercept)", b], ["C", "(intercept)", b]], [["x"], [1]]]);
      const p = out[1] as number[];
      expect(Math.abs(p[0] + p[1] + p[2] - 1)).toBeLessThan(SUM_TOLERANCE);
      expect(p).toEqual([0, 0.5, 0.5]);
    }
  });

  test("a binary score whose linear predictor overflows is 1 or 0, not blank", () => {
    const out = call("SCORE", [[["class (positive: y)", "term", "coefficient"], ["y", "(intercept)", 1e308], ["y", "x", 1e308]], [["x"], [1], [-2]]]);
    expect(out).toEqual([["P(y)"], [1], [0]]);
  });
});

describe("5. the fit at the ends of the double range, against R (test/fixtures/binary/extremes.R)", () => {
  const R = rReference;
  const labels: Range = [["y"], ...R.data.y.map((v) => [v])];
  const predictors = (f: (x: number, i: number) => number): Range => [["x"], ...R.data.x.map((v, i) => [f(v, i)])];
  /** R agrees with our ordinary fits to about 1e-10 (DEVELOPERS.md); its JSON keeps 15 digits. */
  const R_TOL = 1e-9;
  const rel = (a: unknown, b: number) => Math.abs((a as number) / b - 1);
  const notes = (table: Range) => table.slice(3).map((r) => String(r[0]));

  test("one outlier at 1e9 (row 20 of 20, label 1): the estimate exists and is the fit of rows 1-19, not separation", () => {
    const table = call("FIT", [labels, predictors((x, i) => (i === R.outlier.row - 1 ? R.outlier.value : x))]);
    const ref = R.outlier.first19;
    // R's own glm does not reach it (not converged, or a lower likelihood): see the fixture's loglikAt.
    expect(R.outlier.loglikAt.first19).toBeGreaterThan(Math.max(R.outlier.loglikAt.strict, R.outlier.loglikAt.default));
    for (let t = 0; t < 2; t++) {
      expect(rel(table[1 + t][2], ref.coefficients[t])).toBeLessThan(R_TOL);
      expect(rel(table[1 + t][3], ref.standardErrors[t])).toBeLessThan(R_TOL);
    }
    expect(notes(table).some((m) => /separated|did not converge/.test(m))).toBe(false);
  });

  test("a column multiplied by 1e-200: coefficient about 4e200 as R gives it, and the standard error R cannot (its variance overflows)", () => {
    const table = call("FIT", [labels, predictors((x) => x * R.scaled.factor)]);
    expect(R.scaled.fit.standardErrors[1]).toBe("Inf");
    for (let t = 0; t < 2; t++) {
      expect(rel(table[1 + t][2], R.scaled.fit.coefficients[t])).toBeLessThan(R_TOL);
      expect(rel(table[1 + t][3], R.scaled.expectedStandardErrors[t])).toBeLessThan(R_TOL);
      expect(rel(table[1 + t][4], R.plain.z[t])).toBeLessThan(R_TOL);
    }
  });

  test.each([
    ["original", 0],
    ["original", 1],
    ["standardized", 0],
    ["standardized", 1],
  ] as const)("penalty %s #%d (1e300, 1e305): the intercept kept, the slope of the closed form, converged without warnings", (scale, k) => {
    const ref = R.ridge[scale][k];
    const options: Range = [[`penalty=${ref.penalty}; scale=${scale}`]];
    const table = call("FIT", [labels, predictors((x) => x), options]);
    expect(rel(table[1][2], ref.intercept)).toBeLessThan(1e-12); // logit(11/20) and a shift of 1e-300
    expect(rel(table[2][2], ref.slope)).toBeLessThan(1e-12);
    expect(notes(table).filter((m) => m !== "")).toEqual([expect.stringMatching(/^The fit is penalized/)]);
    const report = new Map(call("REPORT", [labels, predictors((x) => x), options]).map((r) => [r[0], r[1]]));
    expect([report.get("converged"), report.get("parameters estimated")]).toEqual([true, 2]);
  });
});

describe("6. term names are unique by construction, and SCORE reads FIT's own table", () => {
  const labels = Y;
  const cases: [string, Range][] = [
    ["headers a, a, a (2)", [["a", "a", "a (2)"], ...Y.slice(1).map((_, i) => [i % 3, (i * 7) % 5, (i * i) % 4])]],
    ["a header (intercept)", [["(intercept)", "b"], ...Y.slice(1).map((_, i) => [i % 3, (i * 7) % 5])]],
    ["a numeric column r=S beside text column r holding S", [["r=S", "r"], ...Y.slice(1).map((_, i) => [(i * 7) % 5, ["A", "S"][i % 2]])]],
  ];
  test.each(cases)("%s", (_, predictors) => {
    const table = call("FIT", [labels, predictors]);
    const terms = table.slice(1).map((r) => r[1]).filter((t) => t !== "" && !String(t).includes(" were ") && !String(t).includes(" was "));
    expect(new Set(terms).size).toBe(terms.length);
    const fitted = call("PROB", [labels, predictors]).slice(1).map((r) => r[0] as number);
    const scored = call("SCORE", [table, predictors]).slice(1).map((r) => r[0] as number);
    scored.forEach((p, i) => expect(p).toBeCloseTo(fitted[i], 10));
  });

  test("class (reference: B) with an equation for B is refused; class (reference: ) names no P())", () => {
    expect(failure(() => call("SCORE", [[["class (reference: B)", "term", "coefficient"], ["B", "(intercept)", 1], ["C", "(intercept)", 1]], [["x"], [1]]])).code).toBe("COEFFICIENT_REFERENCE_IS_EQUATION");
    expect(call("SCORE", [[["class (reference: )", "term", "coefficient"], ["B", "(intercept)", 1], ["C", "(intercept)", 1]], [["x"], [1]]])[0]).toEqual(["P(reference)", "P(B)", "P(C)"]);
  });
});

describe("7. one validation rule for the metrics", () => {
  test("AUC refuses probabilities of 1.5 and -0.1 like LOGLOSS", () => {
    for (const fn of ["AUC", "LOGLOSS", "CONFUSION", "CALIBRATION"]) {
      expect([fn, failure(() => call(fn, [[[1], [0], [1]], [[1.5], [-0.1], [0.4]]])).code]).toEqual([fn, "BAD_PROBABILITY"]);
    }
  });
});

describe("7. metrics over labels of one class: defined where the metric is", () => {
  const yes: Range = [["y"], ["yes"], ["yes"], ["yes"]];
  const p = [0.9, 0.8, 0.3];
  /** Log-loss of three rows of the class the column is for, written out from its definition. */
  const meanMinusLog = (q: number[]) => -(Math.log(q[0]) + Math.log(q[1]) + Math.log(q[2])) / 3;
  const LOSS_TOLERANCE = 1e-14; // a mean of three logs in double precision

  test("LOGLOSS is the mean of -log P(observed class), whether the column, its header or positive names the class", () => {
    const cases: [Range, Range | null, number][] = [
      [[["P(yes)"], ...p.map((v) => [v])], null, meanMinusLog(p)],
      [[["p"], ...p.map((v) => [v])], [["positive=yes"]], meanMinusLog(p)],
      [[["P(no)"], ...p.map((v) => [v])], null, meanMinusLog(p.map((v) => 1 - v))],
      [[["P(no)", "P(yes)"], ...p.map((v) => [1 - v, v])], null, meanMinusLog(p)],
    ];
    for (const [probs, options, expected] of cases) {
      const out = call("LOGLOSS", options ? [yes, probs, options] : [yes, probs]);
      expect(Math.abs((out[0][0] as number) - expected)).toBeLessThan(LOSS_TOLERANCE);
    }
    const three = call("LOGLOSS", [[["y"], ["b"], ["b"], ["b"]], [["P(a)", "P(b)", "P(c)"], [0.1, 0.8, 0.1], [0.2, 0.7, 0.1], [0.3, 0.3, 0.4]]]);
    expect(Math.abs((three[0][0] as number) - meanMinusLog([0.8, 0.7, 0.3]))).toBeLessThan(LOSS_TOLERANCE);
  });

  test("CONFUSION counts one class against its partner (1/0) with the undefined rate left empty", () => {
    const out = call("CONFUSION", [[["y"], [1], [1], [1]], [["p"], ...p.map((v) => [v])], [["positive=1"]]]);
    expect(out.slice(0, 3).map((r) => r.slice(0, 3))).toEqual([["actual \\ predicted", "0", "1"], ["0", 0, 0], ["1", 1, 2]]);
    expect(out.find((r) => r[0] === "sensitivity (1)")?.[1]).toBeCloseTo(2 / 3, 15);
    expect(out.find((r) => r[0] === "specificity (0)")?.[1]).toBe("");
  });

  test("one unnamed column is METRIC_CLASS_UNNAMED; AUC and CALIBRATION say they need both classes", () => {
    const unnamed = failure(() => call("LOGLOSS", [yes, [["p"], ...p.map((v) => [v])]]));
    expect(unnamed.code).toBe("METRIC_CLASS_UNNAMED");
    expect(unnamed.message).toContain('Every row has the label "yes"');
    expect(failure(() => call("CONFUSION", [[[1], [1], [1]], p.map((v) => [v])])).code).toBe("METRIC_CLASS_UNNAMED");
    for (const fn of ["AUC", "CALIBRATION"]) {
      const e = failure(() => call(fn, [yes, [["P(yes)"], ...p.map((v) => [v])]]));
      expect([fn, e.code]).toEqual([fn, "METRIC_NEEDS_BOTH_CLASSES"]);
      expect(e.message).toContain(`ODDS.${fn}`);
    }
  });
});

describe("8. messages", () => {
  test("a wrong new_rows range is named new_rows", () => {
    const predictors: Range = [["x", "z"], ...Y.slice(1).map((_, i) => [(i * 7) % 5, i % 3])];
    expect(failure(() => call("PROB", [Y, predictors, [[1], [2]]])).message).toContain("new_rows");
  });

  test("penalty=0,5 says the comma is a separator; a line break separates; a third column is refused", () => {
    const predictors: Range = [["x"], ...column((i) => (i * 7) % 5)];
    const e = failure(() => call("FIT", [Y, predictors, [["penalty=0,5"]]]));
    expect(e.code).toBe("OPTION_DECIMAL_COMMA");
    expect(e.message).toContain('"penalty=0.5"');
    expect(call("FIT", [Y, predictors, [["level=0.9\npenalty=0"]]])[0][6]).toBe("lower 90%");
    expect(failure(() => call("FIT", [Y, predictors, [["level", 0.9, "x"]]])).code).toBe("OPTIONS_RANGE_SHAPE");
  });

  test("1e999 is quoted as typed, not called Infinity", () => {
    const e = failure(() => call("FIT", [Y, [["x"], ...column((i) => (i === 0 ? "1e999" : i))]]));
    expect(e.message).toContain('"1e999"');
    expect(e.message).not.toContain("Infinity");
  });

  test("level=0.999999999999 is not labelled 100%", () => {
    expect(levelLabel(0.999999999999)).toBe("99.9999999999%");
    expect(levelLabel(0.95)).toBe("95%");
    expect(levelLabel(1)).toBe("100%");
  });

  test("singular and plural", () => {
    expect(formatMessage("RANGE_SHAPE_MISMATCH", { argument: "a", got: 1, expectedArgument: "b", expected: 2 })).toContain("has 1 row but");
    expect(formatMessage("BASIS_MANY_COLUMNS", { columns: 1, rows: 1, ratio: 1, rule: 10 })).toContain("makes 1 column for 1 row (");
    expect(formatMessage("SEPARATION_QUASI", { columns: '"a"', count: 1, rows: "3" })).toMatch(/^The classes are separated by "a" for 1 row \(for example row 3\)/);
    expect(formatMessage("NOT_CONVERGED", { iterations: 1, change: 0.5 })).toContain("in 1 iteration (");
    expect(formatMessage("NOT_CONVERGED", { iterations: 25, change: 0.5 })).toContain("in 25 iterations (");
    expect(formatMessage("TOO_FEW_CALIBRATION_GROUPS", { groups: 1, requested: 10, needed: 3 })).toContain("only 1 group (of 10 requested)");
  });

  // A header row read the wrong way is a common cause of a problem: the problem says so.
  const ys = Y.slice(1);
  const xs: Range = ys.map((_, i) => [(i * 7) % 5]);
  test("a label header over a predictors range without one: the problem carries the header hint", () => {
    const e = failure(() => call("FIT", [Y, xs]));
    expect(e.code).toBe("NOT_A_NUMBER");
    expect(e.message).toContain('("y") is not a number');
    expect(e.message).toContain("(Header rows: the first row of predictors looks like data and the first row of labels like column names, so every first row was read as data;");
    expect(e.message).toContain("set headers=yes or headers=no.)");
  });

  test("a numeric first label under a predictors header: the shape problem says the labels' first row became a header", () => {
    const e = failure(() => call("FIT", [ys, [["x"], ...xs]]));
    expect(e.code).toBe("RANGE_SHAPE_MISMATCH");
    expect(e.message).toContain("the first row of predictors looks like column names and the first row of labels like data, so every first row was read as column names");
  });

  test("the hint is absent when the first rows agree, and headers=no settles it", () => {
    expect(failure(() => call("FIT", [Y, [["x"], ...xs.slice(1)]])).message).not.toContain("Header rows");
    expect(failure(() => call("FIT", [Y, xs, [["headers=no"]]])).message).not.toContain("Header rows");
  });

  test("a metric whose labels start with a number under a probabilities header asks instead of dropping the row", () => {
    const labels: Range = [[1], [0], [1], [0]];
    const e = failure(() => call("LOGLOSS", [labels, [["P(1)"], [0.9], [0.2], [0.6]]]));
    expect(e.code).toBe("METRIC_HEADERS_DISAGREE");
    expect(e.message).toContain("The first row of labels looks like data, but the first row of probabilities looks like column names.");
    // Said explicitly, the same ranges are read: headers=yes takes row 1 as names (three rows remain).
    const out = call("LOGLOSS", [labels, [["P(1)"], [0.9], [0.2], [0.6]], [["headers=yes"]]]);
    expect(out[0][0]).toBeCloseTo(-(Math.log(1 - 0.9) + Math.log(0.2) + Math.log(1 - 0.6)) / 3, 14); // labels 0, 1, 0
  });
});
