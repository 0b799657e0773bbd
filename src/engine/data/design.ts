/**
 * Design matrices: typed predictor columns in, numeric model terms out, with an encoding that is stored
 * with the model so new rows are transformed exactly the same way.
 *
 * Policy (each rule is repeated in one line above the code that applies it):
 * - Number columns enter as they are; boolean columns as 1 (TRUE) / 0 (FALSE); entirely blank
 *   columns are left out of the model and named in a note (EMPTY_COLUMN_IGNORED).
 * - A text column becomes one indicator (0/1) term per level except the reference level, named
 *   "column=level". The reference level is the one the caller names, otherwise the first level in
 *   sorted order (case-insensitive, locale-free). Levels are those of the rows that enter the fit.
 * - Rare levels (optional, minLevelCount > 0): levels seen in fewer than minLevelCount fitted rows are
 *   pooled into one level named "(other)", placed last; pooling happens only when two or more levels
 *   are rare (pooling one level would only rename it).
 * - A text column with more than 100 levels after pooling is TOO_MANY_LEVELS: it is an identifier or
 *   free text rather than a category, and the fit's cost grows with the cube of the number of terms
 *   (500 levels over 1,000 rows took 40 s).
 * - A row with a missing value in any used column (predictors and the caller's extra columns: label,
 *   weight, offset, trials) is skipped. Skips are counted per column: a row missing in two columns
 *   counts once in each column and once in the total.
 * - A row map (input row -> design row, or -1) keeps outputs aligned with the input rows.
 * - Scoring new rows (encodeRows): the same terms; a missing value (MISSING_FOR_SCORING), a category
 *   not seen in training (UNSEEN_LEVEL) or text in a number column (NOT_A_NUMBER) is a problem of that
 *   row only: the row's terms are NaN and the other rows are scored.
 * - Columns of new rows are matched by name when their first row repeats the training column names
 *   (any order; extra columns ignored), otherwise by position, which needs the training width.
 */
import { formatMessage, listNames, problem, type MessageCode } from "../messages";
import { INTERCEPT_TERM } from "../inference";
import { compareText } from "./labels";
import { detectHeader, isBlankCell, normalizeRange, parseNumericText, type Table, type TableColumn } from "./table";
import type { CellValue, DesignMatrix, Diagnostic } from "../types";

/** Name of the pooled rare-levels category. */
export const OTHER_LEVEL = "(other)";

/**
 * Name of the indicator term of `level` in `column`: "column=level", or column="level" when quoted
 * (to tell it from a column of that name) or when the level itself is wrapped in double quotes (so
 * ODDS.SCORE, which removes one pair of quotes, reads the level back unchanged).
 */
export function indicatorTerm(column: string, level: string, quoted: boolean): string {
  const wrapped = level.length >= 2 && level.startsWith('"') && level.endsWith('"');
  return quoted || wrapped ? `${column}="${level}"` : `${column}=${level}`;
}

/**
 * Make every term name unique (by construction, so a coefficient table names each term once and
 * ODDS.SCORE can read it back): the intercept's name is reserved; a numeric column whose name another
 * term already has is written in quotes ("(intercept)"), an indicator as column="level"; a name still
 * taken gets " (2)", " (3)", ... Renames `names` and the encodings' terms in place.
 */
function uniqueTermNames(columns: ColumnEncoding[], names: string[]): void {
  const taken = new Set<string>([INTERCEPT_TERM]);
  let t = 0;
  for (const c of columns) {
    for (let k = 0; k < c.terms.length; k++, t++) {
      let name = c.terms[k];
      // A name another term (or the intercept) already holds is written in its quoted form...
      if (taken.has(name)) name = c.kind === "category" ? indicatorTerm(c.name, c.levels.filter((l) => l !== c.reference)[k], true) : `"${c.name}"`;
      // ...and numbered when even that is taken.
      const base = name;
      for (let n = 2; taken.has(name); n++) name = `${base} (${n})`;
      taken.add(name);
      c.terms[k] = name;
      names[t] = name;
    }
  }
}

/** Most levels a text predictor may have after pooling (each level but the reference is a term). */
export const MAX_LEVELS = 100;

