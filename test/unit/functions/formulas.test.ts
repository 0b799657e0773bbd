/**
 * ODDS.FORMULAS(labels, predictors, [options], [recipe], [data]): the listing of the scoring block.
 * The formulas' values are checked by LibreOffice in test/spreadsheet/; here: the listing's shape,
 * its places, that its coefficient table is the fit's (ODDS.SCORE reading it back gives ODDS.PROB),
 * basis columns written from the raw data, and every refusal with its catalogue code.
 */
import { basis, formulas, prob, score } from "../../../src/functions/functions";
import { sharedFitCache } from "../../../src/shared/fitCache";
import { OMITTED, expectClose, expectCleanCells, failure, table, type Range } from "./excel";

/** SCORE adds the same terms in the same order as the engine's predictor: a few ulps. */
const SAME_ARITHMETIC = 1e-13;

const n = 36;
const weight = Array.from({ length: n }, (_, i) => 90 + ((i * 37) % 41) + (i % 7) / 10);
const grade = Array.from({ length: n }, (_, i) => ["A", "B", "C"][(i * 5) % 3]);
const held = Array.from({ length: n }, (_, i) => ((i * 7) % 5 < 2 ? "yes" : "no"));
const labels = table({ held });
const predictors = table({ weight, grade });

beforeEach(() => sharedFitCache().clear());

/** The listing's rows as a map cell -> content. */
function cells(listing: Range): Map<string, unknown> {
  return new Map(listing.slice(1).filter((r) => r[0] !== "").map((r) => [String(r[0]), r[1]]));
}


describe("the listing", () => {
  const out = formulas(labels, predictors, [["predictors_at=Orchard!A1; at=Orchard!E1"]], OMITTED, OMITTED);

  test("header, the places it used, then each block column's header and first formula", () => {
    expectCleanCells(out);
    expect(out[0]).toEqual(["cell", "content", "note"]);
    expect(String(out[1][1])).toContain("predictors from A2");
    expect(String(out[1][1])).toContain("block at Orchard!E1");
    expect(out[2]).toEqual(["Orchard!E1", "input: weight", "header"]);
    expect(out[3]).toEqual(["Orchard!E2", "=IF(ISBLANK($A2),NA(),$A2+0)", `fill down to Orchard!E${n + 1}`]);
    const c = cells(out);
    expect(c.get("Orchard!F1")).toBe("levels: grade");
    expect(c.get("Orchard!F2")).toBe('=SUMPRODUCT(EXACT(TRIM($B2),{"A","B","C"})*{1,2,3})');
  });

  test("its coefficient table is the fit's: ODDS.SCORE reading it gives ODDS.PROB", () => {
    const c = cells(out);
    // Block E..K (7 columns), one blank column, coefficient table from M1: class, term, coefficient.
    expect(c.get("Orchard!M1")).toBe("class (positive: yes)");
    const grid = [0, 1, 2, 3, 4].map((i) => ["M", "N", "O"].map((col) => (c.get(`Orchard!${col}${1 + i}`) ?? null) as never));
    const scored = score(grid, predictors);
    const reference = prob(labels, predictors, OMITTED, OMITTED);
    for (let i = 1; i <= n; i++) expectClose(scored[i][0], reference[i][0] as number, SAME_ARITHMETIC, `row ${i}`);
    expect(c.get("Orchard!N7")).toBe("threshold");
    expect(c.get("Orchard!O7")).toBe(0.5);
  });

  test("the linear predictor reads the coefficient cells; the probability uses the sign-split sigmoid", () => {
    const c = cells(out);
    expect(c.get("Orchard!I2")).toBe("=$O$2+$O$3*E2+$O$4*G2+$O$5*H2");
    expect(c.get("Orchard!J2")).toBe("=IF(I2>=0,1/(1+EXP(-I2)),EXP(I2)/(1+EXP(I2)))");
  });

  test("default places: predictors at A1, the block two columns right of them on the same sheet", () => {
    const plain = formulas(labels, predictors, OMITTED, OMITTED, OMITTED);
    expect(plain[2][0]).toBe("D1");
    expect(plain[3][1]).toBe("=IF(ISBLANK($A2),NA(),$A2+0)");
  });
});

