/**
 * The scoring block's plan: which columns it has, what the formulas refer to, the overflow-safe
 * forms, the coefficient table the formulas read, and the refusals with their catalogue codes.
 * The values the formulas compute are checked by a real spreadsheet engine in test/spreadsheet/.
 */
import { trainModel } from "../../../../src/engine";
import { numberLiteral } from "../../../../src/engine/export/formulaLiteral";
import type { BlockPlacement, SheetColumn } from "../../../../src/engine/export/formulaTemplate";
import { planScoring, renderScoringRow } from "../../../../src/engine/export/scoringPlan";
import { describeModel } from "../../../../src/engine/portable/describeModel";
import { caught } from "../../../support/caught";

const crates: (string | number | null)[][] = [["weight", "grade", "held"]];
for (let i = 0; i < 30; i++) crates.push([100 + ((i * 37) % 50), ["A", "B", "C"][i % 3], (i * 7) % 5 < 2 ? "yes" : "no"]);

function place(names: string[], extra: Partial<BlockPlacement> = {}): BlockPlacement {
  const predictors = new Map<string, SheetColumn>(names.map((n, j) => [n, { sheet: "Data", column: j + 1, firstRow: 2 }]));
  return { sheet: "Data", left: 6, headerRow: 1, predictors, data: new Map(), coefficients: { sheet: "Data", top: 1, left: 20 }, ...extra };
}

function describe2(labels: (string | number | null)[][], predictors: (string | number | null)[][], options = {}) {
  return describeModel(trainModel(labels, predictors, options), { name: "m", producerVersion: "test" });
}

describe("binary block", () => {
  const desc = describe2(crates.map((r) => [r[2]]), crates.map((r) => [r[0], r[1]]));
  const p = place(["weight", "grade"]);
  const plan = planScoring(desc, p);
  const row = renderScoringRow(plan, p, 0);

  test("columns: inputs, the category code, indicator terms, linear predictor, probability, class", () => {
    expect(plan.columns.map((c) => [c.role, c.header])).toEqual([
      ["input", "input: weight"],
      ["levels", "levels: grade"],
      ["term", "grade=B"],
      ["term", "grade=C"],
      ["linear predictor", "linear predictor"],
      ["probability", "P(yes)"],
      ["class", "class"],
    ]);
  });

  test("a blank input is an error, never a silent 0; text categories are matched exactly", () => {
    expect(row[0]).toBe("=IF(ISBLANK($A2),NA(),$A2+0)");
    expect(row[1]).toBe('=SUMPRODUCT(EXACT(TRIM($B2),{"A","B","C"})*{1,2,3})');
    expect(row[2]).toBe("=IF(G2=0,NA(),IF(G2=2,1,0))");
  });

  test("the linear predictor reads every coefficient from its cell, the sigmoid is split by sign", () => {
    expect(row[4]).toBe("=$V$2+$V$3*F2+$V$4*H2+$V$5*I2");
    expect(row[5]).toBe("=IF(J2>=0,1/(1+EXP(-J2)),EXP(J2)/(1+EXP(J2)))");
    expect(row[6]).toBe('=IF(K2>=$V$7,"yes","no")');
  });

  test("the coefficient table holds the fit's estimates in ODDS.FIT's layout, the threshold below", () => {
    expect(plan.coefficientTable[0]).toEqual(["class (positive: yes)", "term", "coefficient"]);
    expect(plan.coefficientTable.slice(1, 5).map((r) => [r[1], r[2]])).toEqual(desc.terms.map((t, k) => [t, desc.equations[0].coefficients[k]]));
    expect(plan.coefficientTable[6]).toEqual(["", "threshold", 0.5]);
  });

  test("row i refers to sheet row i + 2 of the data", () => {
    expect(renderScoringRow(plan, p, 9)[0]).toBe("=IF(ISBLANK($A11),NA(),$A11+0)");
  });

  test("sources on another sheet carry its name, quoted when needed", () => {
    const other = place(["weight", "grade"], { sheet: "Scoring" });
    other.predictors = new Map([
      ["weight", { sheet: "Lot checks", column: 1, firstRow: 2 }],
      ["grade", { sheet: "Lot checks", column: 2, firstRow: 2 }],
    ]);
    const r = renderScoringRow(planScoring(desc, other), other, 0);
    expect(r[0]).toBe("=IF(ISBLANK('Lot checks'!$A2),NA(),'Lot checks'!$A2+0)");
    expect(r[4]).toBe("=Data!$V$2+Data!$V$3*F2+Data!$V$4*H2+Data!$V$5*I2");
  });
});

