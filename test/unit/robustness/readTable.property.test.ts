/**
 * Properties of the shared range parser (src/engine/table.ts) over hostile grids. The written
 * policy at the top of table.ts is the specification; docs/numeric-extremes.md lists the cases.
 */
import fc from "fast-check";
import { errorLiteral, readTable, type Table } from "../../../src/engine/data/table";
import type { CellValue } from "../../../src/engine/types";
import { anyCell, expectCatalogueError, grid, hostileText, raggedGrid, RUNS, SEED, type Range } from "./support";

const PARSER_CODES = new Set(["EMPTY_RANGE", "RAGGED_RANGE", "NOT_FINITE_VALUE", "NOT_A_NUMBER"]);

function read(cells: unknown, headers: "auto" | "yes" | "no"): Table | string {
  try {
    return readTable(cells as Range, { argument: "predictors", headers });
  } catch (e) {
    expectCatalogueError(e, `readTable(${JSON.stringify(cells)})`);
    return e.code;
  }
}

/** Structural invariants of a parsed table. */
function checkTable(t: Table, cells: Range): void {
  const width = cells[0].length;
  expect(t.columns.length).toBe(width);
  expect(t.names.length).toBe(width);
  expect(new Set(t.names).size).toBe(width);
  expect(t.rows).toBeGreaterThanOrEqual(1);
  expect(t.rows + t.trimmedRows + (t.header ? 1 : 0)).toBe(cells.length);
  expect(t.firstRow).toBe(t.header ? 2 : 1);
  for (const c of t.columns) {
    expect(c.values.length).toBe(t.rows);
    expect(c.missing.length).toBe(t.rows);
    for (let i = 0; i < t.rows; i++) {
      if (c.kind === "text") {
        expect(typeof c.values[i]).toBe("string");
        if (c.missing[i]) expect(c.values[i]).toBe("");
      } else {
        const v = (c.values as Float64Array)[i];
        // A numeric column holds finite numbers, and NaN exactly where the cell is missing.
        if (c.missing[i]) expect(Number.isNaN(v)).toBe(true);
        else expect(Number.isFinite(v)).toBe(true);
        if (c.kind === "boolean" && !c.missing[i]) expect(v === 0 || v === 1).toBe(true);
      }
    }
  }
}

describe("readTable on hostile grids", () => {
  test("any rectangular grid of mixed cells gives a consistent table or a parser problem from the catalogue", () => {
    fc.assert(
      fc.property(grid(anyCell, 12, 5), fc.constantFrom<"auto" | "yes" | "no">("auto", "yes", "no"), (cells, headers) => {
        const out = read(cells, headers);
        if (typeof out === "string") expect(PARSER_CODES.has(out)).toBe(true);
        else checkTable(out, cells);
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("a ragged selection is RAGGED_RANGE (or EMPTY_RANGE when it holds nothing), never an exception", () => {
    fc.assert(
      fc.property(raggedGrid(anyCell, 8, 4), (cells) => {
        const out = read(cells, "auto");
        const ragged = cells.some((r) => r.length !== cells[0].length);
        if (ragged) expect(out).toBe("RAGGED_RANGE");
        else if (typeof out === "string") expect(PARSER_CODES.has(out)).toBe(true);
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("a lone scalar, a flat row and zero rows are read as ranges, not crashes", () => {
    fc.assert(
      fc.property(anyCell, (v) => {
        const single = read(v, "auto");
        // A blank scalar is an empty range; numeric text beyond the double range ("1e999") is not finite.
        if (typeof single === "string") expect(["EMPTY_RANGE", "NOT_FINITE_VALUE"]).toContain(single);
        else expect([single.rows, single.columns.length]).toEqual([1, 1]);
        const flat = read([v, v], "no");
        if (typeof flat !== "string") expect(flat.columns.length).toBe(2);
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
    expect(read([], "auto")).toBe("EMPTY_RANGE");
    expect(read([[]], "auto")).toBe("EMPTY_RANGE");
    expect(read([[null], [""], ["  "]], "auto")).toBe("EMPTY_RANGE");
  });

  test("NaN and infinities arriving as numbers are NOT_FINITE_VALUE at their 1-based cell", () => {
    fc.assert(
      fc.property(grid(fc.double({ min: -5, max: 5, noNaN: true }), 6, 3, 1), fc.constantFrom(NaN, Infinity, -Infinity), fc.nat(), fc.nat(), (cells, bad, r, c) => {
        const i = r % cells.length;
        const j = c % cells[0].length;
        cells[i][j] = bad;
        try {
          readTable(cells, { argument: "predictors", headers: "no" });
          throw new Error("expected NOT_FINITE_VALUE");
        } catch (e) {
          expectCatalogueError(e, "non-finite cell");
          expect(e.code).toBe("NOT_FINITE_VALUE");
          expect((e as { params: Record<string, unknown> }).params).toMatchObject({ row: i + 1, column: j + 1 });
        }
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("numbers of every magnitude (1e300, 1e-300, -0, 5e-324, the largest double) survive parsing exactly", () => {
    fc.assert(
      fc.property(fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { minLength: 1, maxLength: 20 }), fc.boolean(), (xs, asText) => {
        const cells: Range = [["x"], ...xs.map((x): CellValue[] => [asText ? String(x) : x])];
        const t = readTable(cells, { argument: "predictors", headers: "yes" });
        const col = t.columns[0];
        expect(col.kind).toBe("number");
        // String(x) round-trips a double exactly (ECMAScript Number::toString), except that
        // String(-0) is "0": as text, -0 arrives as 0.
        xs.forEach((x, i) => expect(Object.is((col.values as Float64Array)[i], asText && Object.is(x, -0) ? 0 : x)).toBe(true));
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("header names made of unicode, markup and formulas come back trimmed, distinct and unchanged otherwise", () => {
    fc.assert(
      fc.property(fc.array(hostileText, { minLength: 1, maxLength: 5 }), (names) => {
        const cells: Range = [names, names.map((_, j) => j), names.map((_, j) => j + 1)];
        const t = readTable(cells, { argument: "predictors", headers: "yes" });
        expect(new Set(t.names).size).toBe(names.length);
        t.names.forEach((got, j) => {
          const want = names[j].trim();
          // An error's literal ("#VALUE!") is no name: the column gets a generated one.
          if (errorLiteral(want) !== null) expect(got.startsWith("x")).toBe(true);
          else if (want !== "") expect(got.startsWith(want)).toBe(true);
        });
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("numeric text beyond the double range is NOT_FINITE_VALUE, numeric text below it reads as 0", () => {
    expect(read([["x"], ["1e999"], [1]], "yes")).toBe("NOT_FINITE_VALUE");
    expect(read([["x"], ["-1e999"], [1]], "yes")).toBe("NOT_FINITE_VALUE");
    const t = read([["x"], ["1e-999"], [1]], "yes") as Table;
    expect(Array.from(t.columns[0].values as Float64Array)).toEqual([0, 1]);
  });

  test("thousands of distinct text values in one column are read in linear time", () => {
    const n = 20000;
    const cells: Range = [["id"], ...Array.from({ length: n }, (_, i): CellValue[] => [`row-${i}`])];
    const start = performance.now();
    const t = readTable(cells, { argument: "labels", headers: "auto" });
    const ms = performance.now() - start;
    expect(t.columns[0].kind).toBe("text");
    expect(t.rows).toBe(n);
    // Generous bound for a shared two-core machine; a quadratic scan would take seconds.
    expect(ms).toBeLessThan(2000);
  });
});
