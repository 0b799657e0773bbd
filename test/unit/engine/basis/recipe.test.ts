import fc from "fast-check";
import type { BasisColumn } from "../../../../src/engine/basis/common";
import { applyRecipe, buildBasis, fitRecipe, parseRecipe, RECIPE_FORMS } from "../../../../src/engine/basis/recipe";
import { OddsmithError } from "../../../../src/engine/messages";

const age = [23, 35, 47, 51, 62, 29, 44, 58, 38, 70, 33, 41];
const income = [0, 12, 40, 55, 30, 18, 22, 35, 3, 80, 15, 27];
const region = ["North", "South", "North", "East", "South", "North", "West", "North", "South", "East", "North", "South"];
const data: BasisColumn[] = [
  { name: "age", values: age },
  { name: "income", values: income },
  { name: "region", values: region },
  { name: "annual bonus", values: income.map((v) => v / 10) },
];

function syntaxError(text: string): OddsmithError {
  try {
    parseRecipe(text);
  } catch (e) {
    return e as OddsmithError;
  }
  throw new Error(`no error for ${JSON.stringify(text)}`);
}

describe("recipe parsing: the valid forms", () => {
  test("'age: ns(4); income: log1p; region: levels(ref=North); age*income' gives four steps", () => {
    const plan = parseRecipe("age: ns(4); income: log1p; region: levels(ref=North); age*income");
    expect(plan.steps.map((s) => [s.targets, s.spec])).toEqual([
      [["age"], { transform: "ns", df: 4, knots: undefined, boundary: undefined }],
      [["income"], { transform: "log1p", shift: 0 }],
      [["region"], { transform: "levels", ref: "North" }],
      [["age", "income"], { transform: "product" }],
    ]);
  });

  test("line breaks separate items like semicolons; empty items and extra spaces are ignored", () => {
    const a = parseRecipe("age: z\n\n income :  minmax ;;");
    expect(a.steps.map((s) => s.spec.transform)).toEqual(["z", "minmax"]);
  });

  test("+ chains transforms of the same targets: 'age: poly(2) + ns(3)'", () => {
    const plan = parseRecipe("age: poly(2) + ns(df=3)");
    expect(plan.steps.map((s) => s.spec.transform)).toEqual(["poly", "ns"]);
    expect(plan.steps.every((s) => s.targets[0] === "age")).toBe(true);
  });

  test("headers with spaces may be bare; headers with symbols are quoted with \" or '", () => {
    expect(parseRecipe("annual bonus: log1p").steps[0].targets).toEqual(["annual bonus"]);
    expect(parseRecipe('"weight (kg)": z').steps[0].targets).toEqual(["weight (kg)"]);
    expect(parseRecipe("'a;b', \"c:d\": rbf(3)").steps[0].targets).toEqual(["a;b", "c:d"]);
  });

  test("settings: a bare first value sets the main setting; numbers, percentages, words and [lists]", () => {
    const plan = parseRecipe("x: ns(knots=[20, 40.5, 6e1], boundary=[0,100]); g: levels(ref=New York, pool=2%); y: log(shift=auto); x, y: rbf(6, centres=kmeans, seed=3, width=0.8)");
    expect(plan.steps[0].spec).toEqual({ transform: "ns", df: undefined, knots: [20, 40.5, 60], boundary: [0, 100] });
    expect(plan.steps[1].spec).toEqual({ transform: "levels", ref: "New York", minShare: 0.02 });
    expect(plan.steps[2].spec).toEqual({ transform: "log", shift: "auto" });
    expect(plan.steps[3].spec).toEqual({ transform: "rbf", k: 6, centres: "kmeans", seed: 3, width: 0.8 });
  });

  test("transform and setting names ignore case", () => {
    expect(parseRecipe("age: NS(DF=3)").steps[0].spec).toMatchObject({ transform: "ns", df: 3 });
  });

  test("defaults: poly 2, opoly 2, ns 3, rbf 5, bins 4, shift 0", () => {
    const plan = parseRecipe("a: poly; a: opoly; a: ns; a: rbf; a: bins; a: sqrt");
    expect(plan.steps.map((s) => s.spec)).toEqual([
      { transform: "poly", degree: 2 },
      { transform: "opoly", degree: 2 },
      { transform: "ns", df: 3, knots: undefined, boundary: undefined },
      { transform: "rbf", k: 5 },
      { transform: "bins", k: 4 },
      { transform: "sqrt", shift: 0 },
    ]);
  });
});

