/**
 * Shared pieces of the robustness suite: fast-check arbitraries for worksheet cells and ranges as
 * Excel hands them to a custom function, and the checks every property applies to an outcome.
 *
 * The contract checked everywhere (docs/numeric-extremes.md, "What every call must do"):
 * - a call returns a valid result, or throws an OddsmithError (engine) / a CellFunctionFailure (cell
 *   boundary) whose code is in the message catalogue and is not INTERNAL (INTERNAL means some other
 *   exception escaped: a bug), and whose message is the catalogue template filled in;
 * - a returned 2-D array is rectangular and holds only finite numbers, text and booleans (no NaN,
 *   no infinity, no null, no undefined);
 * - nothing hangs: each property runs a bounded number of cases with a fixed seed, and fast-check
 *   prints the seed and the shrunk counterexample when a case fails.
 */
import fc from "fast-check";
import { MESSAGES, OddsmithError, isMessageCode, type MessageCode } from "../../../src/shared/messages";
import type { CellValue } from "../../../src/engine/types";
import { CellFunctionFailure } from "../../../src/functions/cellError";

/**
 * Seed of every property in this suite (fixed so a failure reproduces; fast-check prints it).
 * A deeper exploration can be run by hand with another seed and more cases:
 * ODDSMITH_PROPERTY_SEED=7 ODDSMITH_PROPERTY_SCALE=20 npx jest test/unit/robustness
 */
export const SEED = Number(process.env.ODDSMITH_PROPERTY_SEED ?? 20261201);

const SCALE = Math.max(1, Number(process.env.ODDSMITH_PROPERTY_SCALE ?? 1));

/** Cases per property: enough to visit every generator branch many times, small enough that the whole suite stays well under 60 s on two shared cores. */
export const RUNS = { cheap: 400 * SCALE, fit: 150 * SCALE, cell: 120 * SCALE } as const;

export type Range = CellValue[][];

// ---- cell arbitraries ------------------------------------------------------------------------------

/** Numbers at the ends of the double range and the special zeros (all finite: Excel sends no NaN). */
export const EXTREME_NUMBERS = [1e300, -1e300, 1e-300, -1e-300, -0, 0, 5e-324, 1.7976931348623157e308, -1.7976931348623157e308, 2 ** 53, -(2 ** 53)];

/** Any finite double, weighted towards ordinary magnitudes but visiting the extremes. */
export const finiteNumber: fc.Arbitrary<number> = fc.oneof(
  { weight: 4, arbitrary: fc.double({ min: -100, max: 100, noNaN: true }) },
  { weight: 2, arbitrary: fc.integer({ min: -5, max: 5 }) },
  { weight: 1, arbitrary: fc.double({ noNaN: true, noDefaultInfinity: true }) },
  { weight: 1, arbitrary: fc.constantFrom(...EXTREME_NUMBERS) },
);

/** Numbers stored as text, in forms the parser accepts (" 1.5 ", "-.5", "1e-3") and forms it must keep as text ("1,234", "12%"). */
export const numericText: fc.Arbitrary<string> = fc.oneof(
  finiteNumber.map((x) => String(x)),
  fc.constantFrom(" 1.5 ", "-.5", "1.", "+2", "1e-3", "1E300", "-1e-300", "0", "-0", "007", "1,234", "1 234", "12%", "$3", "0x1F", "NaN", "Infinity", "-Infinity", "1e999", "--1", "."),
);

/** Header-like and category-like text: unicode, markup, formulas, control characters, long text. */
export const hostileText: fc.Arbitrary<string> = fc.oneof(
  fc.string({ maxLength: 8 }),
  fc.string({ unit: "grapheme", maxLength: 6 }),
  fc.constantFrom(
    "<b>age</b>",
    "<script>alert(1)</script>",
    "=SUM(A1:A3)",
    "{name}",
    "{0}",
    "(intercept)",
    "x1",
    "a=b",
    "a;b",
    '"quoted"',
    "tab\there",
    "line\nbreak",
    "\u0000",
    "\u200b",
    "Ünïcødé",
    "日本語",
    "🍎🍐",
    "e\u0301",
    "\ud800",
    "   ",
    "TRUE",
    "yes",
    "N/A",
    "#VALUE!",
    "__proto__",
    "constructor",
    "toString",
    "x".repeat(300),
  ),
);

