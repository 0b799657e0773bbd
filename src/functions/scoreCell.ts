/**
 * ODDS.SCORE(coefficients, rows): probabilities from a coefficient table that lives on the sheet, so
 * a model can be kept, copied and edited in cells without refitting.
 *
 * Policy (one line each):
 * - The coefficient table's first row is its header; columns are found by name, case-insensitively:
 *   "term" and "coefficient" are required; a column whose name starts with "class" names the outcome
 *   of each equation. Other columns (SE, z, p, intervals, ratios) are ignored. ODDS.FIT's output fits.
 * - The table ends at its first row with a blank term (ODDS.FIT writes notes below a blank row).
 * - A blank coefficient counts as 0 (ODDS.FIT leaves aliased, dropped terms blank).
 * - One distinct class (or no class column): a binary model; the output is the probability of that
 *   class (header "P(class)"). Several classes: a reference-class softmax; the reference class is
 *   read from the class header "class (reference: A)" (else it is called "reference") and comes first.
 *   A class header "class (symmetric)" marks the symmetric form: one equation per class, no reference.
 * - Terms: "(intercept)" is 1; a term naming a column of `rows` takes that column's numbers; a term
 *   "column=level" with no column of that name is the indicator of `column` equal to `level`.
 * - A row with a blank in a used column cannot be scored: its output cells are "" (the other rows are
 *   scored). A category that matches no term counts as the reference level (the table cannot tell
 *   the reference level from an unseen one: say so in the help).
 */
import { errorLiteral, INTERCEPT_TERM, sigmoid, isBlankCell, parseNumericText, readTable, type TableColumn, type CellValue } from "../engine";
import { listNames, problem } from "../shared/messages";
import { spill } from "../shared/cellOutput";
import { checkPayload } from "../shared/payload";
import { checkOutputSize } from "../shared/sheetLimits";

/** A model read back from a coefficient table. */
export interface SheetModel {
  /** Class names: binary [positive]; reference form [reference, ...equation classes]; symmetric form the equation classes. */
  classes: string[];
  kind: "binary" | "multiclass";
  /** Multi-class parameterization (binary: "reference"). */
  form: "reference" | "symmetric";
  terms: string[];
  /** One coefficient vector per equation, parallel to `terms` (0 where a class lacks a term). */
  coefficients: Float64Array[];
}

const REFERENCE_IN_HEADER = /reference\s*:\s*(.*?)\s*\)?\s*$/i;

/**
 * Read a coefficient table (the spilled output of ODDS.FIT, or a hand-made one).
 * @throws OddsmithError COEFFICIENT_TABLE_HEADER, NOT_A_NUMBER, COEFFICIENT_TERM_REPEATED, EMPTY_RANGE
 */
