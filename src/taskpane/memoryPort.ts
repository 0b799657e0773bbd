/**
 * An in-memory workbook and a `WorkbookPort` over it. The preview workbench shows this workbook in
 * its plain sheet view, and the browser and unit tests drive the real task pane against it.
 *
 * The workbook stores what was entered in each cell (a value, or a formula text starting with "=")
 * and computes formula cells with an evaluator supplied by its owner (the preview plugs in the
 * cell-function registry). Results that are 2-D arrays spill right and down from the formula cell;
 * a spill that would cover entered cells or another spill gives "#SPILL!" instead.
 *
 * Recalculation is lazy and ordered by need: before a formula reads a range, every not-yet-computed
 * formula on that sheet whose cell lies above and to the left of the range's far corner is computed
 * first (only such formulas can spill into the range). A formula that is reached again while being
 * computed is a cycle and shows "#CYCLE!".
 */
import type { CellValue } from "../engine";
import { type CellRect, MAX_COLUMNS, MAX_ROWS, parseAddress, rectAddress } from "./a1";
import type { SheetBlock, WorkbookPort, WriteRequest } from "./port";
import { grownRowCount } from "./tableExtent";

/** What a formula evaluator may read: ranges of any sheet (sheet null = the formula's own sheet). */
export interface EvaluationContext {
  sheet: string;
  row: number;
  column: number;
  /** Values of a range: computed values for formula cells, entered values otherwise; blanks null. */
  readRange(sheet: string | null, address: string): CellValue[][];
}

/** Result of evaluating one formula: the values (1x1 for a scalar), or a cell error with its message. */
export type FormulaOutcome = { values: CellValue[][] } | { error: string; message: string };

/** Computes one formula; `formula` is the entered text including the leading "=". */
export type FormulaEvaluator = (formula: string, context: EvaluationContext) => FormulaOutcome;

/** Something happened in the workbook. */
export type WorkbookEvent =
  | { kind: "input"; sheet: string; rect: CellRect }
  | { kind: "recalc" }
  | { kind: "format"; sheet: string }
  | { kind: "selection"; sheet: string; rect: CellRect }
  | { kind: "sheets" };

interface Sheet {
  name: string;
  /** Entered cells by key (row * KEY_STRIDE + column); formulas are strings starting with "=". */
  inputs: Map<number, CellValue>;
  /** Computed values of formula cells and their spills. */
  computed: Map<number, CellValue>;
  /** Messages of cells that show an error. */
  messages: Map<number, string>;
  /** Keys of highlighted cells. */
  marked: Set<number>;
  /** Keys of entered text that starts with "=" but is text, not a formula. */
  literal: Set<number>;
}

const KEY_STRIDE = MAX_COLUMNS + 1;
const key = (row: number, column: number) => row * KEY_STRIDE + column;
const rowOf = (k: number) => Math.floor(k / KEY_STRIDE);
const colOf = (k: number) => k % KEY_STRIDE;

const isFormula = (v: CellValue): v is string => typeof v === "string" && v.startsWith("=");

/**
 * Turn typed text into a cell value the way a person expects: "" is blank, "=..." a formula,
 * "12.5" / "-3" / "1e3" numbers, TRUE/FALSE booleans (any case), anything else text.
 */
export function parseTypedInput(text: string): CellValue {
  if (text === "") return null;
  if (text.startsWith("=")) return text;
  const t = text.trim();
  if (/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t)) return Number(t);
  if (/^true$/i.test(t)) return true;
  if (/^false$/i.test(t)) return false;
  return text;
}

/** No evaluator: formulas show #NAME? (the workbook cannot compute them). */
const noEvaluator: FormulaEvaluator = () => ({
  error: "#NAME?",
  message: "This workbook has no formula evaluator.",
});

export class MemoryWorkbook {
  private readonly sheets: Sheet[] = [];
  private readonly listeners = new Set<(event: WorkbookEvent) => void>();
  private evaluator: FormulaEvaluator;
  /** Formula state during a recalculation: 1 = running, 2 = done (absent = pending). */
  private state = new Map<string, Map<number, number>>();
  selection: { sheet: string; rect: CellRect } | null = null;

  constructor(options: { evaluator?: FormulaEvaluator } = {}) {
    this.evaluator = options.evaluator ?? noEvaluator;
  }