/** Every kind of blank an Excel build may send: null (current), "" and whitespace, undefined, and 0 (older desktop builds). */
export const blankCell: fc.Arbitrary<CellValue> = fc.constantFrom<CellValue>(null, "", "  ", undefined, 0);

/** One cell of any kind. */
export const anyCell: fc.Arbitrary<CellValue> = fc.oneof(
  { weight: 5, arbitrary: finiteNumber },
  { weight: 2, arbitrary: numericText },
  { weight: 2, arbitrary: hostileText },
  { weight: 1, arbitrary: fc.boolean() },
  { weight: 2, arbitrary: blankCell },
);

/** A rectangular grid of `cell` with the given size bounds. */
export function grid(cell: fc.Arbitrary<CellValue>, maxRows: number, maxCols: number, minRows = 0, minCols = 1): fc.Arbitrary<Range> {
  return fc
    .record({ rows: fc.integer({ min: minRows, max: maxRows }), cols: fc.integer({ min: minCols, max: maxCols }) })
    .chain(({ rows, cols }) => fc.array(fc.array(cell, { minLength: cols, maxLength: cols }), { minLength: rows, maxLength: rows }));
}

/** A selection that may be ragged (rows of different lengths), as a broken caller could pass. */
export function raggedGrid(cell: fc.Arbitrary<CellValue>, maxRows: number, maxCols: number): fc.Arbitrary<Range> {
  return fc.array(fc.array(cell, { minLength: 0, maxLength: maxCols }), { minLength: 0, maxLength: maxRows });
}

/**
 * A column generator: each column is of one flavour (ordinary numbers, extreme numbers, categories,
 * booleans, mixed cells, all blank), so fits see realistic columns as well as hostile ones.
 */
export function predictorColumn(rows: number): fc.Arbitrary<CellValue[]> {
  const col = (a: fc.Arbitrary<CellValue>) => fc.array(a, { minLength: rows, maxLength: rows });
  return fc.oneof(
    { weight: 4, arbitrary: col(fc.oneof({ weight: 9, arbitrary: fc.double({ min: -10, max: 10, noNaN: true }) }, { weight: 1, arbitrary: fc.constant(null) })) },
    { weight: 2, arbitrary: col(fc.integer({ min: 0, max: 3 })) },
    { weight: 1, arbitrary: col(fc.constantFrom<CellValue>(...EXTREME_NUMBERS)) },
    { weight: 1, arbitrary: fc.tuple(fc.constantFrom(1e300, 1e-300, 1e150, 1e-150, 1e12), col(fc.double({ min: -3, max: 3, noNaN: true }))).map(([s, xs]) => xs.map((x) => (x as number) * s)) },
    { weight: 2, arbitrary: col(fc.constantFrom<CellValue>("North", "South", "East", " East ", "west", null)) },
    { weight: 1, arbitrary: col(fc.boolean()) },
    { weight: 1, arbitrary: col(anyCell) },
    { weight: 1, arbitrary: fc.constantFrom<CellValue>(5, 1e300, "k", true).map((v) => new Array<CellValue>(rows).fill(v)) },
    { weight: 1, arbitrary: col(blankCell) },
  );
}

