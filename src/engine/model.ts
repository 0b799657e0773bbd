/**
 * The model facade: worksheet ranges in, a trained model or per-row scores out. Cell functions, the
 * task pane and the benchmark all train and score through `trainModel` and `scoreRows`, so ranges,
 * labels, categories and skipped rows are handled the same way everywhere.
 *
 * Policy (each rule is repeated in one line above the code that applies it):
 * - Every range (labels, predictors, weights, offset, trials) is read by the shared range parser.
 *   Under headers = "auto" they share one decision: when the ranges disagree, the range with the
 *   stronger evidence decides for all (predictors win a tie), so a labels column of words and a
 *   predictors block of numbers cannot end up shifted by one row; a range whose own first row
 *   pointed the other way is named in a HEADERS_DISAGREE note.
 * - Ranges are aligned row by row. Trailing blank rows are trimmed per range, and a range that ends
 *   earlier than the others is taken as blank below its end; ranges whose selected row counts differ
 *   (after the header) are RANGE_SHAPE_MISMATCH.
 * - Labels, weights, offset and trials are single columns (SINGLE_COLUMN_NEEDED); weights, offset and
 *   trials must be numbers (NOT_A_NUMBER), weights >= 0 (BAD_WEIGHT), 0 <= successes <= trials
 *   (BAD_TRIALS).
 * - A row missing any used value (label, a predictor, weight, offset, trials) is skipped; the skip
 *   is counted per column in a ROWS_SKIPPED warning added to the fit's diagnostics. Diagnostic row
 *   indices are mapped back to the caller's data rows (0-based, header excluded).
 * - Two classes give a binary fit, more give a multi-class fit. With trials, the labels column holds
 *   success counts and the classes are named "failure" and "success". Two-class-only options
 *   (firth, the profile interval, an offset) with multi-class labels are BAD_OPTION_VALUE.
 * - A fit estimates at most 500 coefficients (equations x terms; TOO_MANY_PARAMETERS): a Newton step
 *   costs about rows x coefficients^2 + coefficients^3 operations (measured: 500 coefficients over
 *   2,000 rows take 2-3 s; 1,000 terms with a penalty 11 s, 2,000 terms 33 s, more run out of memory).
 * - Bias reduction (firth) is refused above rows x terms^2 = 2.5e7 (FIRTH_TOO_COSTLY, data/fitWork.ts).
 * - Profile-likelihood intervals refit the model twice per term, about rows x terms^3 operations in
 *   all (measured: 1,000 rows x 50 terms 3 s, 2,000 rows x 100 terms 38 s); beyond 1e8 of those
 *   units the fit gives Wald intervals with a PROFILE_NOT_AVAILABLE note instead.
 * - Scoring: outputs have one entry per data row of the scored range (the training rows when no
 *   range is given, including rows skipped for a missing label: those can still be scored). A row
 *   that cannot be scored keeps its place with NaN numbers and a per-row problem.
 */
import { fitBinaryModel } from "./binary";
import { checkFirthWork } from "./data/fitWork";
import { buildDesign, encodeRows, skippedDetail, type DesignEncoding, type EncodedRows, type RowProblem, type SkippedRows } from "./data/design";
import { readLabels, type LabelInfo } from "./data/labels";
import { exampleRows, formatMessage, listNames, problem, type MessageCode } from "./messages";
import { fitMulticlassModel } from "./multiclass";
import { predictMulticlass } from "./predictMulticlass";
import { predictBinary } from "./predictBinary";
import { detectHeader, normalizeRange, padTable, rangeRow, readTable, type HeaderEvidence, type NumericColumn, type Table } from "./data/table";
import type { CellValue, DesignMatrix, Diagnostic, ModelFit, Prediction } from "./types";

/** Most coefficients (equations x terms) one fit may estimate; see the policy above. */
export const MAX_PARAMETERS = 500;

/** Largest rows x terms^3 for which profile-likelihood intervals are computed; see the policy above. */
export const PROFILE_BUDGET = 1e8;

/**
 * The interval method a binary fit can afford: "profile" falls back to "wald" (with a note) when
 * rows x terms^3 exceeds PROFILE_BUDGET.
 */
