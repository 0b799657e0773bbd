/**
 * The workbench's demo workbook: invented orchard data written by scripts/make-demo-workbook.mjs
 * (seeded), loaded into an in-memory workbook. No side effects on import, so tests can use it.
 */
import type { CellValue } from "../engine";
import type { MemoryWorkbook } from "../taskpane/memoryPort";
import demo from "./demoWorkbook.json";

/** The demo sheets as stored (name, top-left corner, values with the header row first). */
export const DEMO_SHEETS = demo.sheets as { name: string; top: number; left: number; values: CellValue[][] }[];

/** Load the demo sheets into `workbook`; returns the first sheet's final name. */
export function loadDemo(workbook: MemoryWorkbook): string {
  let first = "";
  for (const sheet of DEMO_SHEETS) {
    const name = workbook.addSheet(sheet.name);
    workbook.setValues(name, sheet.top, sheet.left, sheet.values);
    if (!first) first = name;
  }
  return first;
}
