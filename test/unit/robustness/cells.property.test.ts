/**
 * Properties of the cell functions as Excel calls them (the entry points of
 * src/functions/functions.ts, 2-D arrays in, a spilled 2-D array or a cell error out): for any
 * hostile input each call returns a clean rectangular spill, or fails with a CellFunctionFailure
 * carrying a catalogue code other than INTERNAL and the catalogue message.
 */
import fc from "fast-check";
import * as ODDS from "../../../src/functions/functions";
import { CellFunctionFailure } from "../../../src/functions/cellError";
import type { CellValue } from "../../../src/engine/types";
import { MESSAGES, type MessageCode } from "../../../src/shared/messages";
import { anyCell, blankCell, EXTREME_NUMBERS, expectCatalogueError, expectCleanSpill, grid, hostileText, labelColumn, raggedGrid, RUNS, SEED, templatePattern, trainingRanges, fittableRanges, type Range } from "./support";

/** Call a cell function; check the spill or the failure; return the spill or the failure code. */
function callCell(name: string, f: () => unknown, args: unknown[]): CellValue[][] | string {
  const context = `ODDS.${name}(${args.map((a) => JSON.stringify(a)).join(", ")})`;
  let out: unknown;
  try {
    out = f();
  } catch (e) {
    if (!(e instanceof CellFunctionFailure)) {
      throw new Error(`${context}: threw ${e instanceof Error ? `${e.name}: ${e.message}` : String(e)} instead of a cell error`);
    }
    expectCatalogueError(e, context);
    expect(["#VALUE!", "#N/A"]).toContain(e.cellError);
    return e.code;
  }
  expectCleanSpill(out, context);
  return out as CellValue[][];
}

/** Options as a user may type them: valid, invalid, malformed, hostile. */
const optionText: fc.Arbitrary<Range | null> = fc.oneof(
  fc.constant(null),
  fc
    .constantFrom(
      "",
      "penalty=0.1",
      "penalty=-1",
      "penalty=1e400",
      "penalty=NaN",
      "penalty=1e-300",
      "penalty=1e300",
      "level=0.9",
      "level=1",
      "level=0",
      "level=1e-300",
      "threshold=0",
      "threshold=0.999999999",
      "threshold=1e-300",
      "firth=true",
      "firth=maybe",
      "positive=yes",
      "positive=zzz",
      "reference=plum",
      "interval=profile",
      "intercept=false",
      "headers=no",
      "headers=yes",
      "form=symmetric",
      "form=symmetric; penalty=1",
      "pool=2",
      "baseline=region:South",
      "baseline=nope:x",
      "groups=1",
      "groups=1000000",
      "groups=2.5",
      "sample=0",
      "foo=bar",
      "penalty=1; penalty=2",
      ";;;",
      "=",
      "penalty",
      "penalty==1",
      "<b>penalty</b>=1",
      "constructor=1",
      "__proto__=1",
      "toString=x",
    )
    .map((t): Range => [[t]]),
  fc.array(fc.tuple(hostileText, anyCell), { minLength: 1, maxLength: 3 }).map((pairs): Range => pairs.map(([k, v]) => [k, v])),
  grid(anyCell, 3, 3, 1),
);

/** A probabilities range: a header or not, one or more columns of values in and outside [0, 1]. */
const probabilityCell: fc.Arbitrary<CellValue> = fc.oneof(
  { weight: 6, arbitrary: fc.double({ min: 0, max: 1, noNaN: true }) },
  { weight: 2, arbitrary: fc.constantFrom<CellValue>(0, 1, -0, 1e-300, 1 - 1e-16, 5e-324) },
  { weight: 1, arbitrary: fc.constantFrom<CellValue>(-0.1, 1.5, ...EXTREME_NUMBERS) },
  { weight: 1, arbitrary: anyCell },
  { weight: 1, arbitrary: blankCell },
);

const metricRanges = fc
  .record({ rows: fc.integer({ min: 0, max: 20 }), cols: fc.integer({ min: 1, max: 3 }), header: fc.boolean() })
  .chain(({ rows, cols, header }) =>
    fc.record({
      labels: labelColumn(rows),
      probs: fc.array(fc.array(probabilityCell, { minLength: cols, maxLength: cols }), { minLength: rows, maxLength: rows }),
      names: fc.array(fc.oneof(hostileText, fc.constantFrom("P(yes)", "P(apple)", "pear", "P(1)")), { minLength: cols + 1, maxLength: cols + 1 }),
      header: fc.constant(header),
    }),
  )
  .map(({ labels, probs, names, header }) => {
    const l: Range = labels.map((v) => [v]);
    const p: Range = probs.map((r) => r.slice());
    if (header) {
      l.unshift([names[0]]);
      p.unshift(names.slice(1));
    }
    return { labels: l.length > 0 ? l : [[null]], probs: p.length > 0 ? p : [[null]] };
  });