function affordableIntervals(method: "wald" | "profile", rows: number, terms: number): { method: "wald" | "profile"; note: Diagnostic | null } {
  // Beyond the budget, Wald intervals replace profile intervals, with a note.
  if (method !== "profile" || rows * terms ** 3 <= PROFILE_BUDGET) return { method, note: null };
  const reason = `${rows} rows x ${terms} terms (that would take minutes; at most about ${Math.floor(Math.cbrt(PROFILE_BUDGET / Math.max(1, rows)))} terms at this many rows)`;
  return {
    method: "wald",
    note: { code: "PROFILE_NOT_AVAILABLE", severity: "note", message: formatMessage("PROFILE_NOT_AVAILABLE", { reason, shown: "Wald intervals" }) },
  };
}

/** Refuse a model too large to fit in reasonable time (before any O(p^2) memory is taken). */
function checkModelSize(terms: number, equations: number): void {
  // A fit estimates at most MAX_PARAMETERS coefficients.
  if (terms * equations > MAX_PARAMETERS) {
    const detail = equations === 1 ? `${terms} terms` : `${equations} class equations of ${terms} terms each`;
    throw problem("TOO_MANY_PARAMETERS", { parameters: terms * equations, detail, limit: MAX_PARAMETERS });
  }
}

/** Class names of a grouped (successes out of trials) binary fit. */
export const GROUPED_CLASSES = ["failure", "success"] as const;

/** Everything trainModel accepts besides the two main ranges. Defaults in brackets. */
export interface ModelOptions {
  /** Whether the first row of each range holds names ["auto"]. */
  headers?: "auto" | "yes" | "no";
  /** Positive class of a binary problem [1, TRUE, yes, or the second in sorted order]. */
  positive?: string | null;
  /** Reference class of a multi-class problem [first in sorted order]. */
  reference?: string | null;
  /** Fit an intercept [true]. */
  intercept?: boolean;
  /** L2 penalty lambda >= 0 [0]. */
  penalty?: number;
  /** ["standardized"] */
  penaltyScale?: "standardized" | "original";
  /** Firth bias reduction [false]. */
  firth?: boolean;
  /** Interval level [0.95]. */
  level?: number;
  /** ["wald"] */
  intervalMethod?: "wald" | "profile";
  /** Default decision threshold stored with the model for scoring [0.5]. */
  threshold?: number;
  /** Case weights column [none]. */
  weights?: CellValue[][] | null;
  /** Offset column (binary) [none]. */
  offset?: CellValue[][] | null;
  /** Trials column: labels are then success counts (binary) [none]. */
  trials?: CellValue[][] | null;
  /** Reference category per text predictor column name [first in sorted order]. */
  referenceLevels?: Record<string, string> | null;
  /** Pool categories seen in fewer fitted rows than this into "(other)" [0 = never]. */
  minLevelCount?: number;
  /** Multi-class form ["reference"]. */
  form?: "reference" | "symmetric";
  maxIterations?: number;
  tolerance?: number;
}

/** Class information stored with a trained model. */
export interface ModelLabels {
  /** Name of the label column (its header, or "labels"). */
  name: string;
  classes: string[];
  positiveClass?: string;
  referenceClass?: string;
  /** Rows per class among the fitted rows (grouped: total failures and successes). */
  counts: number[];
  grouped: boolean;
}

/** A trained model: the fit plus everything needed to score new rows the same way. */
export interface TrainedModel {
  kind: "binary" | "multiclass";
  fit: ModelFit;
  /** Predictor encoding (plain, serializable). */
  encoding: DesignEncoding;
  labels: ModelLabels;
  /** Per training data row: its row in the fitted design, or -1 when skipped. */
  rowMap: Int32Array;
  /** Training data rows (after the header). */
  rows: number;
  /** True when the training ranges had a header row. */
  header: boolean;
  /** 1-based range row of training data row 0. */
  firstRow: number;
  skipped: SkippedRows;
  /** The fitted design (used rows only). */
  design: DesignMatrix;
  /** Training predictors encoded for scoring (every data row, problems per row). */
  trainingRows: EncodedRows;
  /** Offset per training data row (NaN where missing), or null without an offset. */
  trainingOffset: Float64Array | null;
  /** True when the model was fitted with an offset (scoring new rows then needs one). */
  usesOffset: boolean;
  /** Default threshold for scoring. */
  threshold: number;
}

