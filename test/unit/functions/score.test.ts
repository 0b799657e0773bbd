/**
 * ODDS.SCORE(coefficients, rows): probabilities from a coefficient table on the sheet. The reference
 * is ODDS.PROB on the same rows (the fit itself is checked against R and Stata in fit.test.ts), plus
 * hand computations of the logistic and softmax functions for edited tables.
 */
import * as spector from "../../fixtures/binary/spector.json";
import * as anes from "../../fixtures/multiclass/anes96.json";
import { formatMessage } from "../../../src/shared/messages";
import { fit, prob, score } from "../../../src/functions/functions";
import { sharedFitCache } from "../../../src/shared/fitCache";
import { OMITTED, column, expectClose, expectCleanCells, failure, table, type Range } from "./excel";

/** SCORE adds the same terms in the same order as the engine's predictor: a few ulps. */
const SAME_ARITHMETIC = 1e-13;

const sigmoid = (x: number) => 1 / (1 + Math.exp(-x));
const d = spector.data;
const labels = column("GRADE", d.GRADE);
const predictors = table({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI });
const newRows = table({ GPA: [3.1, 2.2, 3.9], TUCE: [24, 17, 28], PSI: [1, 0, 0] });

beforeEach(() => sharedFitCache().clear());

describe("ODDS.SCORE from ODDS.FIT's spilled table", () => {
  test("two classes: the same probabilities as ODDS.PROB on the same rows", () => {
    const coefficients = fit(labels, predictors, OMITTED);
    const scored = score(coefficients, newRows);
    const reference = prob(labels, predictors, newRows, OMITTED);
    expectCleanCells(scored);
    expect(scored[0]).toEqual(["P(1)"]);
    for (let i = 1; i <= 3; i++) expectClose(scored[i][0], reference[i][0] as number, SAME_ARITHMETIC, `row ${i}`);
  });

  test("the notes FIT writes below its table are ignored", () => {
    const withNote = fit(column("GRADE", [...d.GRADE, null]), table({ GPA: [...d.GPA, 1], TUCE: [...d.TUCE, 1], PSI: [...d.PSI, 1] }), OMITTED);
    expect(withNote.length).toBeGreaterThan(5); // table, blank row, note
    const scored = score(withNote, newRows);
    expect(scored).toHaveLength(4);
  });

  test("several classes (reference form): the same probabilities as ODDS.PROB", () => {
    const l = column("PID", anes.y);
    const p = table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]])));
    const rows = [p[0], ...p.slice(1, 6)];
    const scored = score(fit(l, p, OMITTED), rows);
    const reference = prob(l, p, rows, OMITTED);
    expect(scored[0]).toEqual(reference[0]);
    for (let i = 1; i < 6; i++) for (let k = 0; k < 7; k++) expectClose(scored[i][k], reference[i][k] as number, 1e-12, `row ${i} class ${k}`);
  });

  test("several classes, penalized symmetric form: the same probabilities as ODDS.PROB", () => {
    const l = column("PID", anes.y);
    const p = table(Object.fromEntries(anes.columns.map((c, k) => [c, anes.X[k]])));
    const options = [["form=symmetric; penalty=1"]];
    const coefficients = fit(l, p, options);
    expect(coefficients[0][0]).toBe("class (symmetric)");
    const rows = [p[0], ...p.slice(1, 4)];
    const scored = score(coefficients, rows);
    const reference = prob(l, p, rows, options);
    expect(scored[0]).toEqual(reference[0]);
    for (let i = 1; i < 4; i++) for (let k = 0; k < 7; k++) expectClose(scored[i][k], reference[i][k] as number, 1e-12, `row ${i} class ${k}`);
  });

  test("an edited coefficient changes the probabilities as the logistic function says", () => {
    const coefficients = fit(labels, predictors, OMITTED).map((r) => r.slice());
    coefficients[4][2] = 0; // drop PSI by hand
    const scored = score(coefficients, newRows);
    const b = coefficients.slice(1, 4).map((r) => r[2] as number);
    expectClose(scored[1][0], sigmoid(b[0] + b[1] * 3.1 + b[2] * 24), SAME_ARITHMETIC, "edited model");
  });
});