describe("recipe parsing: errors show where the text went wrong and the valid forms", () => {
  test("a missing colon points at the transform and shows the fix", () => {
    const e = syntaxError("age ns(4)");
    expect(e.code).toBe("RECIPE_SYNTAX");
    expect(e.message).toBe(`The recipe "age ns(4)" could not be read at "ns(4)". At character 5: expected ":" between the column and the transform, as in "age: ns". ${RECIPE_FORMS}`);
  });

  test("an unclosed parenthesis is reported at the end of the recipe", () => {
    expect(syntaxError("age: ns(4").message).toContain('could not be read at "(end of recipe)". At character 10: expected "," or ")"');
  });

  test("two transforms without + between them are reported at the second", () => {
    expect(syntaxError("age: ns(4) z").message).toContain('at "z". At character 12: expected "+" and another transform');
  });

  test("an unclosed quote is reported where the quote opened", () => {
    expect(syntaxError('"age: z').message).toContain("At character 1: expected a closing \"");
  });

  test("an unknown transform lists the valid ones", () => {
    const e = syntaxError("age: spline(3)");
    expect(e.code).toBe("RECIPE_UNKNOWN_TRANSFORM");
    expect(e.message).toContain("Use one of: raw, auto, poly, opoly, pairs, log, log1p, sqrt, inv, z, minmax, levels, ns, rbf, bins.");
  });

  test("an unknown setting lists the transform's settings", () => {
    expect(syntaxError("age: ns(4, degree=2)").message).toBe('"degree" is not an option of the transform ns. Valid options: df, knots, boundary.');
  });

  test("a bad setting value names the step and the allowed values", () => {
    expect(syntaxError("age: ns(df=0)").message).toBe('In the recipe step "age: ns(df=0)", df=0 is not allowed. Use a whole number from 1 to 20.');
    expect(syntaxError("g: levels(pool=0.5)").message).toContain("pool=0.5 is not allowed. Use a row count");
    expect(syntaxError("a: ns(3, knots=[1,2])").message).toContain("Give df or knots, not both.");
  });

  test("a value for a transform that takes none is refused", () => {
    expect(syntaxError("age: z(3)").message).toContain("expected no settings: z takes none");
  });

  test("pairs on a single column is refused", () => {
    expect(syntaxError("age: pairs").message).toContain("pairs needs two or more columns");
  });

  test("an empty recipe says so and shows the forms", () => {
    expect(syntaxError("  ; \n").code).toBe("RECIPE_EMPTY");
  });
});