/** Per-row scores, aligned with the scored range's data rows. */
export interface RowScores {
  rows: number;
  /** True when the scored range's first row was taken as names. */
  header: boolean;
  /** 1-based range row of data row 0. */
  firstRow: number;
  classes: string[];
  positiveClass?: string;
  threshold: number;
  /** Full-length prediction; unscored rows hold NaN and predicted -1. */
  prediction: Prediction;
  /** Predicted class name per row, or null when the row could not be scored. */
  predictedClass: (string | null)[];
  /** 1 for scored rows. */
  scored: Uint8Array;
  /** Why rows could not be scored (first problem per row), sorted by row. */
  problems: RowProblem[];
}

type RangeArg = { argument: string; cells: CellValue[][] };

const EVIDENCE_RANK: Record<HeaderEvidence, number> = { forced: 3, strong: 2, weak: 1, none: 0 };

/**
 * Read several aligned ranges with one header decision and one row count.
 * The first range is the reference for shape messages ("labels").
 */
function readAligned(
  ranges: RangeArg[],
  headers: "auto" | "yes" | "no",
  names: string[],
  notes: Diagnostic[],
  ownRows: number[] = [],
): Table[] {
  let decision: boolean | null = headers === "yes" ? true : headers === "no" ? false : null;
  if (decision === null) {
    // Under auto, the range with the strongest evidence decides for all (predictors win a tie).
    const detected = ranges.map((r) => {
      const { rows } = normalizeRange(r.cells, r.argument);
      return detectHeader(rows);
    });
    let best = 1 < ranges.length ? 1 : 0;
    detected.forEach((d, k) => {
      if (EVIDENCE_RANK[d.evidence] > EVIDENCE_RANK[detected[best].evidence]) best = k;
    });
    decision = detected[best].header;
    // A range whose own evidence pointed the other way is named in a note, so the choice is visible.
    const other = detected.findIndex((d) => d.header !== decision && d.evidence !== "none");
    if (other >= 0) {
      const looks = (h: boolean) => (h ? "column names" : "data");
      notes.push({
        code: "HEADERS_DISAGREE",
        severity: "note",
        message: formatMessage("HEADERS_DISAGREE", {
          decided: ranges[best].argument,
          decidedLooks: looks(decision),
          other: ranges[other].argument,
          otherLooks: looks(!decision),
          decision: looks(decision),
        }),
      });
    }
  }
  const forced = decision ? "yes" : "no";
  const tables = ranges.map((r, k) => {
    const t = readTable(r.cells, { argument: r.argument, headers: forced, namePrefix: k === 1 ? "x" : r.argument });
    // A single-column range without a header is named after its argument ("labels", "weights").
    if (!t.header && k !== 1) t.columns[0].name = t.names[0] = names[k];
    return t;
  });
  // Error cells were read as blank: each range that held some is named in a warning.
  for (const t of tables) if (t.errorCells.count > 0) notes.push(errorCellsNote(t));
  // Ranges are aligned by selected rows: compare the row counts before trimming.
  const selected = ranges.map((r, k) => tables[k].rows + tables[k].trimmedRows);
  const n = Math.max(...tables.map((t) => t.rows));
  for (let k = 1; k < ranges.length; k++) {
    if (selected[k] !== selected[0] && !(selected[k] >= n && selected[0] >= n)) {
      throw problem("RANGE_SHAPE_MISMATCH", {
        argument: ranges[k].argument,
        got: selected[k],
        expectedArgument: ranges[0].argument,
        expected: selected[0],
      });
    }
  }
  // A range that ends earlier than the others is blank below its end.
  for (const t of tables) ownRows.push(t.rows);
  return tables.map((t) => padTable(t, n));
}