/** Label alphabets: recognised pairs, words, numbers, booleans, many classes, hostile text. */
export function labelColumn(rows: number): fc.Arbitrary<CellValue[]> {
  const from = (...vals: CellValue[]) => fc.array(fc.constantFrom(...vals), { minLength: rows, maxLength: rows });
  return fc.oneof(
    { weight: 3, arbitrary: from(0, 1) },
    { weight: 2, arbitrary: from("yes", "no", null) },
    { weight: 1, arbitrary: from(true, false) },
    { weight: 2, arbitrary: from("apple", "pear", "plum") },
    { weight: 1, arbitrary: from("a", "b", "c", "d", "e", "") },
    { weight: 1, arbitrary: from(1, 2, 3, 2.5) },
    { weight: 1, arbitrary: fc.array(hostileText, { minLength: rows, maxLength: rows }) },
    { weight: 1, arbitrary: fc.array(anyCell, { minLength: rows, maxLength: rows }) },
    { weight: 1, arbitrary: from("only") },
  );
}

/** Labels and predictors ranges over the same rows, with or without a header row. */
export const trainingRanges: fc.Arbitrary<{ labels: Range; predictors: Range; header: boolean }> = fc
  .record({ rows: fc.integer({ min: 0, max: 24 }), cols: fc.integer({ min: 1, max: 4 }), header: fc.boolean() })
  .chain(({ rows, cols, header }) =>
    fc.record({
      labels: labelColumn(rows),
      columns: fc.array(predictorColumn(rows), { minLength: cols, maxLength: cols }),
      names: fc.array(fc.oneof(hostileText, fc.constantFrom("age", "dose", "region")), { minLength: cols + 1, maxLength: cols + 1 }),
      header: fc.constant(header),
    }),
  )
  .map(({ labels, columns, names, header }) => {
    const rows = labels.length;
    const predictors: Range = [];
    for (let i = 0; i < rows; i++) predictors.push(columns.map((c) => c[i]));
    const l: Range = labels.map((v) => [v]);
    if (header) {
      l.unshift([names[0]]);
      predictors.unshift(names.slice(1));
    }
    if (predictors.length === 0) predictors.push(columns.map(() => null));
    if (l.length === 0) l.push([null]);
    return { labels: l, predictors, header };
  });

/**
 * Training ranges that usually fit (labels drawn from a logistic or softmax model of the predictors,
 * so classes overlap), sprinkled with hostile cells: the properties then also exercise the paths that
 * return numbers, not only the refusals.
 */
export const fittableRanges: fc.Arbitrary<{ labels: Range; predictors: Range; header: boolean }> = fc
  .record({
    rows: fc.integer({ min: 20, max: 60 }),
    classes: fc.constantFrom(2, 2, 3),
    scale: fc.constantFrom(1, 1, 1e-6, 1e6, 1e150, -1),
    seed: fc.integer({ min: 1, max: 2 ** 31 - 1 }),
    hostile: fc.array(fc.tuple(fc.nat(), fc.nat(), anyCell), { maxLength: 3 }),
  })
  .map(({ rows, classes, scale, seed, hostile }) => {
    // Uniform draws from a linear congruential generator (Numerical Recipes constants) seeded by fast-check.
    let state = seed >>> 0;
    const u = () => {
      state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
      return state / 4294967296;
    };
    const predictors: Range = [["dose", "region", "flag"]];
    const labels: Range = [["outcome"]];
    for (let i = 0; i < rows; i++) {
      const d = u() * 4 - 2;
      predictors.push([d * scale, ["North", "South", "East"][Math.floor(u() * 3)], u() < 0.5]);
      // Class drawn with a weak dependence on dose: overlapping classes, separation unlikely.
      const p = u() + 0.1 * d;
      labels.push([classes === 2 ? (p > 0.5 ? "yes" : "no") : ["low", "mid", "high"][Math.min(2, Math.max(0, Math.floor(p * 3)))]]);
    }
    for (const [i, j, v] of hostile) predictors[1 + (i % rows)][j % 3] = v;
    return { labels, predictors, header: true };
  });

// ---- outcome checks --------------------------------------------------------------------------------