export function readCoefficientTable(cells: CellValue[][]): SheetModel {
  if (!Array.isArray(cells) || cells.length === 0 || !Array.isArray(cells[0])) {
    throw problem("EMPTY_RANGE", { argument: "coefficients" });
  }
  const header = cells[0].map((v) => (typeof v === "string" ? v.trim().toLowerCase() : ""));
  const termCol = header.indexOf("term");
  const coefCol = header.indexOf("coefficient");
  const classCol = header.findIndex((h) => h.startsWith("class"));
  if (termCol < 0 || coefCol < 0) {
    const found = cells[0].filter((v) => !isBlankCell(v)).map((v) => String(v));
    throw problem("COEFFICIENT_TABLE_HEADER", { found: found.length ? listNames(found, 6) : "nothing" });
  }
  const referenceMatch = classCol >= 0 ? REFERENCE_IN_HEADER.exec(String(cells[0][classCol])) : null;
  const symmetric = classCol >= 0 && /symmetric/i.test(String(cells[0][classCol]));

  const outcomes: string[] = [];
  const terms: string[] = [];
  const entries: { outcome: number; term: number; value: number; row: number }[] = [];
  for (let i = 1; i < cells.length; i++) {
    const row = cells[i];
    const termCell = row[termCol];
    // The table ends at the first blank term.
    if (isBlankCell(termCell)) break;
    const term = String(termCell).trim();
    const outcome = classCol >= 0 && !isBlankCell(row[classCol]) ? String(row[classCol]).trim() : "";
    const raw = row[coefCol];
    for (const [col, v] of [[termCol, termCell], [coefCol, raw]] as const) {
      const literal = errorLiteral(v);
      if (literal !== null) throw problem("ERROR_VALUE_CELL", { argument: "coefficients", value: literal, row: i + 1, column: col + 1, what: "a coefficient table must be complete" });
    }
    let value: number;
    // A blank coefficient counts as 0 (aliased terms are left blank by ODDS.FIT).
    if (isBlankCell(raw)) value = 0;
    else if (typeof raw === "number") value = raw;
    else if (typeof raw === "string") value = parseNumericText(raw);
    else value = NaN;
    if (!Number.isFinite(value)) {
      throw problem("NOT_A_NUMBER", { argument: "coefficients", row: i + 1, column: coefCol + 1, value: String(raw) });
    }
    let o = outcomes.indexOf(outcome);
    if (o < 0) o = outcomes.push(outcome) - 1;
    let t = terms.indexOf(term);
    if (t < 0) t = terms.push(term) - 1;
    const twin = entries.find((e) => e.outcome === o && e.term === t);
    if (twin) {
      throw problem("COEFFICIENT_TERM_REPEATED", { term, outcome: outcome || "(none)", first: twin.row, second: i + 1 });
    }
    entries.push({ outcome: o, term: t, value, row: i + 1 });
  }
  if (entries.length === 0) throw problem("EMPTY_RANGE", { argument: "coefficients" });

  const coefficients = outcomes.map(() => new Float64Array(terms.length));
  for (const e of entries) coefficients[e.outcome][e.term] = e.value;
  if (outcomes.length === 1) {
    return { kind: "binary", form: "reference", classes: [outcomes[0] || "positive"], terms, coefficients };
  }
  if (symmetric) return { kind: "multiclass", form: "symmetric", classes: outcomes, terms, coefficients };
  // "class (reference: )" names no class: the reference is then called "reference".
  const named = referenceMatch ? referenceMatch[1].replace(/^"|"$/g, "").trim() : "";
  const reference = named !== "" ? named : "reference";
  // The reference class has no equation: a table that gives it one contradicts its own header.
  const twin = outcomes.indexOf(reference);
  if (twin >= 0) {
    const row = entries.find((e) => e.outcome === twin)?.row ?? 2;
    throw problem("COEFFICIENT_REFERENCE_IS_EQUATION", { reference, row });
  }
  return { kind: "multiclass", form: "reference", classes: [reference, ...outcomes], terms, coefficients };
}

/** The text inside double quotes ("a" -> a), or null when `text` is not quoted. */
function unquote(text: string): string | null {
  return text.length >= 2 && text.startsWith('"') && text.endsWith('"') ? text.slice(1, -1) : null;
}

