/**
 * The workbench's plain sheet view: one sheet of the in-memory workbook as an HTML table, sheet
 * tabs, and an entry line to edit the picked cell. Deliberately plain and of its own look (a ledger:
 * no grid lines, tinted row bands, column letters as small tags) so nobody mistakes it for a
 * spreadsheet program.
 *
 * Safety: every cell's content is put in with textContent, never as markup, so text typed into a
 * cell (or produced by a formula) can never create elements or run scripts.
 */
import type { CellValue } from "../engine";
import { cellAddress, columnLetters, type CellRect } from "../taskpane/a1";
import { type MemoryWorkbook, parseTypedInput } from "../taskpane/memoryPort";
import { isErrorValue } from "./formulas";

/** Extra empty rows and columns shown beyond the used part, so a person can type there. */
const MARGIN_ROWS = 3;
const MARGIN_COLUMNS = 2;

/** How a value is shown: numbers to 6 significant digits (full value in the entry line). */
export function displayValue(v: CellValue): string {
  if (v === null || v === undefined) return "";
  if (typeof v === "number") {
    if (!Number.isFinite(v)) return String(v);
    if (Number.isInteger(v)) return String(v);
    const s = v.toPrecision(6);
    return s.includes("e") ? s : String(Number(s));
  }
  if (typeof v === "boolean") return v ? "TRUE" : "FALSE";
  return String(v);
}

function el<K extends keyof HTMLElementTagNameMap>(tag: K, className?: string, text?: string): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  if (className) e.className = className;
  if (text !== undefined) e.textContent = text;
  return e;
}

export class SheetView {
  readonly root: HTMLElement;
  private sheet: string;
  private picked = { row: 1, column: 1 };
  private readonly tabs: HTMLElement;
  private readonly address: HTMLElement;
  private readonly entry: HTMLInputElement;
  private readonly scroller: HTMLElement;
  private renderQueued = false;

  constructor(
    container: HTMLElement,
    private readonly workbook: MemoryWorkbook,
  ) {
    this.sheet = workbook.sheetNames()[0];
    this.root = el("section", "ledger");
    this.root.setAttribute("aria-label", "Workbook");
    const bar = el("div", "ledger-entry");
    this.address = el("span", "ledger-address", "A1");
    this.address.id = "entry-address";
    this.entry = el("input", "ledger-input");
    this.entry.id = "entry";
    this.entry.type = "text";
    this.entry.spellcheck = false;
    this.entry.setAttribute("aria-label", "Content of the picked cell");
    const apply = el("button", "ledger-apply", "Enter");
    apply.id = "entry-apply";
    apply.type = "button";
    bar.append(this.address, this.entry, apply);
    this.tabs = el("nav", "ledger-tabs");
    this.scroller = el("div", "ledger-scroll");
    this.root.append(bar, this.tabs, this.scroller);
    container.append(this.root);

    const commit = () => this.commitEntry();
    apply.addEventListener("click", commit);
    this.entry.addEventListener("keydown", (e) => {
      if (e.key === "Enter") {
        e.preventDefault();
        commit();
      } else if (e.key === "Escape") {
        this.showEntry();
      }
    });
    this.scroller.addEventListener("click", (e) => {
      const td = (e.target as HTMLElement).closest("td[data-row]") as HTMLElement | null;
      if (!td) return;
      this.pick(Number(td.dataset.row), Number(td.dataset.col));
      this.workbook.select(this.sheet, { top: this.picked.row, left: this.picked.column, bottom: this.picked.row, right: this.picked.column });
    });
    workbook.subscribe((event) => {
      if (event.kind === "selection" && event.sheet !== this.sheet) this.sheet = event.sheet;
      if (event.kind === "selection") {
        this.picked = { row: event.rect.top, column: event.rect.left };
        this.showEntry();
      }
      this.queueRender(event.kind === "selection" ? event.rect : undefined);
    });
    this.render();
    this.showEntry();
  }

  /** The sheet on show. */
  get currentSheet(): string {
    return this.sheet;
  }