describe("cell functions on hostile inputs (as Excel calls them)", () => {
  test("FIT, PROB, CLASS, MARGIN and REPORT: a clean spill or a catalogue cell error", () => {
    fc.assert(
      fc.property(fc.oneof(trainingRanges, fittableRanges), optionText, fc.option(grid(anyCell, 6, 4, 1), { nil: null }), ({ labels, predictors }, options, newRows) => {
        const args = [labels, predictors, newRows, options];
        callCell("FIT", () => ODDS.fit(labels, predictors, options as Range), args);
        callCell("PROB", () => ODDS.prob(labels, predictors, newRows as Range, options as Range), args);
        callCell("CLASS", () => ODDS.predictClass(labels, predictors, newRows as Range, options as Range), args);
        callCell("MARGIN", () => ODDS.margin(labels, predictors, newRows as Range, options as Range), args);
        callCell("REPORT", () => ODDS.report(labels, predictors, options as Range), args);
      }),
      { seed: SEED, numRuns: RUNS.cell },
    );
  });

  test("LOGLOSS, AUC, CONFUSION and CALIBRATION: a clean spill or a catalogue cell error", () => {
    fc.assert(
      fc.property(metricRanges, optionText, ({ labels, probs }, options) => {
        const args = [labels, probs, options];
        callCell("LOGLOSS", () => ODDS.logLoss(labels, probs, options as Range), args);
        callCell("AUC", () => ODDS.auc(labels, probs, options as Range), args);
        callCell("CONFUSION", () => ODDS.confusion(labels, probs, options as Range), args);
        callCell("CALIBRATION", () => ODDS.calibration(labels, probs, options as Range), args);
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("SCORE with a real coefficient table whose cells are perturbed, and random rows", () => {
    const labels: Range = [["bought"], ...[0, 1, 0, 1, 1, 0, 1, 0, 1, 0, 0, 1, 0, 1, 1, 0, 1, 0].map((v) => [v])];
    const predictors: Range = [["visits", "region"], ...[3, 5, 1, 6, 4, 2, 7, 1, 3, 5, 2, 4, 6, 3, 5, 2, 2, 6].map((v, i) => [v, ["North", "South", "East"][i % 3]])];
    const table = ODDS.fit(labels, predictors) as Range;
    expect(table[0][1]).toBe("term");
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.nat(), fc.nat(), anyCell), { maxLength: 4 }),
        fc.oneof(grid(anyCell, 6, 3, 0), fc.constant(predictors)),
        (edits, rows) => {
          const coefficients = table.map((r) => r.slice());
          for (const [i, j, v] of edits) coefficients[i % coefficients.length][j % coefficients[0].length] = v;
          callCell("SCORE", () => ODDS.score(coefficients, rows), [coefficients, rows]);
        },
      ),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("SCORE with any coefficient range", () => {
    fc.assert(
      fc.property(grid(anyCell, 6, 4, 0), grid(anyCell, 5, 3, 0), (coefficients, rows) => {
        callCell("SCORE", () => ODDS.score(coefficients, rows), [coefficients, rows]);
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("BASIS with hostile data and recipes", () => {
    const recipe = fc.oneof(
      fc.constantFrom(
        "*: auto",
        "a: poly(3)",
        "a: opoly(2)",
        "a: ns(3)",
        "a: ns(20)",
        "a: log",
        "a: log(shift=auto)",
        "a: inv + sqrt",
        "a: z",
        "a: minmax",
        "a: bins(4)",
        "a: rbf(3)",
        "a, b: rbf(2, centres=kmeans)",
        "b: levels(ref=x)",
        "a*b",
        "a: poly(11)",
        "a: ns(knots=[1e300])",
        "",
        ";",
        "a:",
        ": z",
        "nope: z",
        "a: z; a: z",
        "a: frobnicate",
        "'a': z",
        '"a',
        "a: poly(degree=1e400)",
      ),
      hostileText,
    );
    const data = fc
      .record({ rows: fc.integer({ min: 0, max: 12 }) })
      .chain(({ rows }) =>
        fc.tuple(
          fc.array(fc.oneof({ weight: 5, arbitrary: fc.double({ min: -5, max: 5, noNaN: true }) }, { weight: 2, arbitrary: anyCell }), { minLength: rows, maxLength: rows }),
          fc.array(anyCell, { minLength: rows, maxLength: rows }),
        ),
      )
      .map(([a, b]): Range => [["a", "b"], ...a.map((v, i) => [v, b[i]])]);
    fc.assert(
      fc.property(data, recipe, fc.option(data, { nil: null }), (d, r, training) => {
        callCell("BASIS", () => ODDS.basis(d, [[r]], training as Range), [d, r, training]);
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("ragged selections in any argument are RAGGED_RANGE or another catalogue error, never a crash", () => {
    fc.assert(
      fc.property(raggedGrid(anyCell, 6, 4), raggedGrid(anyCell, 6, 4), (a, b) => {
        const args = [a, b];
        callCell("FIT", () => ODDS.fit(a, b), args);
        callCell("PROB", () => ODDS.prob(a, b, b, null as unknown as Range), args);
        callCell("AUC", () => ODDS.auc(a, b), args);
        callCell("CALIBRATION", () => ODDS.calibration(a, b), args);
        callCell("SCORE", () => ODDS.score(a, b), args);
        callCell("BASIS", () => ODDS.basis(a, b, a), args);
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("omitted and scalar arguments (null, a lone value) are cell errors or results, never crashes", () => {
    const scalars: unknown[] = [null, undefined, 0, "", "x", true, 1e300, [[]], []];
    for (const a of scalars) {
      for (const b of scalars) {
        const args = [a, b];
        callCell("FIT", () => ODDS.fit(a as Range, b as Range), args);
        callCell("PROB", () => ODDS.prob(a as Range, b as Range), args);
        callCell("LOGLOSS", () => ODDS.logLoss(a as Range, b as Range), args);
        callCell("AUC", () => ODDS.auc(a as Range, b as Range), args);
        callCell("CONFUSION", () => ODDS.confusion(a as Range, b as Range), args);
        callCell("CALIBRATION", () => ODDS.calibration(a as Range, b as Range), args);
        callCell("SCORE", () => ODDS.score(a as Range, b as Range), args);
        callCell("BASIS", () => ODDS.basis(a as Range, b as Range), args);
      }
    }
  });
});

describe("inside Office (CustomFunctions.Error present)", () => {
  /** Stand-in for the runtime's error class: records the error code and the message the cell shows. */
  class FakeCustomFunctionsError {
    constructor(
      public code: string,
      public message: string,
    ) {}
  }
  const g = globalThis as unknown as Record<string, unknown>;
  beforeAll(() => {
    g.CustomFunctions = { Error: FakeCustomFunctionsError, ErrorCode: { invalidValue: "#VALUE!", notAvailable: "#N/A" } };
  });
  afterAll(() => {
    delete g.CustomFunctions;
  });

  const CODES = (Object.keys(MESSAGES) as MessageCode[]).filter((c) => c !== "INTERNAL");

  test("a failing FIT, PROB or LOGLOSS throws CustomFunctions.Error with the error kind and a catalogue message (never INTERNAL's)", () => {
    fc.assert(
      fc.property(fc.oneof(trainingRanges, fittableRanges), optionText, ({ labels, predictors }, options) => {
        const calls: [string, () => unknown][] = [
          ["FIT", () => ODDS.fit(labels, predictors, options as Range)],
          ["PROB", () => ODDS.prob(labels, predictors, null as unknown as Range, options as Range)],
          ["LOGLOSS", () => ODDS.logLoss(labels, predictors, options as Range)],
        ];
        for (const [name, f] of calls) {
          let out: unknown;
          try {
            out = f();
          } catch (e) {
            if (!(e instanceof FakeCustomFunctionsError)) throw new Error(`${name}: threw ${String(e)} instead of CustomFunctions.Error`);
            const code = CODES.find((c) => templatePattern(c).test(e.message));
            if (!code) throw new Error(`${name}: message is not a catalogue message (or is INTERNAL's): ${e.message}`);
            expect(e.code).toBe(MESSAGES[code].cellError);
            continue;
          }
          expectCleanSpill(out, name);
        }
      }),
      { seed: SEED, numRuns: RUNS.cell },
    );
  });
});