/** The ERROR_VALUES_AS_BLANK warning of a range whose error cells were read as blank. */
function errorCellsNote(t: Table): Diagnostic {
  const first = t.errorCells.first as { row: number; column: number; value: string };
  const params = { count: t.errorCells.count, argument: t.argument, value: first.value, row: first.row, column: first.column };
  return { code: "ERROR_VALUES_AS_BLANK", severity: "warning", message: formatMessage("ERROR_VALUES_AS_BLANK", params), params };
}

function singleColumn(t: Table): void {
  if (t.columns.length !== 1) throw problem("SINGLE_COLUMN_NEEDED", { argument: t.argument, columns: t.columns.length });
}

/** A numeric single column (weights, offset, trials, successes); text is NOT_A_NUMBER at its cell. */
function numericColumn(t: Table): NumericColumn {
  singleColumn(t);
  const c = t.columns[0];
  if (c.kind === "text") {
    const i = c.missing.findIndex((m) => m === 0);
    throw problem("NOT_A_NUMBER", { argument: t.argument, row: rangeRow(t, i), column: 1, value: c.values[i] });
  }
  return c;
}

/** Resolved options with defaults, for the fitters. */
function fitOptions(o: ModelOptions) {
  return {
    intercept: o.intercept ?? true,
    penalty: o.penalty ?? 0,
    penaltyScale: o.penaltyScale ?? "standardized",
    biasReduction: o.firth ?? false,
    level: o.level ?? 0.95,
    intervalMethod: o.intervalMethod ?? "wald",
    ...(o.maxIterations !== undefined ? { maxIterations: o.maxIterations } : {}),
    ...(o.tolerance !== undefined ? { tolerance: o.tolerance } : {}),
  } as const;
}

/**
 * Class codes of the design rows from those of the input rows. (A loop of its own: trainModel runs
 * once per fit, mostly before it is optimized, and a loop inside it runs at the interpreter's pace.)
 */
function gatherCodes(codes: Int32Array, inputRows: Int32Array): Int32Array {
  const out = new Int32Array(inputRows.length);
  for (let r = 0; r < inputRows.length; r++) out[r] = codes[inputRows[r]];
  return out;
}

/** Gather used rows of a per-input-row array into design-row order. */
function gather(values: Float64Array, inputRows: Int32Array): Float64Array {
  const out = new Float64Array(inputRows.length);
  for (let r = 0; r < inputRows.length; r++) out[r] = values[inputRows[r]];
  return out;
}

/**
 * Train a classifier from worksheet ranges: parse, encode categories, skip incomplete rows, fit.
 * Two classes give a binary logistic fit (fitBinaryModel), more a multinomial (softmax) fit
 * (fitMulticlassModel); see those for the methods and their references.
 *
 * @param labels one column of class labels (or success counts with `options.trials`).
 * @param predictors one column per predictor; text columns become indicator terms.
 * @throws OddsmithError for input the user must correct (shapes, labels, options); estimation
 *   problems are diagnostics in `fit.diagnostics`.
 * @example
 * const m = trainModel([["bought"], ["yes"], ["no"], ...], [["visits", "region"], [3, "North"], ...], {});
 * m.fit.positiveClass // "yes"; m.fit.terms // ["(intercept)", "visits", "region=South", ...]
 */
