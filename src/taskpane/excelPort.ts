/**
 * `WorkbookPort` over the Excel JavaScript API (the add-in running inside Excel).
 *
 * Large tables are read and written in chunks of about `chunkCells` cells per request (50,000 by
 * default): one request per chunk keeps each message far below the size limits of Excel on the web
 * and lets the pane show progress and stay responsive. Whole-column addresses ("A:D") are cut to the
 * sheet's used range first, so they cost only the filled rows.
 *
 * Highlighting uses a fill colour of our own (OUR_FILL); removing the highlight gives exactly the
 * rows the pane marked their own solid fill back (or no fill) and leaves every other cell alone.
 *
 * Reference: Excel JavaScript API, Range.values / Range.formulas / Range.format.fill,
 * Worksheet.getUsedRange, Range.getSurroundingRegion, Worksheet.onChanged (Office Add-ins docs).
 */
import type { CellValue } from "../engine";
import { type CellRect, MAX_COLUMNS, MAX_ROWS, parseAddress, rectAddress, splitSheet } from "./a1";
import type { SheetBlock, WorkbookPort, WriteRequest } from "./port";
import { grownRowCount, isBlankRow } from "./tableExtent";

/** Cells per request when reading or writing large blocks. */
export const DEFAULT_CHUNK_CELLS = 50_000;
/** Our highlight fill: a light amber that reads as "look here" and keeps dark text legible. */
export const OUR_FILL = "#FBE3B0";
/** Characters of text per write request (the host carries about 5 MB a request). */
export const TEXT_BATCH_CHARS = 1_000_000;
/** Row runs per request when highlighting many scattered rows. */
const RUNS_PER_REQUEST = 500;
/** Rows whose own fill is read per request before highlighting. */
const ROWS_PER_FILL_READ = 2_000;
/** Fill colours Excel reports for cells without a fill. */
const NO_FILL = new Set(["#FFFFFF", "WHITE", ""]);

/** Progress of a long read or write: cells done out of cells in total. */
export interface TransferProgress {
  task: "read" | "write";
  done: number;
  total: number;
}

export interface ExcelPortOptions {
  chunkCells?: number;
  /** Called after each chunk. */
  onProgress?: (progress: TransferProgress) => void;
}

/** The part of `Excel.run` we use; tests pass a mock. */
type Runner = <T>(batch: (context: Excel.RequestContext) => Promise<T>) => Promise<T>;

/** Excel sends "" for blank cells; the engine's parser takes null as the blank. */
function fromExcel(v: unknown): CellValue {
  if (v === "" || v === undefined) return null;
  return v as CellValue;
}

function toExcel(v: CellValue): string | number | boolean {
  return v === null || v === undefined ? "" : v;
}

/** Split sorted row numbers into runs of consecutive rows: [3,4,5,9] -> [[3,5],[9,9]]. */
export function rowRuns(rows: number[]): [number, number][] {
  const sorted = [...new Set(rows)].sort((a, b) => a - b);
  const runs: [number, number][] = [];
  for (const r of sorted) {
    const last = runs[runs.length - 1];
    if (last && r === last[1] + 1) last[1] = r;
    else runs.push([r, r]);
  }
  return runs;
}

export class ExcelPort implements WorkbookPort {
  readonly chunkCells: number;
  onProgress?: (progress: TransferProgress) => void;
  private readonly run: Runner;
  /** Each highlighted row's own fill before we highlighted it (null = none or mixed). */
  private readonly savedFills = new Map<string, string | null>();

  constructor(options: ExcelPortOptions = {}, run?: Runner) {
    this.chunkCells = Math.max(1, Math.floor(options.chunkCells ?? DEFAULT_CHUNK_CELLS));
    this.onProgress = options.onProgress;
    this.run = run ?? ((batch) => Excel.run(batch));
  }

  private rect(address: string): CellRect {
    const rect = parseAddress(address);
    if (!rect) throw new Error(`"${address}" is not a cell address.`);
    return rect;
  }

  async selectedBlock(): Promise<SheetBlock> {
    const found = await this.run(async (context) => {
      const selected = context.workbook.getSelectedRange();
      selected.load("address,rowCount,columnCount");
      await context.sync();
      let address = selected.address;
      if (selected.rowCount === 1 && selected.columnCount === 1) {
        // One cell selected: take the table around it, as a person means by "this data".
        const region = selected.getSurroundingRegion();
        region.load("address");
        await context.sync();
        address = region.address;
      }
      return splitSheet(address);
    });
    return this.readBlock(found.sheet ?? "", found.address);
  }