  showSheet(name: string): void {
    this.sheet = name;
    this.picked = { row: 1, column: 1 };
    this.render();
    this.showEntry();
  }

  private pick(row: number, column: number): void {
    this.picked = { row, column };
    this.showEntry();
    this.entry.focus();
  }

  private showEntry(): void {
    const { row, column } = this.picked;
    this.address.textContent = `${this.sheet}!${cellAddress(row, column)}`;
    const input = this.workbook.input(this.sheet, row, column);
    const literal = typeof input === "string" && input.startsWith("=") && !this.workbook.isFormulaCell(this.sheet, row, column);
    this.entry.value = literal ? `'${input}` : displayInput(input);
  }

  private commitEntry(): void {
    const { row, column } = this.picked;
    const text = this.entry.value;
    // A leading apostrophe keeps the rest as text (so "=..." can be entered as text).
    if (text.startsWith("'")) this.workbook.setCell(this.sheet, row, column, text.slice(1), true);
    else this.workbook.setCell(this.sheet, row, column, parseTypedInput(text));
  }

  private queueRender(reveal?: CellRect): void {
    if (this.renderQueued) return;
    this.renderQueued = true;
    requestAnimationFrame(() => {
      this.renderQueued = false;
      this.render();
      if (reveal) this.reveal(reveal.top);
    });
  }

  /** Scroll a sheet row into view. */
  private reveal(row: number): void {
    const tr = this.scroller.querySelector(`tr[data-row="${row}"]`);
    if (tr) (tr as HTMLElement).scrollIntoView({ block: "nearest" });
  }

  render(): void {
    // Tabs.
    this.tabs.replaceChildren(
      ...this.workbook.visibleSheetNames().map((name) => {
        const b = el("button", name === this.sheet ? "ledger-tab is-current" : "ledger-tab", name);
        b.type = "button";
        b.dataset.sheet = name;
        b.addEventListener("click", () => this.showSheet(name));
        return b;
      }),
    );
    const used = this.workbook.usedRect(this.sheet);
    const rows = used.bottom + MARGIN_ROWS;
    const cols = used.right + MARGIN_COLUMNS;
    const sel = this.workbook.selection?.sheet === this.sheet ? this.workbook.selection.rect : null;
    const table = el("table", "ledger-table");
    table.dataset.sheet = this.sheet;
    const head = el("thead");
    const hr = el("tr");
    hr.append(el("th", "ledger-corner", ""));
    for (let c = 1; c <= cols; c++) hr.append(el("th", "ledger-col", columnLetters(c)));
    head.append(hr);
    const body = el("tbody");
    for (let r = 1; r <= rows; r++) {
      const tr = el("tr");
      tr.dataset.row = String(r);
      const inSelection = sel !== null && r >= sel.top && r <= sel.bottom;
      if (inSelection && sel!.bottom - sel!.top === 0 && sel!.right > sel!.left) tr.classList.add("is-picked-row");
      tr.append(el("th", "ledger-rownum", String(r)));
      for (let c = 1; c <= cols; c++) {
        const v = this.workbook.value(this.sheet, r, c);
        const td = el("td", undefined, displayValue(v));
        td.dataset.row = String(r);
        td.dataset.col = String(c);
        if (typeof v === "number") td.classList.add("is-number");
        if (isErrorValue(v)) {
          td.classList.add("is-error");
          const msg = this.workbook.message(this.sheet, r, c);
          if (msg) td.title = msg;
        }
        if (this.workbook.isFormulaCell(this.sheet, r, c)) td.classList.add("is-formula");
        if (this.workbook.isMarked(this.sheet, r, c)) td.classList.add("is-marked");
        if (inSelection && c >= sel!.left && c <= sel!.right) td.classList.add("is-selected");
        tr.append(td);
      }
      body.append(tr);
    }
    table.append(head, body);
    const top = this.scroller.scrollTop;
    const left = this.scroller.scrollLeft;
    this.scroller.replaceChildren(table);
    this.scroller.scrollTop = top;
    this.scroller.scrollLeft = left;
  }
}

function displayInput(v: CellValue): string {
  if (typeof v === "number") return String(v);
  return displayValue(v);
}
