/**
 * The scoring block: a model description written as plain formulas, one row per data row, that
 * recompute the model's probabilities with built-in functions only (no add-in needed).
 *
 * Layout of the block, left to right (each column a header and one formula per row):
 * - inputs: one per numeric data column read, =IF(ISBLANK(cell),NA(),cell+0) (a blank is an error,
 *   never a silent 0; text that is not a number is #VALUE!);
 * - levels: one per category coding, the row's category code (levelCoding.ts);
 * - terms: one per term that is not a plain input: indicator terms and basis columns (basisFormula.ts);
 * - one linear predictor per equation; for several classes the row maximum and the softmax sum;
 * - the probabilities (two classes: the positive class's; several: every class's), then the class.
 * Beside it, the coefficient table (class, term, coefficient, as ODDS.FIT lays it out, so ODDS.SCORE
 * reads it too) and, for two classes, the threshold below it: the formulas refer to these cells.
 *
 * Policy (one line each):
 * - A basis column is written from the raw data columns when its transform can be (all its source
 *   columns placed, its texts short enough, its formula within 8,192 characters); otherwise the
 *   formulas read the predictor column of that name (ODDS.BASIS output) and a note says so.
 * - Any other column that cannot be written or found refuses the whole export with its reason.
 * Reference: the formulas of probabilityFormulas.ts and basisFormula.ts; the sheet limits from
 * Microsoft, "Excel specifications and limits".
 */
import { INTERCEPT_TERM } from "../inference";
import { formatMessage, listNames, problem, type MessageCode } from "../messages";
import type { ColumnEncoding } from "../data/design";
import type { ModelDescription } from "../portable/modelDescription";
import { basisColumnFormula } from "./basisFormula";
import { formula, renderFormula, type BlockPlacement, type Formula, type ReferenceResolver, type SourceMap } from "./formulaTemplate";
import { codeFormula, codingKey, designCoding, indicatorFormula, type LevelCoding, unwritableLevel } from "./levelCoding";
import {
  binaryClassFormula,
  linearPredictorFormula,
  multiclassClassFormula,
  sigmoidFormula,
  softmaxProbabilityFormula,
  softmaxShiftFormula,
  softmaxSumFormula,
} from "./probabilityFormulas";

/** Longest formula a cell holds (Excel specifications and limits). */
export const MAX_FORMULA_CHARS = 8192;
/** Last row of a sheet: formulas are measured as written there (the longest row numbers). */
const LAST_SHEET_ROW = 1_048_576;

export type PlanRole = "input" | "levels" | "term" | "linear predictor" | "shift" | "sum" | "probability" | "class";

/** One column of the scoring block. */
export interface PlanColumn {
  key: string;
  header: string;
  role: PlanRole;
  formula: Formula;
}

/** Something the caller should tell the user about the export (a column left to the add-in). */
export interface ExportNote {
  code: MessageCode;
  column: string;
  message: string;
}

/** A model as a scoring block. */
export interface ScoringPlan {
  columns: PlanColumn[];
  /** Header row, one row per equation and term, then (two classes) a blank row and the threshold. */
  coefficientTable: (string | number)[][];
  resolver: ReferenceResolver;
  notes: ExportNote[];
}

/** Collects the block's columns; inputs and levels columns are shared by every formula that reads them. */
class BlockColumns {
  readonly inputs = new Map<string, PlanColumn>();
  readonly terms: PlanColumn[] = [];
  constructor(readonly place: BlockPlacement) {}

  private placed(map: SourceMap, name: string): string {
    const at = (map === "data" ? this.place.data : this.place.predictors).get(name);
    if (!at) throw new Error(`unplaced ${map} column ${name}`);
    return `${at.sheet}\u0000${at.column}`;
  }

  /** The numeric input cell of a source column (added to `into`). */
  numeric(map: SourceMap, name: string, into: Map<string, PlanColumn>): Formula {
    const key = `input\u0000${this.placed(map, name)}`;
    if (!this.inputs.has(key) && !into.has(key)) {
      const cell = formula({ kind: "source", map, name });
      into.set(key, { key, header: `input: ${name}`, role: "input", formula: formula("IF(ISBLANK(", cell, "),NA(),", cell, "+0)") });
    }
    return formula({ kind: "block", key });
  }

  /** The category code cell of a source column under a coding (added to `into`). */
  code(map: SourceMap, coding: LevelCoding, into: Map<string, PlanColumn>): Formula {
    const key = `levels\u0000${this.placed(map, coding.source)}\u0000${codingKey(coding)}`;
    if (!this.inputs.has(key) && !into.has(key)) {
      into.set(key, { key, header: `levels: ${coding.source}`, role: "levels", formula: codeFormula(coding, formula({ kind: "source", map, name: coding.source })) });
    }
    return formula({ kind: "block", key });
  }

  commit(pending: Map<string, PlanColumn>): void {
    for (const [k, c] of pending) this.inputs.set(k, c);
  }

  term(header: string, f: Formula): Formula {
    const key = `term\u0000${this.terms.length}`;
    this.terms.push({ key, header, role: "term", formula: f });
    return formula({ kind: "block", key });
  }
}