  setEvaluator(evaluator: FormulaEvaluator): void {
    this.evaluator = evaluator;
    this.recalculate();
  }

  subscribe(listener: (event: WorkbookEvent) => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  private emit(event: WorkbookEvent): void {
    for (const l of [...this.listeners]) l(event);
  }

  sheetNames(): string[] {
    return this.sheets.map((s) => s.name);
  }

  /** Sheets hidden from the tabs (as Excel's hidden sheets: still read and written by formulas). */
  private readonly hidden = new Set<string>();

  /** Names of the sheets the tabs show, in order. */
  visibleSheetNames(): string[] {
    return this.sheetNames().filter((n) => !this.hidden.has(n));
  }

  isHidden(name: string): boolean {
    return this.hidden.has(name);
  }

  /** Hide a sheet from the tabs. */
  hideSheet(name: string): void {
    this.sheet(name);
    this.hidden.add(name);
    this.emit({ kind: "sheets" });
  }

  hasSheet(name: string): boolean {
    return this.sheets.some((s) => s.name === name);
  }

  /** Add a sheet; a taken name gets " (2)", " (3)", ... Returns the final name. */
  addSheet(name: string): string {
    let final = name;
    for (let n = 2; this.hasSheet(final); n++) final = `${name} (${n})`;
    this.sheets.push({ name: final, inputs: new Map(), computed: new Map(), messages: new Map(), marked: new Set(), literal: new Set() });
    this.emit({ kind: "sheets" });
    return final;
  }

  private sheet(name: string): Sheet {
    const s = this.sheets.find((x) => x.name === name);
    if (!s) throw new Error(`No sheet named "${name}".`);
    return s;
  }

  /** What was entered in a cell (formula text for formula cells). */
  input(sheet: string, row: number, column: number): CellValue {
    return this.sheet(sheet).inputs.get(key(row, column)) ?? null;
  }

  /** What a cell shows: the computed value of formula cells and spills, else the entered value. */
  value(sheet: string, row: number, column: number): CellValue {
    const s = this.sheet(sheet);
    const k = key(row, column);
    if (s.computed.has(k)) return s.computed.get(k) ?? null;
    const v = s.inputs.get(k);
    return isFormula(v) && !s.literal.has(k) ? null : (v ?? null);
  }

  /** The message behind an error a cell shows, if any. */
  message(sheet: string, row: number, column: number): string | undefined {
    return this.sheet(sheet).messages.get(key(row, column));
  }

  isMarked(sheet: string, row: number, column: number): boolean {
    return this.sheet(sheet).marked.has(key(row, column));
  }

  /** Rows that hold at least one highlighted cell, ascending. */
  markedRows(sheet: string): number[] {
    return [...new Set([...this.sheet(sheet).marked].map(rowOf))].sort((a, b) => a - b);
  }

  /** Smallest rectangle from A1 holding every entered or computed cell (A1 alone when empty). */
  usedRect(sheet: string): CellRect {
    const s = this.sheet(sheet);
    let bottom = 1;
    let right = 1;
    for (const map of [s.inputs, s.computed]) {
      for (const [k, v] of map) {
        if (v === null || v === "") continue;
        bottom = Math.max(bottom, rowOf(k));
        right = Math.max(right, colOf(k));
      }
    }
    return { top: 1, left: 1, bottom, right };
  }

  /**
   * Enter values with their top-left corner at (top, left), then recalc. Text starting with "=" is a
   * formula unless `asText` is true.
   */
  setValues(sheet: string, top: number, left: number, values: CellValue[][], asText = false): void {
    const s = this.sheet(sheet);
    let right = left;
    values.forEach((row, i) =>
      row.forEach((v, j) => {
        const k = key(top + i, left + j);
        s.literal.delete(k);
        if (v === null || v === undefined || v === "") s.inputs.delete(k);
        else {
          s.inputs.set(k, v);
          if (asText && isFormula(v)) s.literal.add(k);
        }
        right = Math.max(right, left + j);
      }),
    );
    this.recalculate();
    this.emit({ kind: "input", sheet, rect: { top, left, bottom: top + Math.max(values.length, 1) - 1, right } });
  }

  /** Enter one cell. */
  setCell(sheet: string, row: number, column: number, value: CellValue, asText = false): void {
    this.setValues(sheet, row, column, [[value]], asText);
  }

  /** True when the cell holds a formula (not text that merely starts with "="). */
  isFormulaCell(sheet: string, row: number, column: number): boolean {
    const s = this.sheet(sheet);
    const k = key(row, column);
    return isFormula(s.inputs.get(k)) && !s.literal.has(k);
  }

  /** Remove entries and highlights in a rectangle, then recalc. */
  clearRect(sheet: string, rect: CellRect): void {
    const s = this.sheet(sheet);
    for (const k of [...s.inputs.keys()]) {
      if (inside(k, rect)) {
        s.inputs.delete(k);
        s.literal.delete(k);
      }
    }
    for (const k of [...s.marked]) if (inside(k, rect)) s.marked.delete(k);
    this.recalculate();
    this.emit({ kind: "input", sheet, rect });
    this.emit({ kind: "format", sheet });
  }

  /** Mark or unmark the cells of `rows` within the columns of `rect`. */
  mark(sheet: string, rect: CellRect, rows: number[], on: boolean): void {
    const s = this.sheet(sheet);
    for (const r of rows) {
      for (let c = rect.left; c <= rect.right; c++) {
        if (on) s.marked.add(key(r, c));
        else s.marked.delete(key(r, c));
      }
    }
    this.emit({ kind: "format", sheet });
  }

  select(sheet: string, rect: CellRect): void {
    this.sheet(sheet);
    this.selection = { sheet, rect };
    this.emit({ kind: "selection", sheet, rect });
  }

  /** Values of a rectangle as the sheet shows them (computed values for formula cells). */
  read(sheet: string, rect: CellRect): CellValue[][] {
    const out: CellValue[][] = [];
    for (let r = rect.top; r <= rect.bottom; r++) {
      const row: CellValue[] = [];
      for (let c = rect.left; c <= rect.right; c++) row.push(this.value(sheet, r, c));
      out.push(row);
    }
    return out;
  }

  /** The block of non-blank cells connected to (row, column), like a table around the active cell. */
  currentRegion(sheet: string, row: number, column: number): CellRect {
    const filled = (r: number, c: number) => r >= 1 && c >= 1 && !blank(this.value(sheet, r, c));
    const rect: CellRect = { top: row, left: column, bottom: row, right: column };
    let grown = true;
    while (grown) {
      grown = false;
      const tryGrow = (edge: keyof CellRect, delta: number, along: "row" | "col") => {
        const next = rect[edge] + delta;
        if (next < 1) return;
        const from = along === "row" ? rect.left - 1 : rect.top - 1;
        const to = along === "row" ? rect.right + 1 : rect.bottom + 1;
        for (let i = from; i <= to; i++) {
          if (along === "row" ? filled(next, i) : filled(i, next)) {
            rect[edge] = next;
            grown = true;
            return;
          }
        }
      };
      tryGrow("top", -1, "row");
      tryGrow("bottom", 1, "row");
      tryGrow("left", -1, "col");
      tryGrow("right", 1, "col");
    }
    return rect;
  }

  // ---- recalculation -------------------------------------------------------------------------

  /** Recompute every formula (lazily ordered by need; see the file comment). */
  recalculate(): void {
    this.state = new Map(this.sheets.map((s) => [s.name, new Map<number, number>()]));
    for (const s of this.sheets) {
      s.computed.clear();
      s.messages.clear();
    }
    for (const s of this.sheets) {
      const formulas = [...s.inputs]
        .filter(([k, v]) => isFormula(v) && !s.literal.has(k))
        .map(([k]) => k)
        .sort((a, b) => a - b);
      for (const k of formulas) this.compute(s, k);
    }
    this.emit({ kind: "recalc" });
  }

  private compute(s: Sheet, k: number): void {
    const states = this.state.get(s.name)!;
    if (states.get(k) === 2) return;
    const formula = s.inputs.get(k) as string;
    if (states.get(k) === 1) return; // reached while running: the caller sees the cycle
    states.set(k, 1);
    const row = rowOf(k);
    const column = colOf(k);
    let cycle = false;
    const context: EvaluationContext = {
      sheet: s.name,
      row,
      column,
      readRange: (sheetName, address) => {
        const target = this.sheet(sheetName ?? s.name);
        const rect = parseAddress(address);
        if (!rect) throw new Error(`Not an address: ${address}`);
        this.computeBefore(target, rect, () => (cycle = true));
        if (target === s && inside(k, rect)) cycle = true;
        const clipped = clipToUsed(rect, this.usedRectOfInputs(target));
        return this.read(target.name, clipped);
      },
    };
    let outcome: FormulaOutcome;
    try {
      outcome = this.evaluator(formula, context);
    } catch (e) {
      outcome = { error: "#VALUE!", message: e instanceof Error ? e.message : String(e) };
    }
    if (cycle) outcome = { error: "#CYCLE!", message: "This formula refers to its own result, directly or through other cells." };
    states.set(k, 2);
    this.place(s, row, column, outcome);
  }

  /** Compute pending formulas of `s` that can spill into `rect` (cell above and left of its far corner). */
  private computeBefore(s: Sheet, rect: CellRect, onCycle: () => void): void {
    const states = this.state.get(s.name)!;
    for (const [k, v] of s.inputs) {
      if (!isFormula(v) || s.literal.has(k) || rowOf(k) > rect.bottom || colOf(k) > rect.right) continue;
      const st = states.get(k);
      if (st === 1) {
        if (inside(k, rect)) onCycle();
        continue;
      }
      if (st !== 2) this.compute(s, k);
    }
  }

  private usedRectOfInputs(s: Sheet): CellRect {
    let bottom = 1;
    let right = 1;
    for (const k of s.inputs.keys()) {
      bottom = Math.max(bottom, rowOf(k));
      right = Math.max(right, colOf(k));
    }
    for (const k of s.computed.keys()) {
      bottom = Math.max(bottom, rowOf(k));
      right = Math.max(right, colOf(k));
    }
    return { top: 1, left: 1, bottom, right };
  }

  private place(s: Sheet, row: number, column: number, outcome: FormulaOutcome): void {
    const anchor = key(row, column);
    if ("error" in outcome) {
      s.computed.set(anchor, outcome.error);
      s.messages.set(anchor, outcome.message);
      return;
    }
    const values = outcome.values.length ? outcome.values : [[null]];
    // A spill may not cover entered cells or cells another formula already filled.
    for (let i = 0; i < values.length; i++) {
      for (let j = 0; j < values[i].length; j++) {
        if (i === 0 && j === 0) continue;
        const k = key(row + i, column + j);
        const entered = s.inputs.get(k);
        if ((entered !== undefined && entered !== null && entered !== "") || s.computed.has(k)) {
          s.computed.set(anchor, "#SPILL!");
          s.messages.set(anchor, `The result needs ${values.length} rows by ${values[0].length} columns from ${rectAddress({ top: row, left: column, bottom: row, right: column })}, but cell ${rectAddress({ top: row + i, left: column + j, bottom: row + i, right: column + j })} is not empty. Clear the cells in the way.`);
          return;
        }
      }
    }
    for (let i = 0; i < values.length; i++) {
      for (let j = 0; j < values[i].length; j++) s.computed.set(key(row + i, column + j), values[i][j] ?? null);
    }
  }
}

function blank(v: CellValue): boolean {
  return v === null || v === undefined || v === "";
}

function inside(k: number, rect: CellRect): boolean {
  const r = rowOf(k);
  const c = colOf(k);
  return r >= rect.top && r <= rect.bottom && c >= rect.left && c <= rect.right;
}

/** Whole columns (or rows) are cut to the used part of the sheet; other ranges keep their shape. */
function clipToUsed(rect: CellRect, used: CellRect): CellRect {
  return {
    ...rect,
    bottom: rect.bottom === MAX_ROWS ? Math.max(rect.top, used.bottom) : rect.bottom,
    right: rect.right === MAX_COLUMNS ? Math.max(rect.left, used.right) : rect.right,
  };
}

/** Whole-column or whole-row addresses are cut to the used part of the sheet. */
function resolve(workbook: MemoryWorkbook, sheet: string, address: string): CellRect {
  const rect = parseAddress(address);
  if (!rect) throw new Error(`"${address}" is not a cell address.`);
  const used = workbook.usedRect(sheet);
  return {
    ...rect,
    bottom: rect.bottom === MAX_ROWS ? Math.max(rect.top, used.bottom) : rect.bottom,
    right: rect.right === MAX_COLUMNS ? Math.max(rect.left, used.right) : rect.right,
  };
}

/** `WorkbookPort` over a `MemoryWorkbook`. Events are delivered asynchronously, as Excel does. */
export class MemoryPort implements WorkbookPort {
  constructor(readonly workbook: MemoryWorkbook) {}

