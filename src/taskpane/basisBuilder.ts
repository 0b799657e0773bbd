/**
 * The basis builder's logic, apart from any screen: read a block through the WorkbookPort, summarise
 * its columns, turn per-column choices into a recipe (docs/basis-recipes.md), preview the generated
 * columns, and plan and carry out the write (beside the data or on a new sheet, as a live
 * =ODDS.BASIS formula or as values) with an undo that removes the generated columns.
 *
 * Policies (one line each):
 * - The block must have a header row (recipes name columns by header): "auto" detection, or forced.
 * - Beside the data = starting two columns right of the block (one empty column between), on the
 *   block's header row, so each generated row sits on its data row.
 * - On a new sheet = column A of a new sheet, on the same row as the block's header, for the same reason.
 * - Never overwrite: the whole target rectangle must be empty (port.isEmpty) unless the caller
 *   confirms; a formula's spill area counts as the target.
 * - Values mode writes what ODDS.BASIS would return (src/shared/basisColumns.ts computes both).
 * - Warning rule: fewer than 10 data rows per generated column (MIN_ROWS_PER_COLUMN).
 * - Undo = clear the written rectangle; a sheet the builder added is named so the user can delete it.
 * - Following the table (followTableRows): when the table's rows change, a generated formula is
 *   rewritten over the table's new rows with the same recipe and no training range, so its knots,
 *   centres, levels and scales are refitted on all rows (the "live" behaviour); cells the longer
 *   result would newly cover must be empty, else nothing is written and a note says which cells.
 *   Values are never rewritten: a note says they were not refreshed.
 */
import { applyRecipe, fitRecipe, parseRecipe, TRANSFORM_NAMES, readTable, sourcesOf, type RecipeState, type BasisColumn, type Table, type CellValue } from "../engine";
import { codeOf, formatMessage, listNames, OddsmithError, problem, type MessageCode } from "../shared/messages";
import { buildBasisColumns, tableToBasisColumns } from "../shared/basisColumns";
import { absoluteReference, cellAddress, parseAddress, rectAddress, type CellRect } from "./a1";
import type { DerivedColumns } from "./plotGeometry";
import type { SheetBlock, WorkbookPort, WriteRequest } from "./port";
import { isBlankRow } from "./tableExtent";

// ---- reading and summarising --------------------------------------------------------------------

/** What the builder shows about one column. */
export interface ColumnSummary {
  index: number;
  name: string;
  kind: "number" | "text" | "boolean" | "empty";
  /** Non-blank cells. */
  count: number;
  blanks: number;
  /** Number columns: smallest, largest and mean value (null otherwise). */
  min: number | null;
  max: number | null;
  mean: number | null;
  /** Distinct non-blank values. */
  distinct: number;
  /** Text columns: levels by decreasing frequency (first 20), with counts. */
  levels: { level: string; count: number }[];
  /** A sensible first choice: raw for numbers, levels for text, nothing for an empty column. */
  suggested: TransformChoice[];
}

/** The block the builder works on. */
export interface BasisSource {
  block: SheetBlock;
  rect: CellRect;
  table: Table;
  columns: BasisColumn[];
  summaries: ColumnSummary[];
}

/** Levels listed per text column in a summary. */
export const LISTED_LEVELS = 20;

/**
 * Summarise one parsed column.
 * @example summarizeColumn(table, 0).mean // mean of the first column's numbers
 */