export function trainModel(labels: CellValue[][], predictors: CellValue[][], options: ModelOptions = {}): TrainedModel {
  const headers = options.headers ?? "auto";
  const ranges: RangeArg[] = [
    { argument: "labels", cells: labels },
    { argument: "predictors", cells: predictors },
  ];
  const names = ["labels", "predictors"];
  const extras: ("weights" | "offset" | "trials")[] = [];
  for (const key of ["weights", "offset", "trials"] as const) {
    const cells = options[key];
    if (cells != null) {
      ranges.push({ argument: key, cells });
      names.push(key);
      extras.push(key);
    }
  }
  const readNotes: Diagnostic[] = [];
  const ownRows: number[] = [];
  const tables = readAligned(ranges, headers, names, readNotes, ownRows);
  const [labelTable, predTable] = tables;
  singleColumn(labelTable);
  const labelColumn = labelTable.columns[0];
  const byName = new Map<string, NumericColumn>();
  extras.forEach((key, k) => byName.set(key, numericColumn(tables[2 + k])));
  const weights = byName.get("weights") ?? null;
  const offset = byName.get("offset") ?? null;
  const trials = byName.get("trials") ?? null;
  const n = predTable.rows;

  // Weights must be finite and >= 0.
  if (weights) {
    for (let i = 0; i < n; i++) {
      if (!weights.missing[i] && !(weights.values[i] >= 0)) {
        throw problem("BAD_WEIGHT", { row: rangeRow(predTable, i), value: weights.values[i] });
      }
    }
  }
  let successes: NumericColumn | null = null;
  if (trials) {
    successes = numericColumn(labelTable);
    // Grouped counts need 0 <= successes <= trials.
    for (let i = 0; i < n; i++) {
      if (successes.missing[i] || trials.missing[i]) continue;
      const y = successes.values[i];
      const t = trials.values[i];
      if (!(t >= 0) || !(y >= 0) || y > t) {
        throw problem("BAD_TRIALS", { row: rangeRow(predTable, i), successes: y, trials: t });
      }
    }
  }

  // A row missing any used value is skipped, counted per column (label and extras first).
  const extra = [{ name: labelColumn.name, missing: labelColumn.missing }];
  for (const key of extras) {
    const c = byName.get(key) as NumericColumn;
    extra.push({ name: c.name, missing: c.missing });
  }
  const built = buildDesign(predTable, {
    extra,
    referenceLevels: options.referenceLevels ?? null,
    minLevelCount: options.minLevelCount ?? 0,
  });
  const { design, inputRows } = built;
  const common = fitOptions(options);
  const w = weights ? gather(weights.values, inputRows) : null;
  const terms = design.columns.length + (common.intercept ? 1 : 0);
  const intervals = affordableIntervals(common.intervalMethod, design.rows, terms);

  let fit: ModelFit;
  let info: ModelLabels;
  if (trials && successes) {
    const y = gather(successes.values, inputRows);
    const t = gather(trials.values, inputRows);
    let s = 0;
    let total = 0;
    for (let r = 0; r < y.length; r++) {
      const wr = w ? w[r] : 1;
      s += wr * y[r];
      total += wr * t[r];
    }
    // Two classes are still needed: all successes or all failures cannot be classified.
    if (s === 0 || s === total) {
      throw problem("ONE_CLASS_ONLY", { label: s === 0 ? GROUPED_CLASSES[0] : GROUPED_CLASSES[1] });
    }
    checkModelSize(terms, 1);
    if (common.biasReduction) checkFirthWork(design.rows, terms);
    fit = fitBinaryModel(design, y, {
      ...common,
      intervalMethod: intervals.method,
      weights: w,
      offset: offset ? gather(offset.values, inputRows) : null,
      trials: t,
    }, [GROUPED_CLASSES[0], GROUPED_CLASSES[1]]);
    info = { name: labelColumn.name, classes: [...GROUPED_CLASSES], positiveClass: GROUPED_CLASSES[1], counts: [total - s, s], grouped: true };
  } else {
    const classes: LabelInfo = readLabels(labelColumn, {
      positive: options.positive ?? null,
      reference: options.reference ?? null,
      use: built.used,
    });
    const codes = gatherCodes(classes.codes, inputRows);
    if (classes.kind === "binary") {
      const y = Float64Array.from(codes);
      checkModelSize(terms, 1);
      if (common.biasReduction) checkFirthWork(design.rows, terms);
      fit = fitBinaryModel(design, y, {
        ...common,
        intervalMethod: intervals.method,
        weights: w,
        offset: offset ? gather(offset.values, inputRows) : null,
      }, [classes.classes[0], classes.classes[1]]);
    } else {
      // Two-class-only options are refused for multi-class labels, named as the user wrote them.
      const k = classes.classes.length;
      const twoClassOnly = (name: string, value: string, what: string) =>
        problem("BAD_OPTION_VALUE", {
          name,
          value,
          expected: `${what} is available for two-class labels only, and the label column has ${k} classes (${listNames(classes.classes)}).`,
        });
      if (options.firth) throw twoClassOnly("firth", "TRUE", "Bias reduction");
      if (options.intervalMethod === "profile") throw twoClassOnly("interval", "profile", "The profile-likelihood interval");
      if (offset) throw twoClassOnly("offset", "a column", "An offset");
      checkModelSize(terms, (options.form ?? "reference") === "symmetric" ? k : k - 1);
      fit = fitMulticlassModel(design, codes, classes.classes, {
        ...common,
        weights: w,
        reference: classes.referenceIndex,
        form: options.form ?? "reference",
      });
    }
    info = {
      name: labelColumn.name,
      classes: classes.classes,
      positiveClass: classes.positiveClass,
      referenceClass: classes.referenceClass,
      counts: classes.counts,
      grouped: false,
    };
  }

  // Diagnostic rows from the fitter index design rows: map them back to the caller's data rows, and
  // format the message again with the example rows numbered as in the user's range.
  for (const d of fit.diagnostics) {
    if (!d.rows || d.rows.length === 0) continue;
    d.rows = d.rows.map((r) => (r >= 0 && r < inputRows.length ? inputRows[r] : r));
    if (d.params && "rows" in d.params) {
      d.params = { ...d.params, rows: exampleRows(d.rows, (r) => rangeRow(predTable, r)) };
      d.message = formatMessage(d.code as MessageCode, d.params);
    }
  }
  const added: Diagnostic[] = [...readNotes, ...built.notes];
  if (intervals.note && fit.kind === "binary") added.push(intervals.note);
  if (built.skipped.total > 0) {
    // Skipped rows are a warning carried in the result, counted per column.
    added.push({
      code: "ROWS_SKIPPED",
      severity: "warning",
      message: formatMessage("ROWS_SKIPPED", { count: built.skipped.total, detail: skippedDetail(built.skipped) }),
      columns: built.skipped.perColumn.map((c) => c.column),
      rows: built.skipped.rows.slice(),
    });
  }
  fit.diagnostics.push(...added);

  const trainingRows =
    encodedFromTable(built.encoding, predTable, ownRows[1], predictors) ??
    encodedFromDesign(built.encoding, design, predTable, ownRows[1], predictors) ??
    encodeRows(built.encoding, predictors, { argument: "predictors", headers: predTable.header ? "yes" : "no" });
  return {
    kind: fit.kind,
    fit,
    encoding: built.encoding,
    labels: info,
    rowMap: built.rowMap,
    rows: n,
    header: predTable.header,
    firstRow: predTable.firstRow,
    skipped: built.skipped,
    design,
    trainingRows: padEncoded(trainingRows, n),
    trainingOffset: offset ? offset.values : null,
    usesOffset: offset !== null,
    threshold: options.threshold ?? 0.5,
  };
}

