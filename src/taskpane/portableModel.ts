/**
 * The pane's portable model: keep the fitted model's description in the workbook, offer it as a
 * file, and write it as plain scoring formulas. Logic only (no DOM); the workbook through the port.
 *
 * Policy (one line each):
 * - Keeping writes the description's cells (src/shared/keptModel.ts) into a row of the hidden sheet
 *   KEPT_SHEET: the row of a kept model of the same name is replaced, otherwise the first free row
 *   from row 2 (rows 2 to KEPT_ROWS + 1 are looked at; more kept models is KEPT_NO_ROOM).
 * - The download is the description's JSON text under the name "<name>.oddsmith-model.json"; the
 *   view turns it into a file in the browser, so nothing leaves the machine.
 * - The scoring formulas go on their own sheet (SCORING_SHEET, replaced on each write), one row per
 *   data row on the same sheet rows as the data, with the coefficient table to their right; they
 *   read the predictor cells of the data table and the coefficient cells (planScoring).
 */
import { columnLetters, describeModel, planScoring, renderScoringRow, type BlockPlacement, type ModelDescription, type SheetColumn, type TrainedModel } from "../engine";
import { ADDIN_VERSION } from "../shared/addinVersion";
import { KEPT_SHEET, KEPT_SHEET_TITLE, keptCells, readKeptHeader } from "../shared/keptModel";
import { problem } from "../shared/messages";
import type { DataTable } from "./dataTable";
import type { SetupChoice } from "./modelSetup";
import type { WorkbookPort, WriteRequest } from "./port";

/** Kept-model rows looked at (rows 2 to KEPT_ROWS + 1). */
export const KEPT_ROWS = 500;
/** Sheet the scoring formulas are written on. */
export const SCORING_SHEET = "OddsmithScoring";

/** The description of the pane's fitted model. */
export function paneDescription(model: TrainedModel, name: string, created: string): ModelDescription {
  return describeModel(model, { name, producerVersion: ADDIN_VERSION, created });
}

/** Where a model was kept. */
export interface KeptPlace {
  row: number;
  /** The row as ODDS.KEPT's first argument, e.g. "OddsmithModels!2:2". */
  reference: string;
  parts: number;
  characters: number;
}

/**
 * Keep a description in the workbook (see the policy above).
 * @throws OddsmithError KEPT_NO_ROOM when every looked-at row holds another model
 */
export async function keepInWorkbook(port: WorkbookPort, desc: ModelDescription): Promise<KeptPlace> {
  const text = JSON.stringify(desc);
  const cells = keptCells(text, { name: desc.name, written: desc.created ?? "", producer: desc.producer.version, version: desc.formatVersion });
  if (await port.ensureHiddenSheet(KEPT_SHEET)) await port.writeText(KEPT_SHEET, "A1", [[KEPT_SHEET_TITLE]]);
  const firsts = (await port.readBlock(KEPT_SHEET, `A2:A${KEPT_ROWS + 1}`)).values.map((r) => r[0]);
  let at = firsts.findIndex((v) => {
    try {
      return readKeptHeader(v, "row").name === keptNameOf(cells[0]);
    } catch {
      return false;
    }
  });
  if (at < 0) at = firsts.findIndex((v) => v === null || v === "");
  if (at < 0) throw problem("KEPT_NO_ROOM", { sheet: KEPT_SHEET, rows: KEPT_ROWS, last: KEPT_ROWS + 1 });
  const row = at + 2;
  if (firsts[at] !== null && firsts[at] !== "") await port.clear(KEPT_SHEET, `${row}:${row}`);
  await port.writeText(KEPT_SHEET, `A${row}`, [cells]);
  return { row, reference: `${KEPT_SHEET}!${row}:${row}`, parts: cells.length - 1, characters: text.length };
}

/** The name a header cell carries (the header keptCells wrote). */
function keptNameOf(header: string): string {
  return readKeptHeader(header, "row").name;
}

/** The file the pane offers for download. */
export function descriptionFile(desc: ModelDescription): { name: string; text: string } {
  const safe = desc.name.replace(/[\\/:*?"<>|\r\n]+/g, "_").trim() || "model";
  return { name: `${safe}.oddsmith-model.json`, text: JSON.stringify(desc, null, 2) };
}

/** What the scoring-formulas button writes and where. */
export interface ScoringWrites {
  sheet: string;
  writes: WriteRequest[];
  /** Header cell of the probability column (the last but one block column), e.g. "F1". */
  probabilityAt: string;
  columns: number;
  notes: string[];
}

/**
 * The writes of the scoring formulas for the pane's table and choice.
 * @param sheet - the sheet to write on (SCORING_SHEET, already added)
 */
export function scoringWrites(desc: ModelDescription, data: DataTable, choice: SetupChoice, sheet: string): ScoringWrites {
  const header = data.table.header;
  const firstRow = data.rect.top + (header ? 1 : 0);
  const predictors = new Map<string, SheetColumn>();
  for (const p of choice.predictors) predictors.set(data.columns[p].name, { sheet: data.sheet, column: data.rect.left + p, firstRow });
  const headerRow = firstRow - 1 >= 1 ? firstRow - 1 : firstRow;
  const place: BlockPlacement = { sheet, left: 1, headerRow, predictors, data: new Map(), coefficients: { sheet, top: headerRow, left: 16_000 } };
  const plan = planScoring(desc, place);
  place.coefficients = { sheet, top: headerRow, left: plan.columns.length + 2 };
  const rows = data.table.rows;
  const formulas: string[][] = [];
  for (let i = 0; i < rows; i++) formulas.push(renderScoringRow(plan, place, i));
  const writes: WriteRequest[] = [
    { sheet, at: `A${headerRow}`, values: [plan.columns.map((c) => c.header)] },
    { sheet, at: `A${headerRow + 1}`, values: formulas, formulas: true },
    { sheet, at: `${columnLetters(place.coefficients.left)}${headerRow}`, values: plan.coefficientTable },
  ];
  const probability = plan.columns.findIndex((c) => c.role === "probability");
  return {
    sheet,
    writes,
    probabilityAt: `${columnLetters((probability >= 0 ? probability : plan.columns.length - 2) + 1)}${headerRow}`,
    columns: plan.columns.length,
    notes: plan.notes.map((n) => n.message),
  };
}