export function summarizeColumn(table: Table, index: number): ColumnSummary {
  const col = table.columns[index];
  let count = 0;
  let min = Infinity;
  let max = -Infinity;
  let sum = 0;
  const freq = new Map<string, number>();
  for (let i = 0; i < table.rows; i++) {
    if (col.missing[i]) continue;
    count++;
    const v = col.values[i];
    if (typeof v === "number") {
      if (v < min) min = v;
      if (v > max) max = v;
      sum += v;
    }
    const key = String(v);
    freq.set(key, (freq.get(key) ?? 0) + 1);
  }
  const numeric = col.kind !== "text" && count > 0;
  const levels =
    col.kind === "text"
      ? [...freq.entries()].sort((a, b) => b[1] - a[1]).slice(0, LISTED_LEVELS).map(([level, c]) => ({ level, count: c }))
      : [];
  const suggested: TransformChoice[] = col.kind === "empty" ? [] : [{ transform: col.kind === "text" ? "levels" : "raw" }];
  return {
    index,
    name: table.names[index],
    kind: col.kind,
    count,
    blanks: table.rows - count,
    min: numeric ? min : null,
    max: numeric ? max : null,
    mean: numeric ? sum / count : null,
    distinct: freq.size,
    levels,
    suggested,
  };
}

/**
 * Read a block (the selection, or `sheet`/`address` when given) and summarise its columns.
 * @throws OddsmithError from the range parser, or BASIS_NEEDS_HEADER when no header row is found
 *   and `headers` is "auto".
 */
export async function readBasisSource(
  port: WorkbookPort,
  where?: { sheet: string; address: string },
  headers: "auto" | "yes" = "auto",
): Promise<BasisSource> {
  const block = where ? await port.readBlock(where.sheet, where.address) : await port.selectedBlock();
  const rect = parseAddress(block.address);
  if (!rect) throw problem("INTERNAL", { doing: `reading the block at "${block.address}"` });
  const table = readTable(block.values, { argument: "data", headers });
  if (!table.header) throw problem("BASIS_NEEDS_HEADER", { address: `${block.sheet}!${block.address}` });
  return {
    block,
    rect,
    table,
    columns: tableToBasisColumns(table),
    summaries: table.columns.map((_, j) => summarizeColumn(table, j)),
  };
}

// ---- choices -> recipe text ---------------------------------------------------------------------

/** One transform chosen for a column, with its settings (the recipe's setting names). */
export interface TransformChoice {
  transform: (typeof TRANSFORM_NAMES)[number];
  settings?: Record<string, string | number | number[]>;
}

/** The builder's state: transforms per column, and joint transforms / products over several columns. */
export interface BuilderChoices {
  columns: { name: string; transforms: TransformChoice[] }[];
  /** Joint transforms, e.g. { columns: ["x", "y"], transform: { transform: "rbf", settings: { k: 5 } } }. */
  joint?: { columns: string[]; transform: TransformChoice }[];
  /** Products of two or more columns ("age*income"). */
  products?: string[][];
}