  async readBlock(sheet: string, address: string): Promise<SheetBlock> {
    const asked = this.rect(address);
    return this.run(async (context) => {
      const ws = context.workbook.worksheets.getItem(sheet);
      let rect = asked;
      if (asked.bottom === MAX_ROWS || asked.right === MAX_COLUMNS) {
        const used = ws.getUsedRangeOrNullObject(true);
        used.load("address");
        await context.sync();
        const usedRect = used.isNullObject ? null : parseAddress(splitSheet(used.address).address);
        rect = {
          ...asked,
          bottom: asked.bottom === MAX_ROWS ? Math.max(asked.top, usedRect?.bottom ?? asked.top) : asked.bottom,
          right: asked.right === MAX_COLUMNS ? Math.max(asked.left, usedRect?.right ?? asked.left) : asked.right,
        };
      }
      const columns = rect.right - rect.left + 1;
      const totalRows = rect.bottom - rect.top + 1;
      const rowsPerChunk = Math.max(1, Math.floor(this.chunkCells / columns));
      const values: CellValue[][] = [];
      for (let start = 0; start < totalRows; start += rowsPerChunk) {
        const height = Math.min(rowsPerChunk, totalRows - start);
        const part = ws.getRange(
          rectAddress({ top: rect.top + start, bottom: rect.top + start + height - 1, left: rect.left, right: rect.right }),
        );
        part.load("values");
        await context.sync();
        for (const row of part.values) values.push(row.map(fromExcel));
        this.onProgress?.({ task: "read", done: (start + height) * columns, total: totalRows * columns });
      }
      return { sheet, address: rectAddress(rect), top: rect.top, left: rect.left, values };
    });
  }

  /**
   * The table's rows as they are now (rule in tableExtent.ts): the block as it was, then, when its
   * last row is still filled, the rows below it in chunks until the first blank row or the end of the
   * sheet's used range (values only).
   */
  async readGrownBlock(sheet: string, address: string): Promise<SheetBlock> {
    const first = await this.readBlock(sheet, address);
    const rect = this.rect(first.address);
    const originalRows = first.values.length;
    const values = first.values;
    let kept = grownRowCount(values, originalRows);
    if (kept === originalRows && originalRows > 0 && !isBlankRow(values[originalRows - 1])) {
      const usedBottom = await this.run(async (context) => {
        const used = context.workbook.worksheets.getItem(sheet).getUsedRangeOrNullObject(true);
        used.load("address");
        await context.sync();
        return used.isNullObject ? rect.bottom : (parseAddress(splitSheet(used.address).address)?.bottom ?? rect.bottom);
      });
      const rowsPerChunk = Math.max(1, Math.floor(this.chunkCells / (rect.right - rect.left + 1)));
      for (let top = rect.bottom + 1; top <= usedBottom && kept === values.length; top += rowsPerChunk) {
        const part = await this.readBlock(
          sheet,
          rectAddress({ top, bottom: Math.min(usedBottom, top + rowsPerChunk - 1), left: rect.left, right: rect.right }),
        );
        values.push(...part.values);
        kept = grownRowCount(values, originalRows);
      }
    }
    const grown = { ...rect, bottom: rect.top + kept - 1 };
    return { sheet, address: rectAddress(grown), top: grown.top, left: grown.left, values: values.slice(0, kept) };
  }

  async sheetNames(): Promise<string[]> {
    return this.run(async (context) => {
      const sheets = context.workbook.worksheets;
      sheets.load("items/name");
      await context.sync();
      return sheets.items.map((s) => s.name);
    });
  }

  async addSheet(name: string): Promise<string> {
    const taken = new Set((await this.sheetNames()).map((n) => n.toLowerCase()));
    let final = name;
    // Sheet names compare case-insensitively in Excel.
    for (let n = 2; taken.has(final.toLowerCase()); n++) final = `${name} (${n})`;
    await this.run(async (context) => {
      context.workbook.worksheets.add(final);
      await context.sync();
    });
    return final;
  }

  async isEmpty(sheet: string, address: string): Promise<boolean> {
    this.rect(address);
    return this.run(async (context) => {
      const used = context.workbook.worksheets.getItem(sheet).getRange(address).getUsedRangeOrNullObject(false);
      await context.sync();
      return used.isNullObject;
    });
  }

  async write(request: WriteRequest): Promise<void> {
    const at = this.rect(request.at);
    const rows = request.values.length;
    if (rows === 0) return;
    const columns = Math.max(...request.values.map((r) => r.length));
    const grid = request.values.map((r) => {
      const row = r.map(toExcel);
      while (row.length < columns) row.push("");
      return row;
    });
    const rowsPerChunk = Math.max(1, Math.floor(this.chunkCells / columns));
    await this.run(async (context) => {
      const ws = context.workbook.worksheets.getItem(request.sheet);
      for (let start = 0; start < rows; start += rowsPerChunk) {
        const height = Math.min(rowsPerChunk, rows - start);
        const range = ws.getRange(
          rectAddress({ top: at.top + start, bottom: at.top + start + height - 1, left: at.left, right: at.left + columns - 1 }),
        );
        const block = grid.slice(start, start + height);
        if (request.formulas) range.formulas = block;
        else {
          // Literal text that starts with "=" must stay text: Excel would take it as a formula.
          range.numberFormat = block.map((row) => row.map((v) => (typeof v === "string" && v.startsWith("=") ? "@" : "General")));
          range.values = block;
        }
        await context.sync();
        this.onProgress?.({ task: "write", done: (start + height) * columns, total: rows * columns });
      }
    });
  }