/** How one input column becomes terms. */
export type ColumnEncoding =
  | { name: string; kind: "number"; source: "number" | "boolean"; terms: string[] }
  | {
      name: string;
      kind: "category";
      /** Levels after pooling, sorted, "(other)" last when present. */
      levels: string[];
      reference: string;
      /** Training levels merged into "(other)". */
      pooled: string[];
      /** One term per non-reference level, in `levels` order. */
      terms: string[];
    }
  | { name: string; kind: "ignored"; terms: string[] };

/** The plain, JSON-serializable recipe that turns predictor cells into design columns. */
export interface DesignEncoding {
  version: 1;
  /** One entry per input column, in input order. */
  columns: ColumnEncoding[];
  /** All term names, in design-column order. */
  terms: string[];
  /** True when the training range had a header row. */
  header: boolean;
}

/** Rows skipped for missing values, counted per column. */
export interface SkippedRows {
  /** Rows skipped (each counted once). */
  total: number;
  /** Per used column, in column order, only columns with at least one missing value. */
  perColumn: { column: string; count: number }[];
  /** 0-based input rows skipped. */
  rows: number[];
}

/** An extra column whose missing values also make a row unusable (label, weight, offset, trials). */
export interface ExtraColumn {
  name: string;
  missing: Uint8Array;
}

export interface BuildDesignOptions {
  /** Reference level per text column name. */
  referenceLevels?: Record<string, string> | null;
  /** Pool levels with fewer fitted rows than this into "(other)" [0 = never]. */
  minLevelCount?: number;
  /** Other columns whose blanks also skip a row (checked first, in this order). */
  extra?: ExtraColumn[];
}

/** Result of building the training design. */
export interface BuiltDesign {
  design: DesignMatrix;
  encoding: DesignEncoding;
  /** Per input row: its design row, or -1 when skipped. */
  rowMap: Int32Array;
  /** Per design row: its input row. */
  inputRows: Int32Array;
  /** 1 for input rows that enter the design. */
  used: Uint8Array;
  skipped: SkippedRows;
  /** Notes about columns (ignored blank columns, pooled levels). */
  notes: Diagnostic[];
}

/** Format per-column skip counts for ROWS_SKIPPED: "labels: 2, age: 1". */
export function skippedDetail(skipped: SkippedRows): string {
  return skipped.perColumn.map((c) => `${c.column}: ${c.count}`).join(", ");
}

/**
 * Build the design matrix of a predictor table (treatment coding of categories).
 * Reference: Chambers & Hastie (eds.), Statistical Models in S (1992), ch. 2, on treatment contrasts
 * for factors; the reference level's indicator is omitted so the intercept absorbs it.
 *
 * @throws OddsmithError COLUMN_NOT_FOUND, LEVEL_NOT_FOUND (reference levels); NO_USABLE_ROWS.
 * @example
 * const t = readTable([["age", "region"], [31, "North"], [40, "South"], [null, "North"]], { argument: "predictors" });
 * buildDesign(t).design.names // ["age", "region=South"]; row 3 skipped (age: 1)
 */