/** Characters that force a header to be quoted in a recipe. */
const NEEDS_QUOTES = /[,*:;()[\]="'+\r\n]/;

/** A header as written in a recipe: bare when safe, else in double quotes (inner quotes doubled). */
export function recipeColumn(name: string): string {
  return NEEDS_QUOTES.test(name) || name !== name.trim() || name === "" ? `"${name.replace(/"/g, '""')}"` : name;
}

function settingValue(v: string | number | number[]): string {
  if (Array.isArray(v)) return `[${v.join(", ")}]`;
  if (typeof v === "number") return String(v);
  return NEEDS_QUOTES.test(v) || v !== v.trim() ? `"${v.replace(/"/g, '""')}"` : v;
}

/** One call as text: "ns(df=4)", "levels(ref=North, pool=5)", "z". */
export function callText(choice: TransformChoice): string {
  const entries = Object.entries(choice.settings ?? {}).filter(([, v]) => v !== "" && v !== undefined && v !== null);
  return entries.length === 0 ? choice.transform : `${choice.transform}(${entries.map(([k, v]) => `${k}=${settingValue(v)}`).join(", ")})`;
}

/**
 * Write the recipe for the builder's choices: one item per column with transforms, then joint
 * transforms, then products, separated by "; ". Columns without transforms are left out.
 * @example recipeFromChoices({ columns: [{ name: "age", transforms: [{ transform: "ns", settings: { df: 4 } }] }] }) // "age: ns(df=4)"
 */
export function recipeFromChoices(choices: BuilderChoices): string {
  const items: string[] = [];
  for (const c of choices.columns) {
    if (c.transforms.length === 0) continue;
    items.push(`${recipeColumn(c.name)}: ${c.transforms.map(callText).join(" + ")}`);
  }
  for (const j of choices.joint ?? []) items.push(`${j.columns.map(recipeColumn).join(", ")}: ${callText(j.transform)}`);
  for (const p of choices.products ?? []) items.push(p.map(recipeColumn).join("*"));
  return items.join("; ");
}

/** Default choices: each column's suggested transform. */
export function defaultChoices(source: BasisSource): BuilderChoices {
  return { columns: source.summaries.map((s) => ({ name: s.name, transforms: [...s.suggested] })) };
}

// ---- preview ------------------------------------------------------------------------------------

/** Fewer data rows than this per generated column triggers the many-columns warning. */
export const MIN_ROWS_PER_COLUMN = 10;

/** A message for the pane, from the catalogue. */
export interface BuilderMessage {
  code: MessageCode;
  message: string;
}

/** The warning when generated columns are many for the rows (rule: MIN_ROWS_PER_COLUMN), or null. */
export function manyColumnsWarning(columns: number, rows: number): BuilderMessage | null {
  if (columns === 0 || rows / columns >= MIN_ROWS_PER_COLUMN) return null;
  const params = { columns, rows, ratio: (rows / columns).toFixed(1), rule: MIN_ROWS_PER_COLUMN };
  return { code: "BASIS_MANY_COLUMNS", message: formatMessage("BASIS_MANY_COLUMNS", params) };
}

/** What the builder shows while the user edits. */
export interface BasisPreview {
  recipe: string;
  /** Generated column names (empty when the recipe has an error). */
  names: string[];
  /** The first rows of generated values; "" where a row has a problem. */
  rows: (number | string)[][];
  /** Error that stops the recipe (syntax, unknown column, ...), or null. */
  error: BuilderMessage | null;
  /** Warnings: many columns, fit notes (merged bins/centres), rows with problems. */
  warnings: BuilderMessage[];
  /** Data rows with a problem (blank cell, outside a domain), and the first one's reason. */
  problemRows: number;
  firstProblem: string | null;
  state: RecipeState | null;
}

/** Rows shown in a preview by default. */
export const PREVIEW_ROWS = 5;

function asMessage(e: unknown): BuilderMessage {
  if (e instanceof OddsmithError) return { code: codeOf(e), message: e.message };
  return { code: "INTERNAL", message: formatMessage("INTERNAL", { doing: "previewing basis columns" }) };
}

/**
 * Live preview of a recipe on the source: names, first rows, warnings. Never throws: a recipe being
 * typed is often incomplete, so its error is returned for display.
 */
export function previewBasis(source: BasisSource, recipe: string, rows = PREVIEW_ROWS): BasisPreview {
  const empty: BasisPreview = { recipe, names: [], rows: [], error: null, warnings: [], problemRows: 0, firstProblem: null, state: null };
  try {
    const state = fitRecipe(parseRecipe(recipe), source.columns, "data");
    const block = applyRecipe(state, source.columns, "data");
    const shown: (number | string)[][] = [];
    for (let i = 0; i < Math.min(rows, source.table.rows); i++) {
      shown.push(block.columns.map((c) => (Number.isFinite(c[i]) ? c[i] : "")));
    }
    const warnings: BuilderMessage[] = [];
    const many = manyColumnsWarning(block.names.length, source.table.rows);
    if (many) warnings.push(many);
    for (const n of state.fitNotes) warnings.push({ code: n.code, message: n.message });
    const problemRows = new Set(block.notes.map((n) => n.row)).size;
    return { ...empty, names: block.names, rows: shown, warnings, problemRows, firstProblem: block.notes[0]?.message ?? null, state };
  } catch (e) {
    return { ...empty, error: asMessage(e) };
  }
}

// ---- planning and writing -----------------------------------------------------------------------

/** Where and how to write. */
export interface WriteOptions {
  place: "beside" | "newSheet";
  mode: "formula" | "values";
  /** Name of the new sheet (a suffix is added by the workbook when taken) ["Basis columns"]. */
  sheetName?: string;
}

/** A planned write, before anything changes in the workbook. */
export interface WritePlan {
  /** Target sheet; for a new sheet, the requested name (the final name comes from the workbook). */
  sheet: string;
  newSheet: boolean;
  /** Rectangle the generated columns will occupy (header row included). */
  rect: CellRect;
  address: string;
  mode: "formula" | "values";
  /** The formula (formula mode) or the values (values mode) to write at the top-left cell. */
  values: CellValue[][];
  formula: string | null;
  names: string[];
  warnings: BuilderMessage[];
  /** The recipe the plan was made for. */
  recipe: string;
}

/** The undo of a write: clear what was written. */
export interface UndoPlan {
  label: "remove generated columns";
  sheet: string;
  address: string;
  /** Set when the builder added the sheet (the port cannot delete sheets: the user may). */
  addedSheet: string | null;
}

/** Default name of a new sheet. */
export const BASIS_SHEET = "Basis columns";

/** Longest text literal a spreadsheet formula accepts. */
export const FORMULA_TEXT_LIMIT = 255;

/** A text literal for a formula, split into "..."&"..." pieces of at most 255 characters. */
export function formulaString(s: string): string {
  const pieces: string[] = [];
  for (let i = 0; i < s.length || pieces.length === 0; i += FORMULA_TEXT_LIMIT) pieces.push(s.slice(i, i + FORMULA_TEXT_LIMIT));
  return pieces.map((p) => `"${p.replace(/"/g, '""')}"`).join("&");
}

/** The source's header and data rows as a sheet rectangle (trailing blank rows left out). */
export function sourceRect(source: BasisSource): CellRect {
  const bottom = source.rect.top + source.table.firstRow - 1 + source.table.rows - 1;
  return { ...source.rect, bottom };
}

/** Absolute reference to the source's header and data rows (trailing blank rows left out). */
export function sourceReference(source: BasisSource): string {
  return absoluteReference(source.block.sheet, sourceRect(source));
}

/** The =ODDS.BASIS formula over a sheet range (no training range: transforms fit on that range). */
function formulaOver(sheet: string, rect: CellRect, recipe: string): string {
  return `=ODDS.BASIS(${absoluteReference(sheet, rect)}, ${formulaString(recipe)})`;
}

/** The =ODDS.BASIS formula for a source and recipe. */
export function basisFormula(source: BasisSource, recipe: string): string {
  return formulaOver(source.block.sheet, sourceRect(source), recipe);
}

/**
 * Plan a write: target rectangle, formula or values, warnings. Changes nothing in the workbook.
 * @throws OddsmithError when the recipe cannot be fitted (the same error the preview shows).
 */
export function planWrite(source: BasisSource, recipe: string, options: WriteOptions): WritePlan {
  // Fitting here (not through the preview) lets a recipe error reach the caller as the OddsmithError it is.
  const state = fitRecipe(parseRecipe(recipe), source.columns, "data");
  const warnings: BuilderMessage[] = [];
  const many = manyColumnsWarning(state.names.length, source.table.rows);
  if (many) warnings.push(many);
  for (const n of state.fitNotes) warnings.push({ code: n.code, message: n.message });
  const width = state.names.length;
  const height = source.table.rows + 1;
  const top = source.rect.top + source.table.firstRow - 2; // the header row
  const left = options.place === "beside" ? source.rect.right + 2 : 1;
  const rect: CellRect = { top, left, bottom: top + height - 1, right: left + width - 1 };
  const formula = options.mode === "formula" ? basisFormula(source, recipe) : null;
  const values: CellValue[][] =
    formula !== null ? [[formula]] : buildBasisColumns(blockRows(source), recipe, null);
  return {
    sheet: options.place === "beside" ? source.block.sheet : options.sheetName ?? BASIS_SHEET,
    newSheet: options.place === "newSheet",
    rect,
    address: rectAddress(rect),
    mode: options.mode,
    values,
    formula,
    names: state.names,
    warnings,
    recipe,
  };
}

/** The block's header and data rows as values (what the formula's range holds). */
function blockRows(source: BasisSource): CellValue[][] {
  const start = source.table.firstRow - 2;
  return source.block.values.slice(start, start + source.table.rows + 1);
}

/** Result of {@link executeWrite}. */
export type WriteOutcome =
  | { status: "written"; sheet: string; address: string; undo: UndoPlan }
  | { status: "blocked"; sheet: string; address: string; message: BuilderMessage };

/**
 * Carry out a plan. Refuses (status "blocked", nothing written) when the target is not empty and
 * `confirmOverwrite` is false. Adds the sheet first in new-sheet mode.
 */
export async function executeWrite(port: WorkbookPort, plan: WritePlan, confirmOverwrite = false): Promise<WriteOutcome> {
  let sheet = plan.sheet;
  let addedSheet: string | null = null;
  if (plan.newSheet) {
    sheet = await port.addSheet(plan.sheet);
    addedSheet = sheet;
  } else if (!confirmOverwrite && !(await port.isEmpty(sheet, plan.address))) {
    const params = { address: plan.address, sheet };
    return { status: "blocked", sheet, address: plan.address, message: { code: "BASIS_TARGET_NOT_EMPTY", message: formatMessage("BASIS_TARGET_NOT_EMPTY", params) } };
  }
  const request: WriteRequest = {
    sheet,
    at: cellAddress(plan.rect.top, plan.rect.left),
    values: plan.values,
    formulas: plan.mode === "formula",
  };
  await port.write(request);
  return { status: "written", sheet, address: plan.address, undo: { label: "remove generated columns", sheet, address: plan.address, addedSheet } };
}

/** Undo a write: clear the generated columns (values, formulas and formats). */
export async function undoWrite(port: WorkbookPort, undo: UndoPlan): Promise<void> {
  await port.clear(undo.sheet, undo.address);
}

// ---- following the table's rows -----------------------------------------------------------------

/**
 * Generated columns the pane wrote, remembered so they can follow the table when its rows change.
 * `note` holds what the pane last had to say about them (refreshed, not refreshed and why).
 */
export interface GeneratedBasis {
  /** Sheet and range (header row and data rows of the source columns) the columns are built from. */
  sourceSheet: string;
  source: CellRect;
  /** Sheet and rectangle of the generated columns, header row included. */
  sheet: string;
  rect: CellRect;
  recipe: string;
  mode: "formula" | "values";
  /** Generated column names (the block's header row). */
  names: string[];
  /** Headers of the source columns the recipe reads. */
  uses: string[];
  note: BuilderMessage | null;
}

/** The record of a write that went through, for {@link followTableRows}. */
export function generatedBasis(source: BasisSource, plan: WritePlan, written: { sheet: string; address: string }): GeneratedBasis {
  const rect = parseAddress(written.address);
  if (!rect) throw problem("INTERNAL", { doing: `remembering the basis columns at "${written.address}"` });
  return {
    sourceSheet: source.block.sheet,
    source: sourceRect(source),
    sheet: written.sheet,
    rect,
    recipe: plan.recipe,
    mode: plan.mode,
    names: plan.names,
    uses: recipeSources(plan.recipe, source.columns),
    note: null,
  };
}

/** Headers of the columns a recipe reads, in the order its steps name them. */
function recipeSources(recipe: string, columns: BasisColumn[]): string[] {
  const state = fitRecipe(parseRecipe(recipe), columns, "data");
  return [...new Set(state.states.flatMap((s) => sourcesOf(s)))];
}

/**
 * How generated columns are recomputed for the boundary plot: fitted on `training` (header row and
 * rows of the source columns, as the formula reads them), applied to the rows asked for.
 */
export function basisDerived(recipe: string, training: CellValue[][]): DerivedColumns {
  const columns = tableToBasisColumns(readTable(training, { argument: "data", headers: "yes" }));
  return {
    outputs: fitRecipe(parseRecipe(recipe), columns, "data").names,
    sources: recipeSources(recipe, columns),
    compute: (rows) => buildBasisColumns(rows, recipe, training),
  };
}

/** Result of {@link followTableRows}; `basis` is the record as it stands afterwards. */
export type BasisFollow =
  | { status: "unchanged"; basis: GeneratedBasis }
  | { status: "rewritten"; basis: GeneratedBasis; previous: GeneratedBasis; formula: string; training: CellValue[][] }
  | { status: "values" | "blocked" | "lost" | "failed"; basis: GeneratedBasis };

function note(code: MessageCode, params: Record<string, unknown>): BuilderMessage {
  return { code, message: formatMessage(code, params) };
}

/** Cells of `next` outside `old` (below it and right of it), as at most two rectangles. */
function newlyCovered(old: CellRect, next: CellRect): CellRect[] {
  const out: CellRect[] = [];
  if (next.bottom > old.bottom) out.push({ top: old.bottom + 1, bottom: next.bottom, left: next.left, right: next.right });
  if (next.right > old.right) out.push({ top: next.top, bottom: Math.min(old.bottom, next.bottom), left: old.right + 1, right: next.right });
  return out;
}

/** What changed, in words, for the values note. */
function changeText(oldBottom: number, newBottom: number): string {
  const d = newBottom - oldBottom;
  if (d > 0) return `${d} row${d === 1 ? " was" : "s were"} added to the table (rows ${oldBottom + 1} to ${newBottom})`;
  if (d < 0) return `${-d} row${d === -1 ? " was" : "s were"} removed from the bottom of the table`;
  return "cells of their source columns were edited";
}

/**
 * The source range's rows as the table now holds them: header row down to the last row where a source
 * column is not blank (trailing blank rows are left out, as ODDS.BASIS leaves them out of its result,
 * so the formula never reaches over rows it would spill blanks for). Taken from `table` (a fresh read
 * of the table) when it holds the source columns, else read through the port.
 */
async function grownSource(port: WorkbookPort, basis: GeneratedBasis, table: SheetBlock): Promise<{ rect: CellRect; values: CellValue[][] }> {
  const tableRect = parseAddress(table.address);
  const inside =
    tableRect !== null &&
    table.sheet === basis.sourceSheet &&
    tableRect.top <= basis.source.top &&
    tableRect.left <= basis.source.left &&
    tableRect.right >= basis.source.right;
  let values: CellValue[][];
  if (inside) {
    values = table.values.slice(basis.source.top - tableRect.top).map((row) => row.slice(basis.source.left - tableRect.left, basis.source.right - tableRect.left + 1));
  } else {
    const bottom = Math.max(basis.source.bottom, tableRect?.bottom ?? basis.source.bottom);
    values = (await port.readBlock(basis.sourceSheet, rectAddress({ ...basis.source, bottom }))).values;
  }
  let last = values.length - 1;
  while (last > 0 && isBlankRow(values[last])) last--;
  values = values.slice(0, Math.max(last + 1, 1));
  return { rect: { ...basis.source, bottom: basis.source.top + values.length - 1 }, values };
}

/**
 * Let generated columns follow the table after it was re-read (`table`: the fresh read, which holds
 * the source columns in the usual case of columns written beside their table).
 *
 * The source range's new extent runs from its header row to the last row where a source column is
 * not blank. When it is unchanged: status "unchanged". Otherwise, formula mode: rewrite the formula
 * over the new extent with the same recipe. The formula has no training range, so the transforms are
 * refitted on all rows, new ones included (docs/basis-recipes.md, "When the table grows"). Before
 * writing: the block's header row must still show the generated names (else the user changed or
 * removed it: "lost"); the recipe must compute on the new rows ("failed", with the reason); and every
 * cell the result newly covers must be empty ("blocked", naming the cells). Nothing is written in
 * those cases. Values mode: nothing is rewritten; status "values" with a note that says so.
 */
export async function followTableRows(port: WorkbookPort, basis: GeneratedBasis, table: SheetBlock): Promise<BasisFollow> {
  const grown = await grownSource(port, basis, table);
  if (grown.rect.bottom === basis.source.bottom) return { status: "unchanged", basis };
  const anchor = cellAddress(basis.rect.top, basis.rect.left);
  const where = { sheet: basis.sheet, anchor, address: rectAddress(basis.rect) };
  if (basis.mode === "values") {
    const n = note("BASIS_VALUES_NOT_REFRESHED", { ...where, change: changeText(basis.source.bottom, grown.rect.bottom) });
    return { status: "values", basis: { ...basis, note: n } };
  }
  const head = await port.readBlock(basis.sheet, rectAddress({ ...basis.rect, bottom: basis.rect.top }));
  const shown = (head.values[0] ?? []).map((v) => (v === null || v === undefined ? "" : String(v)));
  if (shown.length !== basis.names.length || shown.some((v, j) => v !== basis.names[j])) {
    return { status: "lost", basis: { ...basis, note: note("BASIS_FOLLOW_LOST", { ...where, names: listNames(basis.names, 3) }) } };
  }
  let result: (number | string)[][];
  try {
    // What the rewritten formula will return: its shape decides the cells it covers.
    result = buildBasisColumns(grown.values, basis.recipe, null);
  } catch (e) {
    const reason = e instanceof OddsmithError ? e.message : formatMessage("INTERNAL", { doing: "computing the basis columns" });
    return { status: "failed", basis: { ...basis, note: note("BASIS_FOLLOW_FAILED", { ...where, reason }) } };
  }
  const rect: CellRect = {
    top: basis.rect.top,
    left: basis.rect.left,
    bottom: basis.rect.top + result.length - 1,
    right: basis.rect.left + (result[0]?.length ?? 1) - 1,
  };
  for (const r of newlyCovered(basis.rect, rect)) {
    if (!(await port.isEmpty(basis.sheet, rectAddress(r)))) {
      return { status: "blocked", basis: { ...basis, note: note("BASIS_FOLLOW_BLOCKED", { ...where, address: rectAddress(r) }) } };
    }
  }
  const formula = formulaOver(basis.sourceSheet, grown.rect, basis.recipe);
  await port.write({ sheet: basis.sheet, at: anchor, values: [[formula]], formulas: true });
  const rows = result.length - 1;
  const n = note("BASIS_FOLLOWED_ROWS", { ...where, rows, source: absoluteReference(basis.sourceSheet, grown.rect) });
  const next: GeneratedBasis = { ...basis, source: grown.rect, rect, names: result[0].map(String), note: n };
  return { status: "rewritten", basis: next, previous: basis, formula, training: grown.values };
}

/**
 * True when a cell of a column the recipe reads (`uses`, found by header) differs between two reads
 * of the same table (same top-left corner), within the rows the generated columns were built from.
 */
export function sourceCellsChanged(basis: GeneratedBasis, before: SheetBlock, after: SheetBlock): boolean {
  if (before.sheet !== basis.sourceSheet || before.top !== after.top || before.left !== after.left) return false;
  const header = before.values[basis.source.top - before.top] ?? [];
  const rows = Math.min(basis.source.bottom, before.top + before.values.length - 1, after.top + after.values.length - 1);
  for (let c = basis.source.left; c <= basis.source.right; c++) {
    const name = header[c - before.left];
    if (name === null || name === undefined || !basis.uses.includes(String(name).trim())) continue;
    for (let r = basis.source.top; r <= rows; r++) {
      const a = before.values[r - before.top]?.[c - before.left] ?? null;
      const b = after.values[r - after.top]?.[c - after.left] ?? null;
      if (a !== b) return true;
    }
  }
  return false;
}

/** The values note for generated values whose source cells were edited in place. */
export function staleValuesNote(basis: GeneratedBasis): BuilderMessage {
  return note("BASIS_VALUES_NOT_REFRESHED", { sheet: basis.sheet, address: rectAddress(basis.rect), change: changeText(0, 0) });
}