describe("basis columns written from the raw data", () => {
  const data = table({ weight });
  const recipe = [["weight: ns(3) + z"]];
  const made = basis(data, recipe, OMITTED);

  test("the spline and z-score columns are formulas of the raw weight column", () => {
    const out = formulas(labels, made, [["predictors_at=H1"]], recipe, data);
    const c = cells(out);
    const headers = out.filter((r) => r[2] === "header").map((r) => r[1]);
    expect(headers.slice(0, 5)).toEqual(["input: weight", "ns(weight)1", "ns(weight)2", "ns(weight)3", "z(weight)"]);
    expect(String(c.get("M2"))).toBe("=IF(ISBLANK($A2),NA(),$A2+0)");
    expect(String(c.get("N2"))).toMatch(/^=\(-?[\d.]+\)\*\(\(M2-90\)\/40\.3\d*\)\+[\d.]+\*MAX\(\(\(M2-90\)\/40\.3\d*\),0\)\^3/);
    expect(out.slice(1).some((r) => r[2] === "note")).toBe(false);
  });

  test("a recipe that did not make the predictor columns: EXPORT_BASIS_MISMATCH naming the first cell", () => {
    const f = failure(() => formulas(labels, made, [["predictors_at=H1"]], [["weight: ns(4) + z"]], data));
    expect(f.code).toBe("EXPORT_BASIS_MISMATCH");
    expect(f.message).toContain('"ns(weight)1"');
  });

  test("a recipe without its data: EMPTY_RANGE for data", () => {
    expect(failure(() => formulas(labels, made, OMITTED, recipe, OMITTED)).code).toBe("EMPTY_RANGE");
  });

  test("a basis column that cannot be written is read from its predictor column, with a note", () => {
    const long = "k".repeat(300);
    const data2 = table({ weight, grade: grade.map((g) => (g === "C" ? long : g)) });
    const recipe2 = [["weight: z; grade: levels"]];
    const made2 = basis(data2, recipe2, OMITTED);
    const out = formulas(labels, made2, [["predictors_at=H1"]], recipe2, data2);
    const notes = out.slice(1).filter((r) => r[2] === "note").map((r) => String(r[1]));
    // Both indicators of the coding that holds the long category.
    expect(notes.length).toBe(2);
    for (const note of notes) expect(note).toContain("is not written as a formula");
    // The long level's indicator is read from its predictor column (H.. holds the BASIS output).
    const c = cells(out);
    const inputs = out.filter((r) => r[2] === "header" && String(r[1]).startsWith("input: ")).map((r) => r[1]);
    expect(inputs).toContain(`input: grade=${long}`);
    expect(c.size).toBeGreaterThan(10);
  });
});

describe("refusals", () => {
  test("a place that is not one cell: BAD_OPTION_VALUE", () => {
    expect(failure(() => formulas(labels, predictors, [["at=B2:C3"]], OMITTED, OMITTED)).code).toBe("BAD_OPTION_VALUE");
  });
  test("an unknown option lists the valid ones, placement options included", () => {
    const f = failure(() => formulas(labels, predictors, [["where=B2"]], OMITTED, OMITTED));
    expect(f.code).toBe("UNKNOWN_OPTION");
    expect(f.message).toContain("predictors_at");
  });
  test("a block whose header would lie above row 1: EXPORT_NO_ROOM", () => {
    const noHeader = formulas(labels, predictors, [["at=E1"]], OMITTED, OMITTED);
    expect(noHeader[2][0]).toBe("E1");
    expect(failure(() => formulas(labels, predictors, [["at=E1048576"]], OMITTED, OMITTED)).code).toBe("EXPORT_NO_ROOM");
  });
});
