/**
 * The pane's view of the data table it works on: the block read from the sheet, parsed once by the
 * shared range parser (src/engine/table.ts), with what the set-up and the plot need per column:
 * kind, distinct levels of text columns, and a typical value (mean of a number column, most frequent
 * category of a text column) used to hold the other columns fixed in the boundary plot.
 */
import { compareText, readTable, type Table, type TableColumn, type CellValue } from "../engine";
import { type CellRect, absoluteReference, parseAddress } from "./a1";
import type { SheetBlock } from "./port";

/** Most distinct levels listed for a text column (a column with more is an identifier, not a class). */
export const MAX_LISTED_LEVELS = 50;

export interface ColumnInfo {
  index: number;
  name: string;
  kind: TableColumn["kind"];
  /** Distinct non-blank values, sorted (text columns and numeric columns with few values). */
  levels: string[];
  /** True when every non-blank value differs (an identifier such as a crate number). */
  allDistinct: boolean;
  /** Mean (number/boolean columns) or most frequent category (text columns); null when all blank. */
  typical: number | string | null;
  /** How `typical` was chosen, for the plot's caption. */
  typicalRule: "mean" | "most frequent" | "none";
  /** Blank cells in the column. */
  missing: number;
}

export interface DataTable {
  sheet: string;
  /** The whole block as read, header included. */
  rect: CellRect;
  block: SheetBlock;
  table: Table;
  columns: ColumnInfo[];
  /** 1-based sheet row of data row 0. */
  firstSheetRow: number;
}

function levelsOf(values: (string | number)[]): { levels: string[]; allDistinct: boolean; counts: Map<string, number> } {
  const counts = new Map<string, number>();
  for (const v of values) counts.set(String(v), (counts.get(String(v)) ?? 0) + 1);
  const levels = [...counts.keys()].sort(compareText);
  return { levels, allDistinct: counts.size === values.length && values.length > 1, counts };
}

/**
 * Parse a block read from the sheet. The header decision follows the shared parser's "auto" rule.
 * @throws OddsmithError from the parser (EMPTY_RANGE, RAGGED_RANGE, ...)
 */
export function describeBlock(block: SheetBlock): DataTable {
  const table = readTable(block.values, { argument: "data", headers: "auto" });
  const rect = parseAddress(block.address);
  if (!rect) throw new Error(`"${block.address}" is not a cell address.`);
  const columns: ColumnInfo[] = table.columns.map((col, index) => {
    let missing = 0;
    const present: (string | number)[] = [];
    for (let i = 0; i < table.rows; i++) {
      if (col.missing[i]) missing++;
      else present.push(col.values[i]);
    }
    const { levels, allDistinct, counts } = levelsOf(present);
    let typical: number | string | null = null;
    let typicalRule: ColumnInfo["typicalRule"] = "none";
    if (present.length > 0) {
      if (col.kind === "text") {
        // Most frequent category; ties go to the first in sorted order.
        let best = levels[0];
        for (const l of levels) if ((counts.get(l) ?? 0) > (counts.get(best) ?? 0)) best = l;
        typical = best;
        typicalRule = "most frequent";
      } else {
        let sum = 0;
        for (const v of present) sum += v as number;
        typical = sum / present.length;
        typicalRule = "mean";
      }
    }
    return {
      index,
      name: table.names[index],
      kind: col.kind,
      levels: levels.length <= MAX_LISTED_LEVELS ? levels : [],
      allDistinct,
      typical,
      typicalRule,
      missing,
    };
  });
  return { sheet: block.sheet, rect, block, table, columns, firstSheetRow: rect.top + table.firstRow - 1 };
}

/** 1-based sheet row of data row `i`. */
export function sheetRow(data: DataTable, i: number): number {
  return data.firstSheetRow + i;
}

/** Sheet rectangle of one column: header (when present) plus every data row. */
export function columnRect(data: DataTable, index: number): CellRect {
  const column = data.rect.left + index;
  return { top: data.rect.top, bottom: data.firstSheetRow + data.table.rows - 1, left: column, right: column };
}

/** Absolute reference to the header-and-data rows of the whole table ("Crates!$A$1:$H$241"). */
export function tableReference(data: DataTable): string {
  return absoluteReference(data.sheet, {
    top: data.rect.top,
    bottom: data.firstSheetRow + data.table.rows - 1,
    left: data.rect.left,
    right: data.rect.left + data.columns.length - 1,
  });
}

/** Values of the chosen columns, header row first (when the table has one), as a 2-D block. */
export function pickColumns(data: DataTable, indices: number[]): CellValue[][] {
  const start = data.table.firstRow - 1 - (data.table.header ? 1 : 0);
  const end = data.table.firstRow - 1 + data.table.rows;
  const out: CellValue[][] = [];
  for (let r = start; r < end; r++) {
    const row = data.block.values[r] ?? [];
    out.push(indices.map((j) => row[j] ?? null));
  }
  return out;
}

/** A column that identifies rows (all values distinct, text), if any: shown first in the borderline list. */
export function keyColumn(data: DataTable): number | null {
  const found = data.columns.find((c) => c.kind === "text" && c.allDistinct);
  return found ? found.index : null;
}