/** Resolver over a finished column list and the coefficient table's shape. */
function resolverFor(columns: readonly PlanColumn[], terms: number, equations: number): ReferenceResolver {
  const index = new Map(columns.map((c, i) => [c.key, i]));
  return {
    blockIndex(key) {
      const i = index.get(key);
      if (i === undefined) throw new Error(`no block column ${key}`);
      return i;
    },
    coefficientRow: (e, t) => e * terms + t,
    thresholdRow: () => equations * terms + 1,
  };
}

/** Rendered length of a formula written on the sheet's last row (an upper bound for every row). */
function longestLength(f: Formula, place: BlockPlacement, resolve: ReferenceResolver): number {
  return renderFormula(f, place, resolve, LAST_SHEET_ROW - place.headerRow - 1).length;
}

/** Probe resolver for measuring a formula before the block is complete: every key at the last column. */
function probeResolver(terms: number, equations: number): ReferenceResolver {
  return { blockIndex: () => 16_000, coefficientRow: (e, t) => e * terms + t, thresholdRow: () => equations * terms + 1 };
}

function tooLong(column: string, length: number): never {
  throw problem("EXPORT_FORMULA_TOO_LONG", {
    column,
    length: length.toLocaleString("en-US"),
    hint: "Use fewer terms, fewer categories or shorter category texts, or score with the add-in.",
  });
}

function notPlaced(column: string, where: "predictor columns" | "data columns", names: Iterable<string>): never {
  throw problem("EXPORT_COLUMN_NOT_PLACED", {
    column,
    where,
    columns: listNames([...names], 12) || "none",
    hint: "Give the range that holds it (the model's predictors, or the raw data the basis recipe reads).",
  });
}

/** The formula of a basis-built predictor column, or null (with a note) when it is left to the add-in. */
function tryBasisColumn(desc: ModelDescription, name: string, block: BlockColumns, notes: ExportNote[]): Formula | null {
  const basis = desc.basis;
  const state = basis?.states.find((s) => s.names.includes(name));
  if (!state) return null;
  const place = block.place;
  const pending = new Map<string, PlanColumn>();
  const missing = ("sources" in state ? state.sources : [state.source]).filter((s) => !place.data.has(s));
  let reason: string | null = null;
  let written: Formula | null = null;
  if (missing.length > 0) reason = `its data column ${listNames(missing)} is not in the data range`;
  else {
    const out = basisColumnFormula(state, state.names.indexOf(name), {
      numeric: (source) => block.numeric("data", source, pending),
      code: (coding) => block.code("data", coding, pending),
    });
    if ("reason" in out) reason = out.reason;
    else written = out.formula;
  }
  if (written) {
    const probe = probeResolver(desc.terms.length, desc.equations.length);
    const longest = Math.max(longestLength(written, place, probe), ...[...pending.values()].map((c) => longestLength(c.formula, place, probe)));
    if (longest > MAX_FORMULA_CHARS) {
      reason = `its formula would be ${longest.toLocaleString("en-US")} characters, more than a cell holds`;
      written = null;
    }
  }
  if (written) {
    block.commit(pending);
    return written;
  }
  notes.push({ code: "EXPORT_LEFT_TO_ADDIN", column: name, message: formatMessage("EXPORT_LEFT_TO_ADDIN", { column: name, reason }) });
  return null;
}

/** The value formula of each term of one predictor column. */
function columnTerms(desc: ModelDescription, c: ColumnEncoding, block: BlockColumns, notes: ExportNote[]): Formula[] {
  const place = block.place;
  if (c.kind === "ignored") return [];
  if (c.kind === "number") {
    const basis = tryBasisColumn(desc, c.name, block, notes);
    if (basis) return [block.term(c.terms[0], basis)];
    if (!place.predictors.has(c.name)) notPlaced(c.name, "predictor columns", place.predictors.keys());
    const pending = new Map<string, PlanColumn>();
    const input = block.numeric("predictors", c.name, pending);
    block.commit(pending);
    return [input];
  }
  if (!place.predictors.has(c.name)) notPlaced(c.name, "predictor columns", place.predictors.keys());
  const coding = designCoding(c);
  const long = unwritableLevel(coding);
  if (long !== null) throw problem("EXPORT_LEVEL_TOO_LONG", { level: `${long.slice(0, 40)}...`, column: c.name, length: long.length });
  const pending = new Map<string, PlanColumn>();
  const code = block.code("predictors", coding, pending);
  block.commit(pending);
  return c.terms.map((term, k) => block.term(term, indicatorFormula(code, coding.slotCodes[k])));
}