/** Value of `term` for every row of `columns` (NaN where it cannot be formed). */
function termValues(term: string, byName: Map<string, TableColumn>, rows: number, names: string[], column = false): Float64Array {
  const out = new Float64Array(rows);
  if (term === INTERCEPT_TERM && !column) return out.fill(1);
  const direct = byName.get(term);
  if (direct) {
    if (direct.kind === "text") {
      // Text where the term needs numbers: the first offending cell is reported.
      const i = direct.values.findIndex((v, k) => !direct.missing[k] && v !== "");
      throw problem("NOT_A_NUMBER", {
        argument: "rows",
        row: i + 2,
        column: names.indexOf(term) + 1,
        value: direct.values[i],
      });
    }
    for (let i = 0; i < rows; i++) out[i] = direct.missing[i] ? NaN : direct.values[i];
    return out;
  }
  // A quoted term ("name") is the column of that name (ODDS.FIT quotes a column whose name another
  // term already has, such as a column called "(intercept)").
  const quoted = unquote(term);
  if (quoted !== null && byName.has(quoted)) return termValues(quoted, byName, rows, names, true);
  const eq = term.indexOf("=");
  const source = eq > 0 ? byName.get(term.slice(0, eq)) : undefined;
  if (!source) throw problem("COLUMN_NOT_FOUND", { name: term, columns: listNames(names, 12) });
  // column="level": the quotes are not part of the level (see indicatorTerm in data/design.ts).
  const level = unquote(term.slice(eq + 1)) ?? term.slice(eq + 1);
  for (let i = 0; i < rows; i++) {
    if (source.missing[i]) out[i] = NaN;
    else out[i] = String(source.values[i]) === level ? 1 : 0;
  }
  return out;
}

/**
 * Probabilities for `rows` from a model read by {@link readCoefficientTable}: one array per output
 * class (binary: the positive class only), NaN for rows that cannot be scored.
 */
export function scoreSheetModel(model: SheetModel, rows: CellValue[][]): { header: string[]; probabilities: Float64Array[] } {
  const table = readTable(rows, { argument: "rows", headers: "yes" });
  const byName = new Map<string, TableColumn>();
  table.columns.forEach((c) => byName.set(c.name, c));
  const n = table.rows;
  const x = model.terms.map((t) => termValues(t, byName, n, table.names));
  // eta[k][i]: linear predictor of equation k for row i, and the same scaled by 2^-SCALE_BITS where
  // the direct sum overflowed (terms near 1e308).
  const eta = model.coefficients.map((beta) => linearPredictor(beta, x, n));
  const scaled = model.coefficients.map((beta, k) => scaledWhereOverflowed(beta, x, eta[k]));
  const overflowed = (i: number) => eta.some((e) => e[i] === Infinity || e[i] === -Infinity || (Number.isNaN(e[i]) && rowComplete(model.coefficients, x, i)));
  if (model.kind === "binary") {
    const p = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      if (Number.isFinite(eta[0][i])) p[i] = sigmoid(eta[0][i]);
      else if (overflowed(i)) p[i] = hugeSigmoid(scaled[0][i]);
      else p[i] = NaN;
    }
    return { header: [`P(${model.classes[0]})`], probabilities: [p] };
  }
  const k = model.classes.length;
  const probabilities = model.classes.map(() => new Float64Array(n));
  const scratch = new Float64Array(k);
  // Reference form: the reference class (first) has linear predictor 0; symmetric: one per class.
  const shift = model.form === "symmetric" ? 0 : 1;
  for (let i = 0; i < n; i++) {
    const big = overflowed(i);
    if (shift === 1) scratch[0] = 0;
    for (let c = shift; c < k; c++) scratch[c] = big ? scaled[c - shift][i] : eta[c - shift][i];
    if (!scratch.every(Number.isFinite)) {
      for (let c = 0; c < k; c++) probabilities[c][i] = NaN;
      continue;
    }
    softmaxInto(scratch, big, probabilities, i);
  }
  return { header: model.classes.map((c) => `P(${c})`), probabilities };
}

/** Where a linear predictor overflows, each factor is scaled by 2^-530 (the sum by 2^-1060). */
const HALF_SCALE = 2 ** -530;
const HALF_UNSCALE = 2 ** 530;

function linearPredictor(beta: Float64Array, x: Float64Array[], n: number): Float64Array {
  const e = new Float64Array(n);
  for (let j = 0; j < beta.length; j++) {
    if (beta[j] === 0) continue; // also keeps a blank cell in an unused term from blocking the row
    const col = x[j];
    for (let i = 0; i < n; i++) e[i] += beta[j] * col[i];
  }
  return e;
}

