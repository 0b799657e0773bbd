import { buildBasisColumns, recipeText } from "../../../src/shared/basisColumns";
import { OddsmithError } from "../../../src/shared/messages";
import type { CellValue } from "../../../src/engine/types";

const data: CellValue[][] = [
  ["age", "income", "region"],
  [30, 10, "North"],
  [40, 0, "South"],
  [50, 25, "North"],
  [60, null, "East"],
];

function thrown(f: () => unknown): OddsmithError {
  try {
    f();
  } catch (e) {
    return e as OddsmithError;
  }
  throw new Error("expected an error");
}

describe("ODDS.BASIS adapter (buildBasisColumns)", () => {
  test("returns a header row of generated names and one row per data row", () => {
    const out = buildBasisColumns(data, "age: z", null);
    expect(out).toHaveLength(5);
    expect(out[0]).toEqual(["z(age)"]);
    const sd = Math.sqrt((15 ** 2 + 5 ** 2 + 5 ** 2 + 15 ** 2) / 3);
    expect(out.slice(1).map((r) => r[0])).toEqual([-15 / sd, -5 / sd, 5 / sd, 15 / sd]);
  });

  test("a row with a problem shows \"\" in the columns it affects; other cells and rows are computed", () => {
    const out = buildBasisColumns(data, "income: log; age: raw", null);
    expect(out[0]).toEqual(["log(income)", "age"]);
    expect(out[2]).toEqual(["", 40]); // log(0) is outside the domain
    expect(out[4]).toEqual(["", 60]); // blank income
    expect(out[1][0]).toBeCloseTo(Math.log(10), 15);
  });

  test("with training data, the transforms are fitted there and applied to data", () => {
    const training: CellValue[][] = [["age"], [20], [30], [40]];
    const out = buildBasisColumns([["age"], [30], [50]], "age: z", training);
    expect(out.slice(1).map((r) => r[0])).toEqual([0, 2]);
  });

  test("an unseen category gives \"\" for that row only", () => {
    const training: CellValue[][] = [["region"], ["North"], ["South"], ["North"]];
    const out = buildBasisColumns([["region"], ["South"], ["West"]], "region: levels", training);
    expect(out).toEqual([["region=South"], [1], [""]]);
  });

  test("when no row can be computed, the first row's reason is thrown with its range row (header = row 1)", () => {
    const training: CellValue[][] = [["region"], ["North"], ["South"]];
    const e = thrown(() => buildBasisColumns([["region"], ["West"], ["Central"]], "region: levels", training));
    expect(e.code).toBe("UNSEEN_LEVEL");
    expect(e.cellError).toBe("#N/A");
    expect(e.message).toBe('Row 2 has "West" in "region", a category the model was not trained on. Known categories: "North" and "South".');
  });

  test("a recipe spread over several cells is read as one recipe, one item per cell", () => {
    expect(recipeText([["age: z", null], ["income: sqrt", ""]])).toBe("age: z; income: sqrt");
    expect(buildBasisColumns(data, [["age: z"], ["region: levels(ref=North)"]] as CellValue[][], null)[0]).toEqual(["z(age)", "region=South", "region=East"]);
  });

  test("a recipe error is thrown as #VALUE! with the valid forms", () => {
    const e = thrown(() => buildBasisColumns(data, "age ns(4)", null));
    expect(e.code).toBe("RECIPE_SYNTAX");
    expect(e.cellError).toBe("#VALUE!");
  });

  test("a column missing from training_data names that argument and its headers", () => {
    const e = thrown(() => buildBasisColumns(data, "income: z", [["age"], [1], [2]]));
    expect(e.message).toBe('The recipe names the column "income", but the training_data range has no such header. Headers found: "age".');
  });

  test("a column missing from data (present in training) names the data argument", () => {
    const e = thrown(() => buildBasisColumns([["age"], [1]], "income: z", [["income"], [1], [2]]));
    expect(e.message).toContain("the data range has no such header");
  });

  test("numbers stored as text are numbers (shared range parser)", () => {
    const out = buildBasisColumns([["x"], ["1"], ["3"]], "x: z", null);
    expect(out[1][0]).toBeCloseTo(-Math.SQRT1_2, 15);
    expect(out[2][0]).toBeCloseTo(Math.SQRT1_2, 15);
  });

  test("a missing data argument is an EMPTY_RANGE error", () => {
    expect(thrown(() => buildBasisColumns(null as unknown as CellValue[][], "x: z", null)).code).toBe("EMPTY_RANGE");
  });

  test("every returned cell is a finite number or text (never null, NaN or Infinity)", () => {
    const out = buildBasisColumns(data, "age: ns(2) + opoly(2) + bins(2); income: log1p + inv(shift=auto); region: levels; age*income", null);
    for (const row of out) for (const v of row) expect(typeof v === "string" || Number.isFinite(v)).toBe(true);
  });
});