describe("multi-class block", () => {
  const labels = crates.map((r, i) => [i === 0 ? "bin" : ["low", "mid", "top"][i % 3]]);
  const weights = crates.map((r, i) => [i === 0 ? "weight" : 100 + ((i * 13) % 29)]);
  const desc = describe2(labels, weights);
  const p = place(["weight"]);
  const plan = planScoring(desc, p);
  const row = renderScoringRow(plan, p, 0);
  const at = (key: string) => plan.columns.findIndex((c) => c.key === key);

  test("softmax with the row maximum subtracted; the reference class contributes EXP(-max)", () => {
    expect(plan.columns.map((c) => c.header)).toEqual([
      "input: weight",
      "linear predictor (mid)",
      "linear predictor (top)",
      "largest linear predictor",
      "sum of exponentials",
      "P(low)",
      "P(mid)",
      "P(top)",
      "class",
    ]);
    expect(row[at("shift")]).toBe("=MAX(0,G2,H2)");
    expect(row[at("sum")]).toBe("=EXP(-I2)+EXP(G2-I2)+EXP(H2-I2)");
    expect(row[5]).toBe("=EXP(-I2)/J2");
    expect(row[6]).toBe("=EXP(G2-I2)/J2");
    expect(row[8]).toBe('=INDEX({"low","mid","top"},MATCH(MAX(K2:M2),K2:M2,0))');
  });

  test("equation e's coefficients are rows e * terms + t of the table", () => {
    expect(row[2]).toBe("=$V$4+$V$5*F2");
    expect(plan.coefficientTable[3]).toEqual(["top", "(intercept)", desc.equations[1].coefficients[0]]);
  });
});

describe("refusals", () => {
  const desc = describe2(crates.map((r) => [r[2]]), crates.map((r) => [r[0], r[1]]));

  test("a predictor column the placement does not map: EXPORT_COLUMN_NOT_PLACED naming it", () => {
    const e = caught(() => planScoring(desc, place(["weight"])));
    expect(e.code).toBe("EXPORT_COLUMN_NOT_PLACED");
    expect(e.message).toContain('"grade"');
  });

  test("a category longer than a text constant: EXPORT_LEVEL_TOO_LONG", () => {
    const long = "x".repeat(300);
    const rows = crates.map((r, i) => (i === 0 ? r : [r[0], i % 2 ? long : "short", r[2]]));
    const e = caught(() => planScoring(describe2(rows.map((r) => [r[2]]), rows.map((r) => [r[0], r[1]])), place(["weight", "grade"])));
    expect(e.code).toBe("EXPORT_LEVEL_TOO_LONG");
  });

  test("a model without estimates: EXPORT_NO_ESTIMATES", () => {
    const broken = { ...desc, equations: [{ class: "yes", coefficients: [null, 1, 2, 3] }] };
    expect(caught(() => planScoring(broken, place(["weight", "grade"]))).code).toBe("EXPORT_NO_ESTIMATES");
  });
});

describe("number literals", () => {
  test.each([0.1, -0.5, 1e-300, 123456789.123, -1.5e21, 2 ** -1074])("%p reads back as the same double", (x) => {
    const text = numberLiteral(x).replace(/[()]/g, "");
    expect(Number(text)).toBe(x);
  });
  test("negatives are parenthesized (a sheet's unary minus binds tighter than ^)", () => {
    expect(numberLiteral(-2)).toBe("(-2)");
  });
});
