/**
 * Seeded fuzzing of EVERY cell function in the registry (src/functions/registry.ts), so functions
 * added later are covered without touching this file: each is called as the sheet calls it
 * (evaluateCellFunction, one argument per registry parameter) with hostile grids, and every outcome
 * must keep the output contract (docs/numeric-extremes.md, "What every call must do"):
 * - a result is a non-empty rectangular array of finite numbers, text and booleans, within the
 *   sheet's limits (1,048,576 rows, 16,384 columns, about 5 MB), every text within 32,767 characters;
 * - or a failure that is a catalogue cell error other than INTERNAL (no plain exception escapes),
 *   whose message also fits a cell;
 * - bounded work by construction: sizes run from 0 x 0 up to the limits, and the cases at the
 *   limits are ones every function must refuse or answer from sizes alone (a range over the
 *   payload, a basis recipe over the sheet's columns), so a call that started the work would show
 *   up as a hang of the suite, not as a slow pass.
 * Small enough for CI: a few hundred calls of small grids plus a handful of limit-sized ones.
 */
import fc from "fast-check";
import { CELL_FUNCTIONS, evaluateCellFunction, type CellArgument } from "../../../src/functions/registry";
import { CellFunctionFailure } from "../../../src/functions/cellError";
import { MAX_CELL_TEXT, MAX_OUTPUT_CELLS, SHEET_COLUMNS, SHEET_ROWS } from "../../../src/shared/sheetLimits";
import type { CellValue } from "../../../src/engine/types";
import { anyCell, expectCatalogueError, grid, hostileText, SEED, type Range } from "./support";

/** Error values as a custom function may receive them: objects (errors allowed) and literals (the Excel JavaScript API). */
const errorCell: fc.Arbitrary<CellValue> = fc.constantFrom<unknown>(
  { code: "#N/A" },
  { type: "Error", errorType: "Div0", basicValue: "#DIV/0!" },
  {},
  "#N/A",
  "#VALUE!",
  " #REF! ",
) as fc.Arbitrary<CellValue>;

/** Text past the cell limit (the sheet never sends it, a formula can build it). */
const longText: fc.Arbitrary<CellValue> = fc.constantFrom("t".repeat(MAX_CELL_TEXT + 5), "é".repeat(40_000));

const hostileCell: fc.Arbitrary<CellValue> = fc.oneof(
  { weight: 8, arbitrary: anyCell },
  { weight: 2, arbitrary: errorCell },
  { weight: 1, arbitrary: longText },
);

/** Text arguments the functions parse (options, recipes) as well as grids. */
const argumentGrid: fc.Arbitrary<CellArgument> = fc.oneof(
  { weight: 6, arbitrary: grid(hostileCell, 8, 4, 0, 0) as fc.Arbitrary<Range> },
  { weight: 2, arbitrary: hostileText.map((t): Range => [[t]]) },
  {
    weight: 2,
    arbitrary: fc
      .constantFrom("penalty=0,5", "firth=true\nlevel=0.9", "a: levels", "*: pairs", "*: poly(10)", "level=0.999999999999", "x: minmax")
      .map((t): Range => [[t]]),
  },
  { weight: 1, arbitrary: fc.constant(null) },
);

function expectContract(name: string, args: unknown[], f: () => unknown): void {
  const context = `ODDS.${name} on ${JSON.stringify(args).slice(0, 300)}`;
  let out: unknown;
  try {
    out = f();
  } catch (e) {
    if (!(e instanceof CellFunctionFailure)) throw new Error(`${context}: a plain exception escaped: ${String(e)}`);
    expectCatalogueError(e, context);
    if (e.message.length > MAX_CELL_TEXT) throw new Error(`${context}: message of ${e.message.length} characters`);
    return;
  }
  if (!Array.isArray(out) || out.length === 0 || !Array.isArray(out[0])) throw new Error(`${context}: not a 2-D array`);
  const width = (out[0] as unknown[]).length;
  if (width === 0 || out.length > SHEET_ROWS || width > SHEET_COLUMNS || out.length * width > MAX_OUTPUT_CELLS) {
    throw new Error(`${context}: ${out.length} x ${width} does not fit the sheet`);
  }
  for (const row of out as unknown[][]) {
    if (!Array.isArray(row) || row.length !== width) throw new Error(`${context}: ragged result`);
    for (const v of row) {
      const ok = (typeof v === "number" && Number.isFinite(v)) || typeof v === "boolean" || (typeof v === "string" && v.length <= MAX_CELL_TEXT);
      if (!ok) throw new Error(`${context}: cell ${typeof v === "string" ? `text of ${v.length} characters` : String(v)}`);
    }
  }
}

describe("every registered cell function keeps the output contract on hostile grids", () => {
  test("the registry lists the functions this test iterates (new ones are covered automatically)", () => {
    expect(CELL_FUNCTIONS.length).toBeGreaterThanOrEqual(11);
    for (const f of CELL_FUNCTIONS) expect(f.parameters.length).toBeGreaterThan(0);
  });

  test.each(CELL_FUNCTIONS.map((f) => [f.name]))("%s: random hostile arguments", (name) => {
    const fn = CELL_FUNCTIONS.find((f) => f.name === name)!;
    fc.assert(
      fc.property(fc.array(argumentGrid, { minLength: fn.parameters.length, maxLength: fn.parameters.length }), (args) => {
        expectContract(name, args, () => evaluateCellFunction(name, args));
      }),
      { seed: SEED, numRuns: 60 },
    );
  });

  /** Grids at the limits: answered or refused from their size alone. */
  const tall: Range = Array.from({ length: 300_000 }, (_, i) => [i % 2]);
  const wideRow: Range = [Array.from({ length: 17_000 }, (_, j) => `c${j}`), Array.from({ length: 17_000 }, () => 1)];
  const manyTexts: Range = [["a"], ...Array.from({ length: 20_000 }, (_, i) => [`level ${i}`])];
  test.each(CELL_FUNCTIONS.map((f) => [f.name]))("%s: arguments at and past the sheet's limits", (name) => {
    const fn = CELL_FUNCTIONS.find((f) => f.name === name)!;
    for (const big of [tall, wideRow, manyTexts, [] as Range, [[]] as Range]) {
      for (let k = 0; k < fn.parameters.length; k++) {
        const args: CellArgument[] = fn.parameters.map((_, j) => (j === k ? big : j === 1 && name === "BASIS" ? [["*: levels"]] : tall.slice(0, 30)));
        expectContract(name, [`argument ${k + 1} of ${big.length} rows`], () => evaluateCellFunction(name, args));
      }
    }
  });
});