/**
 * The training rows as encodeRows would encode them from the predictor cells, taken from the parsed
 * table instead of parsing the cells again, when every column is numeric (or ignored) and the header
 * cells sit at their own positions; otherwise null (the caller encodes the cells). A number column of
 * the table holds exactly what encodeRows reads (blank = missing; text cannot occur in it), so the
 * values, the per-row MISSING_FOR_SCORING problems and the NaN rows are the same.
 * @param own data rows of the predictors range itself (before padding to the other ranges)
 */
function encodedFromTable(encoding: DesignEncoding, table: Table, own: number, cells: CellValue[][]): EncodedRows | null {
  if (own === undefined || own > table.rows) return null;
  for (let k = 0; k < encoding.columns.length; k++) {
    const c = encoding.columns[k];
    if (c.kind === "ignored") continue;
    if (c.kind !== "number") return null;
    const tc = table.columns[k];
    if (!tc || tc.kind === "text" || tc.name !== c.name) return null;
  }
  if (!namesAtOwnPositions(encoding, table, cells)) return null;
  const start = table.firstRow - 1;
  const ok = new Uint8Array(own).fill(1);
  const problems: RowProblem[] = [];
  const columns: Float64Array[] = [];
  for (let k = 0; k < encoding.columns.length; k++) {
    const c = encoding.columns[k];
    if (c.kind === "ignored") continue;
    const tc = table.columns[k] as NumericColumn;
    // The table is trainModel's own (read-only from here on, the design may share its columns too): its column is taken as it is.
    columns.push(own === tc.values.length ? tc.values : tc.values.slice(0, own));
    const missing = tc.missing;
    // (A column without a missing value, the usual case, is passed over by the built-in search.)
    if (!missing.subarray(0, own).includes(1)) continue;
    for (let i = 0; i < own; i++) {
      // A missing value is a problem of that row only (the first column missing names it).
      if (missing[i] && ok[i]) {
        ok[i] = 0;
        problems.push({
          index: i,
          code: "MISSING_FOR_SCORING",
          column: c.name,
          message: formatMessage("MISSING_FOR_SCORING", { row: start + i + 1, column: c.name }),
        });
      }
    }
  }
  if (problems.length > 0) {
    for (let i = 0; i < own; i++) if (!ok[i]) for (const col of columns) col[i] = NaN;
    problems.sort((a, b) => a.index - b.index);
  }
  return { design: { rows: own, columns, names: encoding.terms.slice() }, ok, problems, header: table.header, firstRow: start + 1 };
}