describe("fitting and applying a recipe", () => {
  test("builds the named columns in recipe order with readable names", () => {
    const { block } = buildBasis("age: ns(3) + poly(2); income: log(shift=auto); region: levels(ref=North); age*income", data);
    expect(block.names).toEqual([
      "ns(age)1", "ns(age)2", "ns(age)3", "age", "age^2", "log(income+1)", "region=South", "region=East", "region=West", "age*income",
    ]);
    expect(block.columns.every((c) => c.length === age.length)).toBe(true);
  });

  test("'*' means every column no other item names", () => {
    const { block } = buildBasis("region: levels; *: z", data);
    expect(block.names).toEqual(["region=South", "region=East", "region=West", "z(age)", "z(income)", "z(annual bonus)"]);
  });

  test("'*: auto' keeps numbers as they are and codes text as indicators", () => {
    expect(buildBasis("*: auto", data).block.names).toEqual(["age", "income", "region=South", "region=East", "region=West", "annual bonus"]);
  });

  test("headers match exactly, else ignoring case and surrounding spaces", () => {
    expect(buildBasis("AGE: z", data).block.names).toEqual(["z(age)"]);
  });

  test("an unknown column is a whole-call error listing the headers", () => {
    expect(() => buildBasis("salary: log", data)).toThrow('The recipe names the column "salary", but the data range has no such header. Headers found: "age", "income", "region" and "annual bonus".');
  });

  test("a numeric transform on a text column names the column and the first text", () => {
    expect(() => buildBasis("region: log", data)).toThrow('log needs numbers, but the column "region" holds text (row 1: "North")');
  });

  test("making the same column twice is refused, naming both steps", () => {
    expect(() => buildBasis("age: raw; age: poly(2)", data)).toThrow('The recipe makes the column "age" more than once ("age: raw" and "age: poly(2)")');
  });

  test("the fitted state is plain JSON: a stored and reloaded state transforms rows identically", () => {
    const { state } = buildBasis("age: ns(3) + opoly(2); income: log1p + z + minmax + bins(3); region: levels(pool=2); age, income: rbf(3) + poly(2)", data);
    const reloaded = JSON.parse(JSON.stringify(state));
    const fresh: BasisColumn[] = [
      { name: "age", values: [19, 45, 90] },
      { name: "income", values: [5, 50, 500] },
      { name: "region", values: ["East", "West", "North"] },
    ];
    expect(applyRecipe(reloaded, fresh)).toEqual(applyRecipe(state, fresh));
  });

  test("per-row problems leave other rows intact; one note per row and column even when several transforms use it", () => {
    const { state } = buildBasis("age: ns(3) + z; region: levels", data);
    const out = applyRecipe(state, [
      { name: "age", values: [30, null, 40] },
      { name: "region", values: ["North", "South", "Mars"] },
    ]);
    expect(out.notes.map((n) => [n.row, n.code])).toEqual([[1, "MISSING_FOR_SCORING"], [2, "UNSEEN_LEVEL"]]);
    expect(out.columns.every((c) => Number.isFinite(c[0]))).toBe(true);
  });

  test("property: any rows transformed alone equal the same rows transformed with the training rows (stored state only)", () => {
    const { state } = buildBasis("age: ns(4) + opoly(3) + z + minmax + bins(3) + rbf(3) + log + sqrt + inv; income: log1p; age, income: rbf(2) + poly(2); region: levels", data);
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.double({ min: -50, max: 150, noNaN: true }), fc.double({ min: 0, max: 200, noNaN: true }), fc.constantFrom("North", "South", "East", "West")), { minLength: 1, maxLength: 6 }),
        (rows) => {
          const fresh: BasisColumn[] = [
            { name: "age", values: rows.map((r) => r[0]) },
            { name: "income", values: rows.map((r) => r[1]) },
            { name: "region", values: rows.map((r) => r[2]) },
          ];
          const both: BasisColumn[] = fresh.map((c, j) => ({ name: c.name, values: [...(data[j].values as (number | string)[]), ...c.values] }));
          const alone = applyRecipe(state, fresh);
          const together = applyRecipe(state, both);
          alone.columns.forEach((c, k) => {
            expect(Array.from(together.columns[k].subarray(age.length))).toEqual(Array.from(c));
          });
        },
      ),
      { seed: 20261201, numRuns: 60 },
    );
  });

  test("training rows and the rows to transform may differ: fit on training, apply to new rows", () => {
    const { block } = buildBasis("age: z", data, [{ name: "age", values: [data[0].values[0] as number] }]);
    const mean = age.reduce((a, v) => a + v, 0) / age.length;
    expect(block.columns[0][0]).toBeLessThan(0);
    expect(block.columns[0][0]).toBeCloseTo((23 - mean) / Math.sqrt(age.reduce((a, v) => a + (v - mean) ** 2, 0) / (age.length - 1)), 14);
  });

  test("fitRecipe records fit notes such as merged bins", () => {
    const s = fitRecipe(parseRecipe("x: bins(4)"), [{ name: "x", values: [1, 1, 1, 1, 1, 1, 2, 3] }]);
    expect(s.fitNotes.map((n) => n.code)).toEqual(["BASIS_REDUCED"]);
  });
});