  async selectedBlock(): Promise<SheetBlock> {
    const sel = this.workbook.selection ?? { sheet: this.workbook.sheetNames()[0], rect: { top: 1, left: 1, bottom: 1, right: 1 } };
    const rect =
      sel.rect.top === sel.rect.bottom && sel.rect.left === sel.rect.right
        ? this.workbook.currentRegion(sel.sheet, sel.rect.top, sel.rect.left)
        : sel.rect;
    return this.readBlock(sel.sheet, rectAddress(rect));
  }

  async readBlock(sheet: string, address: string): Promise<SheetBlock> {
    const rect = resolve(this.workbook, sheet, address);
    return { sheet, address: rectAddress(rect), top: rect.top, left: rect.left, values: this.workbook.read(sheet, rect) };
  }

  /** The table's rows as they are now: grown by rows entered below it, shrunk by rows cleared (tableExtent.ts). */
  async readGrownBlock(sheet: string, address: string): Promise<SheetBlock> {
    const rect = resolve(this.workbook, sheet, address);
    // Rows below the block can only continue it up to the last used row of the sheet.
    const below = Math.max(rect.bottom, this.workbook.usedRect(sheet).bottom);
    const values = this.workbook.read(sheet, { ...rect, bottom: below });
    const kept = grownRowCount(values, rect.bottom - rect.top + 1);
    const grown = { ...rect, bottom: rect.top + kept - 1 };
    return { sheet, address: rectAddress(grown), top: grown.top, left: grown.left, values: values.slice(0, kept) };
  }