export function buildDesign(table: Table, opts: BuildDesignOptions = {}): BuiltDesign {
  const n = table.rows;
  const extra = opts.extra ?? [];
  const minCount = opts.minLevelCount ?? 0;
  const refs = opts.referenceLevels ?? {};
  for (const col of Object.keys(refs)) {
    if (!table.names.includes(col)) {
      throw problem("COLUMN_NOT_FOUND", { name: col, columns: listNames(table.names, 12) });
    }
  }
  const notes: Diagnostic[] = [];
  // Entirely blank columns are left out of the model, with a note.
  const usedColumns = table.columns.filter((c) => c.kind !== "empty");
  for (const c of table.columns) {
    if (c.kind === "empty") {
      notes.push({
        code: "EMPTY_COLUMN_IGNORED",
        severity: "note",
        message: formatMessage("EMPTY_COLUMN_IGNORED", { column: c.name }),
        columns: [c.name],
      });
    }
  }

  // A row with a missing value in any used column is skipped; skips are counted per column.
  const checks: ExtraColumn[] = [...extra, ...usedColumns.map((c) => ({ name: c.name, missing: c.missing }))];
  const used = new Uint8Array(n).fill(1);
  const perColumn: { column: string; count: number }[] = [];
  for (const c of checks) {
    let count = 0;
    // (A column without a missing value, the usual case, is passed over by the built-in search.)
    if (!c.missing.includes(1)) continue;
    for (let i = 0; i < n; i++) {
      if (c.missing[i]) {
        count++;
        used[i] = 0;
      }
    }
    if (count > 0) perColumn.push({ column: c.name, count });
  }
  const { rowMap, inputRows, skippedRows } = usedRowMaps(used);
  const skipped: SkippedRows = { total: skippedRows.length, perColumn, rows: skippedRows };
  const m = inputRows.length;
  if (m === 0) {
    throw problem("NO_USABLE_ROWS", { missing: skippedDetail(skipped) || "none" });
  }

  const columns: ColumnEncoding[] = [];
  const designColumns: Float64Array[] = [];
  const names: string[] = [];
  for (const c of table.columns) {
    if (c.kind === "empty") {
      columns.push({ name: c.name, kind: "ignored", terms: [] });
      continue;
    }
    if (c.kind === "number" || c.kind === "boolean") {
      const v = c.values as Float64Array;
      let out: Float64Array;
      // Every row used: the table's column itself, not a copy (the fitters never write to a design
      // column, and the table is the caller's own parse of the cells).
      if (m === n && v.length === n) out = v;
      else {
        out = new Float64Array(m);
        for (let r = 0; r < m; r++) out[r] = v[inputRows[r]];
      }
      columns.push({ name: c.name, kind: "number", source: c.kind, terms: [c.name] });
      designColumns.push(out);
      names.push(c.name);
      continue;
    }
    // Own keys only: a column named "constructor" or "toString" must not pick up Object.prototype members.
    const wanted = Object.prototype.hasOwnProperty.call(refs, c.name) ? refs[c.name] : null;
    const { encoding: enc, rowLevels } = encodeCategory(c, inputRows, minCount, wanted ?? null, notes);
    columns.push(enc);
    const ref = enc.levels.indexOf(enc.reference);
    const outs = enc.terms.map(() => new Float64Array(m));
    for (let r = 0; r < m; r++) {
      const li = rowLevels[r];
      if (li === ref) continue;
      outs[li < ref ? li : li - 1][r] = 1;
    }
    for (let t = 0; t < outs.length; t++) {
      designColumns.push(outs[t]);
      names.push(enc.terms[t]);
    }
  }
  uniqueTermNames(columns, names);
  return {
    design: { rows: m, columns: designColumns, names },
    encoding: { version: 1, columns, terms: names.slice(), header: table.header },
    rowMap,
    inputRows,
    used,
    skipped,
    notes,
  };
}

/**
 * The encoding of a text column over the fitted rows, and each fitted row's level (its index in
 * `levels`; a pooled level's row has the index of "(other)"). Each row's text is looked up once: rows
 * get a code in order of first appearance, and the codes are mapped to levels at the end.
 */
/**
 * Row maps of the used rows: input row -> design row (or -1), design row -> input row, and the
 * skipped input rows. Every row used (the usual case): identity maps without a per-row test.
 */
function usedRowMaps(used: Uint8Array): { rowMap: Int32Array; inputRows: Int32Array; skippedRows: number[] } {
  const n = used.length;
  const rowMap = new Int32Array(n);
  if (!used.includes(0)) {
    for (let i = 0; i < n; i++) rowMap[i] = i;
    return { rowMap, inputRows: rowMap.slice(), skippedRows: [] };
  }
  const inputRowsList: number[] = [];
  const skippedRows: number[] = [];
  for (let i = 0; i < n; i++) {
    if (used[i]) {
      rowMap[i] = inputRowsList.length;
      inputRowsList.push(i);
    } else {
      rowMap[i] = -1;
      skippedRows.push(i);
    }
  }
  return { rowMap, inputRows: Int32Array.from(inputRowsList), skippedRows };
}