/** The coefficient table: class, term, coefficient per equation and term; threshold below (two classes). */
function coefficientTable(desc: ModelDescription): (string | number)[][] {
  const header =
    desc.kind === "binary"
      ? `class (positive: ${desc.label.positiveClass})`
      : desc.form === "symmetric"
        ? "class (symmetric)"
        : `class (reference: ${desc.label.referenceClass})`;
  const rows: (string | number)[][] = [[header, "term", "coefficient"]];
  desc.equations.forEach((eq) =>
    desc.terms.forEach((term, t) => {
      // An aliased term contributes nothing: its coefficient cell holds 0.
      const b = desc.aliased[t] ? 0 : (eq.coefficients[t] as number);
      rows.push([eq.class, term, b]);
    }),
  );
  if (desc.kind === "binary") rows.push(["", "", ""], ["", "threshold", desc.options.threshold]);
  return rows;
}

/** Refuse a description without an estimate for every term that is not aliased. */
function requireEstimates(desc: ModelDescription): void {
  desc.equations.forEach((eq) =>
    eq.coefficients.forEach((b, t) => {
      if (!desc.aliased[t] && !(typeof b === "number" && Number.isFinite(b))) {
        throw problem("EXPORT_NO_ESTIMATES", { term: desc.terms[t], equation: desc.kind === "binary" ? "" : ` of the class ${eq.class}` });
      }
    }),
  );
}

/** The linear predictor, probability and class columns. */
function probabilityColumns(desc: ModelDescription, values: (Formula | null)[], offset: Formula | null): PlanColumn[] {
  const out: PlanColumn[] = [];
  const ref = (key: string) => formula({ kind: "block", key });
  desc.equations.forEach((eq, e) => {
    const header = desc.kind === "binary" ? "linear predictor" : `linear predictor (${eq.class})`;
    out.push({ key: `eta\u0000${e}`, header, role: "linear predictor", formula: linearPredictorFormula(e, values, offset) });
  });
  if (desc.kind === "binary") {
    const positive = desc.label.positiveClass ?? desc.label.classes[1];
    const negative = desc.label.classes.find((c) => c !== positive) ?? desc.label.classes[0];
    out.push({ key: "p\u0000positive", header: `P(${positive})`, role: "probability", formula: sigmoidFormula(ref("eta\u00000")) });
    out.push({ key: "class", header: "class", role: "class", formula: binaryClassFormula(ref("p\u0000positive"), positive, negative) });
    return out;
  }
  const withReference = desc.form !== "symmetric";
  const etas = desc.equations.map((_, e) => ref(`eta\u0000${e}`));
  out.push({ key: "shift", header: "largest linear predictor", role: "shift", formula: softmaxShiftFormula(etas, withReference) });
  out.push({ key: "sum", header: "sum of exponentials", role: "sum", formula: softmaxSumFormula(etas, ref("shift"), withReference) });
  const classes = desc.label.classes;
  classes.forEach((cls, k) => {
    const e = desc.equations.findIndex((eq) => eq.class === cls);
    out.push({ key: `p\u0000${k}`, header: `P(${cls})`, role: "probability", formula: softmaxProbabilityFormula(e < 0 ? null : etas[e], ref("shift"), ref("sum")) });
  });
  out.push({ key: "class", header: "class", role: "class", formula: multiclassClassFormula(classes, "p\u00000", `p\u0000${classes.length - 1}`) });
  return out;
}

/**
 * Plan the scoring block of a model description at a placement (rules in the file comment).
 * @throws OddsmithError EXPORT_NO_ESTIMATES, EXPORT_COLUMN_NOT_PLACED, EXPORT_LEVEL_TOO_LONG, EXPORT_FORMULA_TOO_LONG
 * @example planScoring(describeModel(model, {...}), placement).columns.map((c) => c.header)
 */
export function planScoring(desc: ModelDescription, place: BlockPlacement): ScoringPlan {
  requireEstimates(desc);
  const block = new BlockColumns(place);
  const notes: ExportNote[] = [];
  const values: (Formula | null)[] = desc.intercept ? [null] : [];
  for (const c of desc.predictors.columns) values.push(...columnTerms(desc, c, block, notes));
  if (values.length !== desc.terms.length || (desc.intercept && desc.terms[0] !== INTERCEPT_TERM)) {
    throw problem("INTERNAL", { doing: "matching the model's terms to its predictor columns" });
  }
  let offset: Formula | null = null;
  if (desc.offset) {
    if (!place.predictors.has(desc.offset.column)) notPlaced(desc.offset.column, "predictor columns", place.predictors.keys());
    const pending = new Map<string, PlanColumn>();
    offset = block.numeric("predictors", desc.offset.column, pending);
    block.commit(pending);
  }
  const columns = [...block.inputs.values(), ...block.terms, ...probabilityColumns(desc, values, offset)];
  const resolver = resolverFor(columns, desc.terms.length, desc.equations.length);
  for (const c of columns) {
    const length = longestLength(c.formula, place, resolver);
    if (length > MAX_FORMULA_CHARS) tooLong(c.header, length);
  }
  return { columns, coefficientTable: coefficientTable(desc), resolver, notes };
}

/** The formulas of data row i (0-based) of a plan, one per block column. */
export function renderScoringRow(plan: ScoringPlan, place: BlockPlacement, i: number): string[] {
  return plan.columns.map((c) => renderFormula(c.formula, place, plan.resolver, i));
}