  async ensureHiddenSheet(name: string): Promise<boolean> {
    const names = await this.sheetNames();
    if (names.includes(name)) return false;
    await this.run(async (context) => {
      const ws = context.workbook.worksheets.add(name);
      // Excel.SheetVisibility.hidden (the string form, so no global Excel is needed here).
      ws.visibility = "Hidden";
      await context.sync();
    });
    return true;
  }

  async writeText(sheet: string, at: string, values: string[][]): Promise<void> {
    const start = this.rect(at);
    // Rows are written one request per batch of about TEXT_BATCH_CHARS characters (the host's
    // request limit is about 5 MB), each cell formatted as text ("@") before its value is set.
    await this.run(async (context) => {
      const ws = context.workbook.worksheets.getItem(sheet);
      for (let r = 0; r < values.length; r++) {
        const row = values[r];
        let from = 0;
        while (from < row.length) {
          let to = from;
          let chars = 0;
          while (to < row.length && (to === from || chars + row[to].length <= TEXT_BATCH_CHARS)) chars += row[to++].length;
          const range = ws.getRange(rectAddress({ top: start.top + r, bottom: start.top + r, left: start.left + from, right: start.left + to - 1 }));
          const block = [row.slice(from, to)];
          range.numberFormat = [block[0].map(() => "@")];
          range.values = block;
          await context.sync();
          from = to;
        }
      }
    });
  }

  async clear(sheet: string, address: string): Promise<void> {
    this.rect(address);
    await this.run(async (context) => {
      context.workbook.worksheets.getItem(sheet).getRange(address).clear();
      await context.sync();
    });
  }

  /**
   * Highlight rows with OUR_FILL, remembering each row's own fill first; removing the highlight
   * puts a remembered solid fill back and clears the fill of rows that had none (or a mix of fills,
   * which one colour cannot restore).
   */
  async highlightRows(sheet: string, address: string, rows: number[], on: boolean): Promise<void> {
    const rect = this.rect(address);
    const key = (row: number) => `${sheet}!${rect.left}:${rect.right}!${row}`;
    await this.run(async (context) => {
      const ws = context.workbook.worksheets.getItem(sheet);
      const rowRange = (row: number) => ws.getRange(rectAddress({ top: row, bottom: row, left: rect.left, right: rect.right }));
      if (on) {
        // Remember the fill of rows not yet highlighted by us (a re-highlight keeps the original).
        const fresh = [...new Set(rows)].filter((r) => !this.savedFills.has(key(r)));
        for (let start = 0; start < fresh.length; start += ROWS_PER_FILL_READ) {
          const batch = fresh.slice(start, start + ROWS_PER_FILL_READ).map((r) => {
            const range = rowRange(r);
            range.load("format/fill/color");
            return { r, range };
          });
          await context.sync();
          for (const { r, range } of batch) this.savedFills.set(key(r), range.format.fill.color ?? null);
        }
      }
      const runs = rowRuns(rows);
      for (let i = 0; i < runs.length; i++) {
        const [from, to] = runs[i];
        if (on) {
          ws.getRange(rectAddress({ top: from, bottom: to, left: rect.left, right: rect.right })).format.fill.color = OUR_FILL;
        } else {
          for (let r = from; r <= to; r++) {
            const saved = this.savedFills.get(key(r));
            this.savedFills.delete(key(r));
            const range = rowRange(r);
            if (saved && !NO_FILL.has(saved.toUpperCase())) range.format.fill.color = saved;
            else range.format.fill.clear();
          }
        }
        if ((i + 1) % RUNS_PER_REQUEST === 0) await context.sync();
      }
      await context.sync();
    });
  }

  async selectRow(sheet: string, address: string, row: number): Promise<void> {
    const rect = this.rect(address);
    await this.run(async (context) => {
      const ws = context.workbook.worksheets.getItem(sheet);
      ws.activate();
      ws.getRange(rectAddress({ top: row, bottom: row, left: rect.left, right: rect.right })).select();
      await context.sync();
    });
  }

  async onChanged(sheet: string, handler: () => void): Promise<() => void> {
    const registration = await this.run(async (context) => {
      const result = context.workbook.worksheets.getItem(sheet).onChanged.add(async () => handler());
      await context.sync();
      return result;
    });
    return () => {
      // Removing a handler must happen in the request context that added it.
      void Excel.run(registration.context, async (context) => {
        registration.remove();
        await context.sync();
      }).catch(() => undefined);
    };
  }
}