function encodeCategory(
  c: TableColumn,
  inputRows: Int32Array,
  minCount: number,
  wantedRef: string | null,
  notes: Diagnostic[],
): { encoding: ColumnEncoding & { kind: "category" }; rowLevels: Int32Array } {
  const values = c.values as string[];
  const codeOf = new Map<string, number>();
  const seen: string[] = [];
  const seenCount: number[] = [];
  const rowLevels = new Int32Array(inputRows.length);
  for (let r = 0; r < inputRows.length; r++) {
    const v = values[inputRows[r]];
    let code = codeOf.get(v);
    if (code === undefined) {
      code = seen.length;
      codeOf.set(v, code);
      seen.push(v);
      seenCount.push(0);
    }
    seenCount[code]++;
    rowLevels[r] = code;
  }
  const counts = new Map<string, number>();
  seen.forEach((v, k) => counts.set(v, seenCount[k]));
  let levels = [...counts.keys()].sort(compareText);
  let pooled: string[] = [];
  if (minCount > 0) {
    const rare = levels.filter((l) => (counts.get(l) as number) < minCount);
    // Pool rare levels into "(other)" only when two or more are rare.
    if (rare.length >= 2) {
      pooled = rare;
      levels = [...levels.filter((l) => !rare.includes(l)), OTHER_LEVEL];
      notes.push({
        code: "LEVELS_POOLED",
        severity: "note",
        message: formatMessage("LEVELS_POOLED", {
          count: rare.length,
          column: c.name,
          levels: listNames(rare),
          min: minCount,
        }),
        columns: [c.name],
      });
    }
  }
  // More than MAX_LEVELS levels is an identifier or free-text column, not a category.
  if (levels.length > MAX_LEVELS) {
    throw problem("TOO_MANY_LEVELS", { column: c.name, count: levels.length, limit: MAX_LEVELS });
  }
  let reference = levels[0];
  if (wantedRef !== null && wantedRef.trim() !== "") {
    reference = matchLevel(levels, pooled, wantedRef.trim(), c.name);
  }
  // The reference level is the caller's, otherwise the first in sorted order.
  const terms = levels.filter((l) => l !== reference).map((l) => indicatorTerm(c.name, l, false));
  const encoding: ColumnEncoding & { kind: "category" } = { name: c.name, kind: "category", levels, reference, pooled, terms };
  // Codes of first appearance -> levels (pooled levels -> "(other)").
  const lookup = levelLookup(encoding);
  const levelOfCode = Int32Array.from(seen, (v) => lookup.get(v) as number);
  for (let r = 0; r < rowLevels.length; r++) rowLevels[r] = levelOfCode[rowLevels[r]];
  return { encoding, rowLevels };
}

function matchLevel(levels: string[], pooled: string[], wanted: string, column: string): string {
  if (levels.includes(wanted)) return wanted;
  if (pooled.includes(wanted)) return OTHER_LEVEL;
  const hits = levels.filter((l) => l.toLowerCase() === wanted.toLowerCase());
  if (hits.length === 1) return hits[0];
  throw problem("LEVEL_NOT_FOUND", { level: wanted, column, levels: listNames([...levels, ...pooled], 12) });
}

function levelLookup(enc: ColumnEncoding & { kind: "category" }): Map<string, number> {
  const map = new Map<string, number>();
  enc.levels.forEach((l, i) => map.set(l, i));
  const other = enc.levels.indexOf(OTHER_LEVEL);
  for (const p of enc.pooled) map.set(p, other);
  return map;
}

/** A problem with one row of new data: that row is not scored, the others are. */
export interface RowProblem {
  /** 0-based data row. */
  index: number;
  code: MessageCode;
  message: string;
  /** Column involved. */
  column: string;
}

/** New rows encoded with a stored encoding. */
export interface EncodedRows {
  /** One design row per data row (not only the good ones); rows with a problem hold NaN. */
  design: DesignMatrix;
  /** 1 for rows that could be encoded. */
  ok: Uint8Array;
  /** First problem of each row that could not be encoded. */
  problems: RowProblem[];
  /** True when the first row of `cells` was taken as the column names. */
  header: boolean;
  /** 1-based range row of data row 0. */
  firstRow: number;
}

/**
 * Encode new predictor rows with an encoding from `buildDesign`, exactly as in training.
 * Trailing blank rows are trimmed (as in readTable); every other row keeps its place.
 *
 * @param headers "auto" takes the first row as names when it repeats the training column names (or,
 *   for a model trained without names, when readTable's rule finds strong evidence).
 * @throws OddsmithError EMPTY_RANGE, RAGGED_RANGE, COLUMN_COUNT_MISMATCH (whole-range problems only).
 */
