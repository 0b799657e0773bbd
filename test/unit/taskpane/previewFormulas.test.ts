/**
 * The workbench's formula evaluation: =ODDS.* cells computed through the cell-function registry
 * over the sheet's values, as Excel would compute them through functions.ts.
 */
import { evaluateCellFunction } from "../../../src/functions/registry";
import { loadDemo, DEMO_SHEETS } from "../../../src/preview/demo";
import { evaluateFormula, parseFormula } from "../../../src/preview/formulas";
import { MemoryWorkbook } from "../../../src/taskpane/memoryPort";

function demoBook() {
  const wb = new MemoryWorkbook({ evaluator: evaluateFormula });
  const sheet = loadDemo(wb);
  return { wb, sheet };
}

describe("formula parsing", () => {
  test("reads calls, references with and without sheets, literals and empty arguments", () => {
    expect(parseFormula(`=ODDS.PROB(Crates!$G$1:$G$9, 'My data'!C1:F9, , "a=""b""", TRUE, -1.5e2)`)).toEqual({
      type: "call",
      name: "ODDS.PROB",
      args: [
        { type: "ref", sheet: "Crates", address: "G1:G9" },
        { type: "ref", sheet: "My data", address: "C1:F9" },
        null,
        { type: "text", value: 'a="b"' },
        { type: "bool", value: true },
        { type: "number", value: -150 },
      ],
    });
    expect(parseFormula("=CHOOSECOLS(A1:H9, 3, 5)")).toMatchObject({ type: "call", name: "CHOOSECOLS" });
    expect(parseFormula("=B:C")).toEqual({ type: "ref", sheet: null, address: "B:C" });
  });

  test("a formula it cannot read becomes #NAME? with a message saying what it can evaluate", () => {
    const { wb, sheet } = demoBook();
    wb.setCell(sheet, 1, 10, "=1+2");
    expect(wb.value(sheet, 1, 10)).toBe("#NAME?");
    expect(wb.message(sheet, 1, 10)).toContain("evaluates ODDS.* functions, CHOOSECOLS and plain references");
  });
});

describe("ODDS formulas in the workbench", () => {
  test("=ODDS.FIT over the demo ranges spills exactly what the registry returns for the same cells", () => {
    const { wb, sheet } = demoBook();
    wb.setCell(sheet, 1, 12, '=ODDS.FIT(G1:G241, C1:F241, "penalty=0")');
    const values = DEMO_SHEETS[0].values;
    const expected = evaluateCellFunction("ODDS.FIT", [values.map((r) => [r[6]]), values.map((r) => r.slice(2, 6)), [["penalty=0"]]]);
    const got = wb.read(sheet, { top: 1, left: 12, bottom: expected.length, right: 11 + expected[0].length });
    expect(got).toEqual(expected.map((r) => r.map((v) => (v === undefined ? null : v))));
  });

  test("CHOOSECOLS picks the predictor columns the pane asks for", () => {
    const { wb, sheet } = demoBook();
    wb.setCell(sheet, 1, 12, "=ODDS.CLASS(G1:G241, CHOOSECOLS(A1:H241, 3, 6))");
    wb.setCell(sheet, 1, 14, "=ODDS.CLASS(G1:G241, CHOOSECOLS(C1:F241, 1, 4))");
    expect(wb.read(sheet, { top: 1, left: 12, bottom: 241, right: 12 })).toEqual(wb.read(sheet, { top: 1, left: 14, bottom: 241, right: 14 }));
    expect(wb.value(sheet, 1, 12)).not.toMatch(/^#/);
  });

  test("a function's own problem shows its cell error and the catalogue message", () => {
    const { wb, sheet } = demoBook();
    wb.setCell(sheet, 1, 12, '=ODDS.FIT(G1:G241, C1:F241, "speed=fast")');
    expect(wb.value(sheet, 1, 12)).toBe("#VALUE!");
    expect(wb.message(sheet, 1, 12)).toContain('"speed" is not an option of ODDS.FIT');
  });

  test("an error in an input range is passed on without calling the function", () => {
    const { wb, sheet } = demoBook();
    wb.setCell(sheet, 1, 20, "=ODDS.NOSUCH(A1)");
    wb.setCell(sheet, 3, 12, "=ODDS.FIT(G1:G241, T1:T241)");
    expect(wb.value(sheet, 3, 12)).toBe("#VALUE!");
    expect(wb.message(sheet, 3, 12)).toContain("holds the error #VALUE!");
  });

  test("a function outside the ODDS namespace is #NAME?", () => {
    const { wb, sheet } = demoBook();
    wb.setCell(sheet, 1, 12, "=SUM(C2:C241)");
    expect(wb.value(sheet, 1, 12)).toBe("#NAME?");
  });

  test("editing a data cell recomputes dependent ODDS formulas", () => {
    const { wb, sheet } = demoBook();
    wb.setCell(sheet, 1, 12, "=ODDS.PROB(G1:G241, C1:F241)");
    const before = wb.value(sheet, 2, 12) as number;
    wb.setCell(sheet, 2, 6, 8); // crate C-001 now shows 8 bruises
    const after = wb.value(sheet, 2, 12) as number;
    expect(after).toBeGreaterThan(before);
  });
});