describe("recipe: overflow and categorical products", () => {
  test("a result too large for a number (1e200^2) is a per-row problem with a note, not an Infinity", () => {
    const { block } = buildBasis("x: poly(2)", [{ name: "x", values: [2, 1e200, 3] }]);
    expect(Number.isNaN(block.columns[1][1])).toBe(true);
    expect(block.columns[1][0]).toBe(4);
    expect(block.notes[0]).toMatchObject({ row: 1, code: "OUT_OF_DOMAIN" });
    expect(block.notes[0].message).toContain("x^2 is not defined for 1e+200");
  });

  test("'age*region' multiplies age with each region indicator", () => {
    const { block } = buildBasis("age*region", data);
    expect(block.names).toEqual(["age*region=South", "age*region=East", "age*region=West"]);
    expect(block.columns[0][1]).toBe(35); // row 2 is South, age 35
    expect(block.columns[0][0]).toBe(0);
  });
});

test("'*' skips a column with no value at all (a gap in the selection)", () => {
  const cols: BasisColumn[] = [
    { name: "a", values: [1, 2, 3] },
    { name: "x2", values: [null, null, null] },
  ];
  expect(buildBasis("*: z", cols).block.names).toEqual(["z(a)"]);
});

describe("recipe robustness", () => {
  test("property: any text either parses or fails with a catalogue error (never a crash)", () => {
    const pieces = ["age", "income", ":", ";", ",", "*", "+", "(", ")", "[", "]", "=", "'", '"', " ", "\n", "ns", "levels", "ref", "3", "-1", "2%", "auto", "x y", "log"];
    fc.assert(
      fc.property(fc.oneof(fc.string({ maxLength: 40 }), fc.array(fc.constantFrom(...pieces), { maxLength: 14 }).map((a) => a.join(""))), (text) => {
        try {
          parseRecipe(text);
        } catch (e) {
          expect(e).toBeInstanceOf(OddsmithError);
        }
      }),
      { seed: 7, numRuns: 3000 },
    );
  });

  test("property: fitting any parsed recipe on odd data fails only with catalogue errors", () => {
    const recipes = ["a: ns(3) + opoly(2) + bins(3) + rbf(2)", "a: log(shift=auto) + sqrt(shift=auto) + inv(shift=auto) + log1p(shift=auto)", "a, b: rbf(3) + poly(2) + pairs", "b: levels(pool=2) + auto; a*b", "*: auto", "a: z + minmax"];
    const cell = fc.oneof(fc.constant(null), fc.integer({ min: -3, max: 3 }), fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.constantFrom("p", "q"));
    fc.assert(
      fc.property(fc.constantFrom(...recipes), fc.array(fc.tuple(cell, cell), { minLength: 1, maxLength: 8 }), (recipe, rows) => {
        const cols: BasisColumn[] = [
          { name: "a", values: rows.map((r) => r[0]) },
          { name: "b", values: rows.map((r) => r[1]) },
        ];
        try {
          const { block } = buildBasis(recipe, cols);
          for (const c of block.columns) for (const v of c) expect(Number.isNaN(v) || Number.isFinite(v)).toBe(true);
        } catch (e) {
          expect(e).toBeInstanceOf(OddsmithError);
        }
      }),
      { seed: 11, numRuns: 1500 },
    );
  });
});