export function encodeRows(
  encoding: DesignEncoding,
  cells: CellValue[][],
  opts: { argument?: string; headers?: "auto" | "yes" | "no" } = {},
): EncodedRows {
  const argument = opts.argument ?? "predictors";
  // Shape checks (rectangular, trailing blanks trimmed) come from the shared parser.
  const { rows, end, width } = normalizeRange(cells, argument);
  const trainedNames = encoding.columns.map((c) => c.name);

  let header = false;
  if (opts.headers === "yes") header = true;
  else if (opts.headers !== "no") {
    const first = rows[0].map((v) => (typeof v === "string" ? v.trim() : null));
    const named = first.filter((v) => v !== null && v !== "");
    const needed = encoding.columns.filter((c) => c.kind !== "ignored").map((c) => c.name);
    // First row repeating the training names is a header; otherwise only strong evidence counts.
    if (encoding.header && needed.every((nm) => first.includes(nm)) && named.length > 0) header = true;
    else {
      const detected = detectHeader(rows);
      if (detected.header && detected.evidence === "strong") header = true;
    }
  }
  // Map each trained column to a position in the new range.
  const position: number[] = [];
  if (header && encoding.header) {
    const first = rows[0].map((v) => (typeof v === "string" ? v.trim() : ""));
    for (const c of encoding.columns) position.push(c.kind === "ignored" ? -1 : first.indexOf(c.name));
  }
  if (position.length === 0 || position.some((p, k) => p < 0 && encoding.columns[k].kind !== "ignored")) {
    // By position: the range must be as wide as the training range.
    if (width !== encoding.columns.length) {
      throw problem("COLUMN_COUNT_MISMATCH", {
        argument,
        got: width,
        expected: encoding.columns.length,
        columns: listNames(trainedNames, 12),
      });
    }
    position.length = 0;
    for (let k = 0; k < encoding.columns.length; k++) position.push(k);
  }
  const start = header ? 1 : 0;
  const n = Math.max(0, end - start);
  if (n === 0) throw problem("EMPTY_RANGE", { argument });
  const ok = new Uint8Array(n).fill(1);
  const problems: RowProblem[] = [];
  const out = encoding.terms.map(() => new Float64Array(n));
  const flag = (i: number, code: MessageCode, column: string, params: Record<string, unknown>) => {
    if (!ok[i]) return;
    ok[i] = 0;
    problems.push({ index: i, code, column, message: formatMessage(code, { row: start + i + 1, column, ...params }) });
  };
  let t0 = 0;
  encoding.columns.forEach((c, k) => {
    if (c.kind === "ignored") return;
    const j = position[k];
    if (c.kind === "number") {
      const col = out[t0];
      for (let i = 0; i < n; i++) {
        const v = rows[start + i][j];
        // A missing value, or text in a number column, is a problem of that row only.
        if (isBlankCell(v)) {
          flag(i, "MISSING_FOR_SCORING", c.name, {});
          continue;
        }
        const x = typeof v === "number" ? v : typeof v === "boolean" ? (v ? 1 : 0) : parseNumericText(String(v));
        if (!Number.isFinite(x)) {
          flag(i, typeof v === "number" ? "NOT_FINITE_VALUE" : "NOT_A_NUMBER", c.name, {
            argument,
            column: j + 1,
            value: String(v),
          });
          continue;
        }
        col[i] = x;
      }
      t0 += 1;
      return;
    }
    const lookup = levelLookup(c);
    const ref = c.levels.indexOf(c.reference);
    for (let i = 0; i < n; i++) {
      const v = rows[start + i][j];
      // A missing value or a category not seen in training is a problem of that row only.
      if (isBlankCell(v)) {
        flag(i, "MISSING_FOR_SCORING", c.name, {});
        continue;
      }
      const text = typeof v === "boolean" ? (v ? "TRUE" : "FALSE") : String(v).trim();
      const li = lookup.get(text);
      if (li === undefined) {
        flag(i, "UNSEEN_LEVEL", c.name, { value: text, levels: listNames([...c.levels.filter((l) => l !== OTHER_LEVEL), ...c.pooled], 12) });
        continue;
      }
      if (li !== ref) out[t0 + (li < ref ? li : li - 1)][i] = 1;
    }
    t0 += c.terms.length;
  });
  for (let i = 0; i < n; i++) if (!ok[i]) for (const col of out) col[i] = NaN;
  problems.sort((a, b) => a.index - b.index);
  return { design: { rows: n, columns: out, names: encoding.terms.slice() }, ok, problems, header, firstRow: start + 1 };
}