/** True when every term of row i that has a coefficient holds a number (a NaN sum is then overflow). */
function rowComplete(coefficients: Float64Array[], x: Float64Array[], i: number): boolean {
  return coefficients.every((beta) => beta.every((b, j) => b === 0 || !Number.isNaN(x[j][i])));
}

/**
 * The linear predictor times 2^-1060 for rows whose direct sum is not finite: each coefficient and
 * each value is scaled by 2^-530 before multiplying, so no product or sum of up to 2^40 terms can
 * overflow, and a lost (underflowed) product is below 2^-14 in the unscaled sum.
 */
function scaledWhereOverflowed(beta: Float64Array, x: Float64Array[], eta: Float64Array): Float64Array {
  const out = new Float64Array(eta.length);
  for (let i = 0; i < eta.length; i++) {
    if (Number.isFinite(eta[i])) {
      out[i] = eta[i] * HALF_SCALE * HALF_SCALE;
      continue;
    }
    let s = 0;
    for (let j = 0; j < beta.length; j++) if (beta[j] !== 0) s += beta[j] * HALF_SCALE * (x[j][i] * HALF_SCALE);
    out[i] = s;
  }
  return out;
}

/** sigmoid(s x 2^1060) for a scaled linear predictor s: 1 or 0 unless s is 0 (then 1/2). */
function hugeSigmoid(s: number): number {
  return s > 0 ? 1 : s < 0 ? 0 : 0.5;
}

/**
 * Softmax of scores[c] (times 2^1060 when `scaled`) into probabilities[c][i], as exp(x_c - max) / sum: the shift by the
 * row maximum keeps every exponent <= 0, and dividing by the sum (not subtracting a log-sum-exp
 * from linear predictors of 1e15 or more, which rounds) makes the probabilities add up to 1.
 */
function softmaxInto(scores: Float64Array, scaled: boolean, probabilities: Float64Array[], i: number): void {
  let max = -Infinity;
  for (const v of scores) if (v > max) max = v;
  let sum = 0;
  for (let c = 0; c < scores.length; c++) {
    // Unscaled in two steps (2^1060 itself is not a double); -Infinity for a far smaller score: exp gives 0.
    const d = scaled ? (scores[c] - max) * HALF_UNSCALE * HALF_UNSCALE : scores[c] - max;
    const e = Math.exp(d);
    probabilities[c][i] = e;
    sum += e;
  }
  for (let c = 0; c < scores.length; c++) probabilities[c][i] /= sum;
}

/**
 * The ODDS.SCORE adapter.
 * @param coefficients - coefficient table with a header row (e.g. the output of ODDS.FIT)
 * @param rows - rows to score, with a header row naming the terms' columns
 * @returns header row of class probabilities, then one row per data row ("" where a row cannot be scored)
 */
export function scoreCell(coefficients: CellValue[][] | null, rows: CellValue[][] | null): CellValue[][] {
  if (coefficients === null) throw problem("EMPTY_RANGE", { argument: "coefficients" });
  if (rows === null) throw problem("EMPTY_RANGE", { argument: "rows" });
  checkPayload(
    [
      { argument: "coefficients", cells: coefficients },
      { argument: "rows", cells: rows },
    ],
    Array.isArray(rows) ? rows.length * 4 : 1,
  );
  const model = readCoefficientTable(coefficients);
  // Output: a header and one row per data row, one column per class (binary: one).
  checkOutputSize(Array.isArray(rows) ? rows.length : 1, model.kind === "binary" ? 1 : model.classes.length, {
    fn: "ODDS.SCORE",
    what: "one probability column per class for each row",
    hint: "Score fewer rows per formula (split the rows over several formulas).",
  });
  const { header, probabilities } = scoreSheetModel(model, rows);
  const n = probabilities[0].length;
  const out: unknown[][] = [header];
  for (let i = 0; i < n; i++) out.push(probabilities.map((p) => p[i]));
  return spill(out);
}