  async sheetNames(): Promise<string[]> {
    return this.workbook.sheetNames();
  }

  async addSheet(name: string): Promise<string> {
    return this.workbook.addSheet(name);
  }

  async isEmpty(sheet: string, address: string): Promise<boolean> {
    const rect = parseAddress(address);
    if (!rect) throw new Error(`"${address}" is not a cell address.`);
    for (let r = rect.top; r <= Math.min(rect.bottom, this.workbook.usedRect(sheet).bottom); r++) {
      for (let c = rect.left; c <= Math.min(rect.right, this.workbook.usedRect(sheet).right); c++) {
        if (!blank(this.workbook.value(sheet, r, c)) || !blank(this.workbook.input(sheet, r, c))) return false;
      }
    }
    return true;
  }

  async write(request: WriteRequest): Promise<void> {
    const at = parseAddress(request.at);
    if (!at) throw new Error(`"${request.at}" is not a cell address.`);
    // Literal text starting with "=" stays text when formulas is false.
    this.workbook.setValues(request.sheet, at.top, at.left, request.values, !request.formulas);
  }

  async ensureHiddenSheet(name: string): Promise<boolean> {
    if (this.workbook.hasSheet(name)) return false;
    this.workbook.addSheet(name);
    this.workbook.hideSheet(name);
    return true;
  }

  async writeText(sheet: string, at: string, values: string[][]): Promise<void> {
    const rect = parseAddress(at);
    if (!rect) throw new Error(`"${at}" is not a cell address.`);
    this.workbook.setValues(sheet, rect.top, rect.left, values, true);
  }

  async clear(sheet: string, address: string): Promise<void> {
    const rect = parseAddress(address);
    if (!rect) throw new Error(`"${address}" is not a cell address.`);
    this.workbook.clearRect(sheet, rect);
  }

  async highlightRows(sheet: string, address: string, rows: number[], on: boolean): Promise<void> {
    const rect = parseAddress(address);
    if (!rect) throw new Error(`"${address}" is not a cell address.`);
    this.workbook.mark(sheet, rect, rows, on);
  }

  async selectRow(sheet: string, address: string, row: number): Promise<void> {
    const rect = parseAddress(address);
    if (!rect) throw new Error(`"${address}" is not a cell address.`);
    this.workbook.select(sheet, { top: row, bottom: row, left: rect.left, right: rect.right });
  }

  async onChanged(sheet: string, handler: () => void): Promise<() => void> {
    return this.workbook.subscribe((event) => {
      if (event.kind === "input" && event.sheet === sheet) setTimeout(handler, 0);
    });
  }
}