/**
 * True when encodeRows would read column k of the training encoding from column k of `cells`: always
 * without a header row (columns by position); with one, when each used column's name sits at its own
 * position and nowhere before it (columns are matched by name).
 */
function namesAtOwnPositions(encoding: DesignEncoding, table: Table, cells: CellValue[][]): boolean {
  if (!table.header) return true;
  const header = Array.isArray(cells) && Array.isArray(cells[0]) ? (cells[0] as CellValue[]) : null;
  if (!header) return false;
  for (let k = 0; k < encoding.columns.length; k++) {
    const c = encoding.columns[k];
    if (c.kind === "ignored") continue;
    const v = header[k];
    if (typeof v !== "string" || v.trim() !== c.name) return false;
    for (let j = 0; j < k; j++) {
      const w = header[j];
      if (typeof w === "string" && w.trim() === c.name) return false;
    }
  }
  return true;
}

/**
 * The training rows as encodeRows would encode them, taken from the fitted design itself when every
 * data row of the predictors entered the fit (none skipped, none past the range's end) and the
 * columns sit at their own positions; otherwise null. With no row skipped, no value is missing and
 * every category level of the rows is one of the encoding's (the levels are those of the fitted
 * rows), so encodeRows gives each row the very terms buildDesign gave it. The columns are shared
 * with `design`, not copied (nothing writes to either: scoring copies the rows it uses).
 * @param own data rows of the predictors range itself (before padding to the other ranges)
 */
function encodedFromDesign(encoding: DesignEncoding, design: DesignMatrix, table: Table, own: number, cells: CellValue[][]): EncodedRows | null {
  if (own === undefined || own !== table.rows || design.rows !== table.rows) return null;
  if (design.columns.length !== encoding.terms.length || !namesAtOwnPositions(encoding, table, cells)) return null;
  return {
    design: { rows: own, columns: design.columns, names: encoding.terms.slice() },
    ok: new Uint8Array(own).fill(1),
    problems: [],
    header: table.header,
    firstRow: table.firstRow,
  };
}

/** Training predictors may be trimmed shorter than the labels: rows past their end are missing. */
function padEncoded(e: EncodedRows, n: number): EncodedRows {
  if (e.design.rows >= n) return e;
  const ok = new Uint8Array(n);
  ok.set(e.ok);
  const columns = e.design.columns.map((c) => {
    const out = new Float64Array(n).fill(NaN);
    out.set(c);
    return out;
  });
  const problems = e.problems.slice();
  for (let i = e.design.rows; i < n; i++) {
    problems.push({
      index: i,
      code: "MISSING_FOR_SCORING",
      column: "predictors",
      message: formatMessage("MISSING_FOR_SCORING", { row: e.firstRow + i, column: "predictors" }),
    });
  }
  return { ...e, design: { rows: n, columns, names: e.design.names }, ok, problems };
}