/** A regular expression matching any filling of a catalogue template. */
export function templatePattern(code: MessageCode): RegExp {
  // An input problem met while the ranges' first rows disagreed ends with the catalogue's header hint
  // (HEADER_RULE_HINT, appended by data/alignRanges.ts withHeaderHint): itself a filled template.
  return new RegExp(`^${templateSource(code)}(?:${templateSource("HEADER_RULE_HINT")})?$`);
}

/** The regular-expression source matching any filling of one template (no anchors). */
function templateSource(code: MessageCode): string {
  // Placeholders: {name}, and {name|one|other} (a word chosen by a count).
  const parts = MESSAGES[code].template.split(/\{\w+(?:\|[^|{}]*\|[^|{}]*)?\}/);
  const escaped = parts.map((p) => p.replace(/[.*+?^${}()|[\]\\]/g, "\\$&"));
  return escaped.join("[\\s\\S]*?");
}

/** Fail with a precise description unless `error` is a catalogue problem other than INTERNAL. */
export function expectCatalogueError(error: unknown, context: string): asserts error is OddsmithError | CellFunctionFailure {
  if (error instanceof OddsmithError || error instanceof CellFunctionFailure) {
    const code = error.code;
    if (!isMessageCode(code)) throw new Error(`${context}: code ${code} is not in the catalogue`);
    if (code === "INTERNAL") throw new Error(`${context}: an unexpected exception escaped (shown as INTERNAL): ${error.message}`);
    if (!templatePattern(code).test(error.message)) {
      throw new Error(`${context}: message of ${code} does not follow its template: ${JSON.stringify(error.message)}`);
    }
    return;
  }
  const text = error instanceof Error ? `${error.name}: ${error.message}\n${error.stack}` : String(error);
  throw new Error(`${context}: a non-catalogue exception escaped: ${text}`);
}

/** Run `f`; return its value, or undefined when it threw a catalogue problem (anything else fails). */
export function valueOrProblem<T>(f: () => T, context: string): T | undefined {
  try {
    return f();
  } catch (e) {
    expectCatalogueError(e, context);
    return undefined;
  }
}

/** Fail unless `out` is a non-empty rectangular 2-D array of finite numbers, text and booleans. */
export function expectCleanSpill(out: unknown, context: string): void {
  if (!Array.isArray(out) || out.length === 0) throw new Error(`${context}: result is not a non-empty 2-D array: ${JSON.stringify(out)}`);
  const width = Array.isArray(out[0]) ? out[0].length : -1;
  if (width <= 0) throw new Error(`${context}: first row is empty or not an array`);
  out.forEach((row, i) => {
    if (!Array.isArray(row) || row.length !== width) throw new Error(`${context}: row ${i} has ${Array.isArray(row) ? row.length : "no"} cells, row 0 has ${width}`);
    row.forEach((v, j) => {
      const ok = typeof v === "string" || typeof v === "boolean" || (typeof v === "number" && Number.isFinite(v));
      if (!ok) throw new Error(`${context}: cell [${i}][${j}] is ${String(v)} (${typeof v})`);
    });
  });
}

/** Every diagnostic has a catalogue code, a known severity and a message following its template. */
export function expectCatalogueDiagnostics(diagnostics: { code: string; severity: string; message: string }[], context: string): void {
  for (const d of diagnostics) {
    if (!(d.code in MESSAGES) || d.code === "INTERNAL") throw new Error(`${context}: diagnostic code ${d.code} is not a catalogue code`);
    if (!["error", "warning", "note"].includes(d.severity)) throw new Error(`${context}: severity ${d.severity}`);
    // Row numbers in messages are rewritten to the user's rows, so only the template's fixed text is checked.
    if (!templatePattern(d.code as MessageCode).test(d.message)) {
      throw new Error(`${context}: diagnostic ${d.code} does not follow its template: ${JSON.stringify(d.message)}`);
    }
  }
}