describe("ODDS.SCORE from hand-made tables", () => {
  test("only term and coefficient columns: a binary model named 'positive'", () => {
    const coefficients: Range = [["term", "coefficient"], ["(intercept)", -1], ["dose", 0.5]];
    const out = score(coefficients, column("dose", [0, 2, 4]));
    expect(out[0]).toEqual(["P(positive)"]);
    expectClose(out[1][0], sigmoid(-1), 1e-15, "dose 0");
    expectClose(out[3][0], sigmoid(1), 1e-15, "dose 4");
  });

  test("a term column=level is the indicator of that category in the column", () => {
    const coefficients: Range = [["term", "coefficient"], ["(intercept)", 0.2], ["region=North", 1.5], ["region=South", -0.5]];
    const out = score(coefficients, column("region", ["North", "South", null, "East"]));
    expectClose(out[1][0], sigmoid(1.7), 1e-15, "North");
    expectClose(out[2][0], sigmoid(-0.3), 1e-15, "South");
    expect(out[3]).toEqual([""]);
    expectClose(out[4][0], sigmoid(0.2), 1e-15, "East counts as the reference category");
  });

  test("symmetric form: softmax over one equation per class", () => {
    const coefficients: Range = [
      ["class (symmetric)", "term", "coefficient"],
      ["a", "(intercept)", 0],
      ["b", "(intercept)", 1],
      ["c", "(intercept)", 2],
    ];
    const out = score(coefficients, column("x", [1]));
    const z = 1 + Math.E + Math.E ** 2;
    expect(out[0]).toEqual(["P(a)", "P(b)", "P(c)"]);
    expectClose(out[1][2], Math.E ** 2 / z, 1e-15, "P(c)");
  });

  test("a blank coefficient counts as 0 (aliased terms are blank in FIT's table)", () => {
    const coefficients: Range = [["term", "coefficient"], ["(intercept)", 1], ["x", ""]];
    expectClose(score(coefficients, column("x", [5]))[1][0], sigmoid(1), 1e-15, "blank coefficient");
  });

  test("a row with a blank in a used column is blank; the others are scored", () => {
    const coefficients: Range = [["term", "coefficient"], ["(intercept)", 1], ["x", 2]];
    const out = score(coefficients, column("x", [0, null, 1]));
    expect(out[2]).toEqual([""]);
    expectClose(out[3][0], sigmoid(3), 1e-15, "third row");
  });
});

describe("ODDS.SCORE, input problems", () => {
  test("a table without term/coefficient headers is #VALUE! COEFFICIENT_TABLE_HEADER", () => {
    const f = failure(() => score([["(intercept)", 1], ["x", 2]], column("x", [1])));
    expect(f.cellError).toBe("#VALUE!");
    expect(f.code).toBe("COEFFICIENT_TABLE_HEADER");
    expect(f.message).toBe(formatMessage("COEFFICIENT_TABLE_HEADER", { found: '"(intercept)" and "1"' }));
  });

  test("a term with no matching column in rows is #VALUE! COLUMN_NOT_FOUND listing the columns", () => {
    const f = failure(() => score([["term", "coefficient"], ["(intercept)", 1], ["age", 2]], table({ weight: [1], height: [2] })));
    expect(f.code).toBe("COLUMN_NOT_FOUND");
    expect(f.message).toBe(formatMessage("COLUMN_NOT_FOUND", { name: "age", columns: '"weight" and "height"' }));
  });

  test("a coefficient that is not a number is #VALUE! NOT_A_NUMBER at its cell", () => {
    const f = failure(() => score([["term", "coefficient"], ["(intercept)", "one"]], column("x", [1])));
    expect(f.code).toBe("NOT_A_NUMBER");
    expect(f.message).toBe(formatMessage("NOT_A_NUMBER", { argument: "coefficients", row: 2, column: 2, value: "one" }));
  });

  test("a term listed twice for one class is #VALUE! COEFFICIENT_TERM_REPEATED", () => {
    const f = failure(() => score([["term", "coefficient"], ["x", 1], ["x", 2]], column("x", [1])));
    expect(f.code).toBe("COEFFICIENT_TERM_REPEATED");
    expect(f.message).toBe(formatMessage("COEFFICIENT_TERM_REPEATED", { term: "x", outcome: "(none)", first: 2, second: 3 }));
  });

  test("text in a column a term needs as numbers is #VALUE! NOT_A_NUMBER", () => {
    const f = failure(() => score([["term", "coefficient"], ["x", 1]], column("x", ["a", "b"])));
    expect(f.code).toBe("NOT_A_NUMBER");
    expect(f.message).toBe(formatMessage("NOT_A_NUMBER", { argument: "rows", row: 2, column: 1, value: "a" }));
  });

  test("a table with a header but no terms is #VALUE! EMPTY_RANGE", () => {
    const f = failure(() => score([["term", "coefficient"]], column("x", [1])));
    expect(f.code).toBe("EMPTY_RANGE");
    expect(f.message).toBe(formatMessage("EMPTY_RANGE", { argument: "coefficients" }));
  });
});