/**
 * Score rows with a trained model: class probabilities, predicted class, margins (and for binary
 * models the linear predictor with its standard error and a probability interval on the logit
 * scale), one entry per data row of `predictors`, or of the training rows when `predictors` is null.
 * Rows that cannot be scored (missing value, unseen category) keep their place with NaN and a
 * per-row problem. Methods: predictBinary / predictMulticlass.
 *
 * @param options.threshold decision threshold for binary models [the model's].
 * @param options.offset offset column for new rows of a model fitted with an offset.
 * @throws OddsmithError only for whole-range problems (EMPTY_RANGE, RAGGED_RANGE, COLUMN_COUNT_MISMATCH).
 */
export function scoreRows(
  model: TrainedModel,
  predictors: CellValue[][] | null,
  options: { threshold?: number; offset?: CellValue[][] | null; headers?: "auto" | "yes" | "no" } = {},
): RowScores {
  const threshold = options.threshold ?? model.threshold;
  // Rows given here are the caller's new rows (ODDS.PROB's new_rows): messages name that argument.
  const encoded = predictors === null ? model.trainingRows : encodeRows(model.encoding, predictors, { argument: "new_rows", headers: options.headers ?? "auto" });
  const n = encoded.design.rows;
  const ok = encoded.ok.slice();
  const problems = encoded.problems.slice();
  let offsetAll: Float64Array | null = null;
  if (model.usesOffset) {
    if (predictors === null) offsetAll = model.trainingOffset;
    else if (options.offset != null) {
      const t = padTable(readTable(options.offset, { argument: "offset", headers: encoded.header ? "yes" : "no" }), n);
      offsetAll = numericColumn(t).values;
    }
    // A model fitted with an offset needs one per scored row.
    for (let i = 0; i < n; i++) {
      if (ok[i] && !(offsetAll && Number.isFinite(offsetAll[i]))) {
        ok[i] = 0;
        problems.push({
          index: i,
          code: "MISSING_FOR_SCORING",
          column: "offset",
          message: formatMessage("MISSING_FOR_SCORING", { row: encoded.firstRow + i, column: "offset" }),
        });
      }
    }
    problems.sort((a, b) => a.index - b.index);
  }
  const good: number[] = [];
  for (let i = 0; i < n; i++) if (ok[i]) good.push(i);
  const X: DesignMatrix = {
    rows: good.length,
    names: encoded.design.names,
    columns: encoded.design.columns.map((c) => Float64Array.from(good, (i) => c[i])),
  };
  const part =
    model.kind === "binary"
      ? predictBinary(model.fit, X, {
          threshold,
          offset: offsetAll ? Float64Array.from(good, (i) => (offsetAll as Float64Array)[i]) : undefined,
        })
      : predictMulticlass(model.fit, X);
  const prediction = expand(part, good, n);
  const classes = model.fit.classes;
  const predictedClass = Array.from(prediction.predicted, (k) => (k >= 0 ? classes[k] : null));
  return {
    rows: n,
    header: encoded.header,
    firstRow: encoded.firstRow,
    classes,
    positiveClass: model.fit.positiveClass,
    threshold,
    prediction,
    predictedClass,
    scored: ok,
    problems,
  };
}

/** Spread a prediction of the good rows back to all rows (NaN / -1 elsewhere). */
function expand(p: Prediction, good: number[], n: number): Prediction {
  const spread = (a: Float64Array | undefined) => {
    if (!a) return undefined;
    const out = new Float64Array(n).fill(NaN);
    for (let r = 0; r < good.length; r++) out[good[r]] = a[r];
    return out;
  };
  const predicted = new Int32Array(n).fill(-1);
  for (let r = 0; r < good.length; r++) predicted[good[r]] = p.predicted[r];
  const out: Prediction = {
    probabilities: p.probabilities.map((a) => spread(a) as Float64Array),
    predicted,
    margin: spread(p.margin) as Float64Array,
  };
  if (p.linearPredictor) out.linearPredictor = spread(p.linearPredictor);
  if (p.linearPredictorSE) out.linearPredictorSE = spread(p.linearPredictorSE);
  if (p.lower) out.lower = spread(p.lower);
  if (p.upper) out.upper = spread(p.upper);
  if (p.linkMargin) out.linkMargin = spread(p.linkMargin);
  return out;
}
