/**
 * The exported scoring formulas, recalculated by a real spreadsheet engine (LibreOffice headless),
 * give the add-in's probabilities to 1e-9 relative (issue 14, point 2).
 *
 * How: for each model of exportCases.ts (public data, binary and multi-class, text predictors and
 * every basis transform the export writes) an .xlsx is written with exceljs holding the data, the
 * predictors (ODDS.BASIS output where a recipe made them) and exactly what ODDS.FORMULAS lists
 * (headers, first-row formulas filled down as shared formulas, the coefficient table). A model with
 * an offset is written through the engine's planner row by row (renderScoringRow), as the task pane
 * writes it, since the cell function has no offset argument. Two sheets replace predictor values so
 * that linear predictors reach |eta| ~ 800: the formulas must still give the probabilities, with no
 * overflow. LibreOffice recalculates the file on load (its own profile, recalculation forced; every
 * formula cell carries a stale cached value that must be gone), saves it as .xlsx, and exceljs reads
 * the values back. Expected values: trainModel and scoreRows of the engine on the same ranges.
 */
import ExcelJS from "exceljs";
import { mkdirSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import {
  columnLetters,
  describeModel,
  planScoring,
  renderScoringRow,
  scoreRows,
  trainModel,
  type BlockPlacement,
  type CellValue,
  type ModelOptions,
  type RowScores,
  type TrainedModel,
} from "../../src/engine";
import { basis, formulas } from "../../src/functions/functions";
import { FORMULAS_OPTIONS } from "../../src/functions/formulasCell";
import { ADDIN_VERSION } from "../../src/shared/addinVersion";
import { modelOptionsOf } from "../../src/shared/fitService";
import { parseOptions } from "../../src/shared/options";
import { FORMULA_CASES, spectorLabels, spectorPredictors, tableOf, type ExportCase, type Table } from "./exportCases";
import { INSTALL_HINT, SOFFICE, recalculate, sofficeAvailable, sofficeVersion } from "./libreoffice";
import { STALE_VALUE, address, cellResult, enterListing, writeTable, type WrittenListing } from "./listingWorkbook";

/**
 * Agreement asked by the issue. The formulas do the engine's arithmetic in a different order (and
 * LibreOffice's EXP/LN are its own), so a few ulps per operation are expected; 1e-9 leaves room for
 * that and nothing else.
 */
const RELATIVE = 1e-9;
/**
 * Below this (about the smallest normal double) a probability is compared absolutely: subnormal
 * results keep few digits, and EXP(-745) and beyond is 0 on both sides.
 */
const TINY = 1e-307;
/** Rows whose margin between classes (or to the threshold) is below this may be decided either way. */
const TIE = 1e-9;
/** The extreme rows must really reach a linear predictor this large. */
const LARGE_ETA = 700;

const available = sofficeAvailable();
if (!available && process.env.CI) {
  throw new Error(`CI must check the exported formulas in LibreOffice, but ${SOFFICE} is missing. Install it: ${INSTALL_HINT}`);
}
if (!available) {
  console.warn(`SKIPPED: the LibreOffice check of the exported formulas (${SOFFICE} is missing). Install it: ${INSTALL_HINT}`);
}
const describeWithLibreOffice = available ? describe : describe.skip;

const OMITTED = null as unknown as Table;

/** A sheet of the workbook and what the test expects on it. */
interface SheetPlan {
  sheet: string;
  source: string;
  model: TrainedModel;
  expected: RowScores;
  written: WrittenListing;
  /** Data rows whose predictors were pushed to a large linear predictor. */
  extremeRows: number[];
}

/** The engine's options for a case's fit options, read as ODDS.FORMULAS reads its options. */
function modelOptions(c: ExportCase): ModelOptions {
  return modelOptionsOf(parseOptions("ODDS.FORMULAS", FORMULAS_OPTIONS, [[c.fitOptions ?? ""]]));
}

/** The predictors range of a case: given, or ODDS.BASIS(data, recipe) as the sheet would hold it. */
function predictorsOf(c: ExportCase): Table {
  return c.recipe ? (basis(c.data as Table, [[c.recipe]], OMITTED) as Table) : c.predictors;
}

/** Write one ODDS.FORMULAS case: labels in A, data from B, predictors right of it, the listing. */
function formulaSheet(wb: ExcelJS.Workbook, c: ExportCase, shown?: (p: Table, m: TrainedModel) => { table: Table; rows: number[] }): SheetPlan {
  const predictors = predictorsOf(c);
  const dataWidth = c.data ? c.data[0].length + 1 : 0;
  const predictorsColumn = 2 + dataWidth;
  const model = trainModel(c.labels, predictors, modelOptions(c));
  const onSheet = shown ? shown(predictors, model) : { table: predictors, rows: [] };
  writeTable(wb, { sheet: c.sheet, row: 1, column: 1, cells: c.labels });
  if (c.data) writeTable(wb, { sheet: c.sheet, row: 1, column: 2, cells: c.data });
  writeTable(wb, { sheet: c.sheet, row: 1, column: predictorsColumn, cells: onSheet.table });
  const places = [`predictors_at=${c.sheet}!${address(1, predictorsColumn)}`, ...(c.data ? [`data_at=${c.sheet}!B1`] : []), ...(c.fitOptions ? [c.fitOptions] : [])];
  const listing = formulas(c.labels, predictors, [[places.join("; ")]], c.recipe ? [[c.recipe]] : OMITTED, c.data ?? OMITTED);
  const notes = listing.slice(1).filter((r) => r[2] === "note");
  if (notes.length) throw new Error(`${c.sheet}: the export left columns to the add-in: ${notes.map((r) => r[1]).join(" | ")}`);
  const written = enterListing(wb, listing, c.sheet);
  const expected = shown ? scoreRows(model, onSheet.table) : scoreRows(model, null);
  return { sheet: c.sheet, source: c.source, model, expected, written, extremeRows: onSheet.rows };
}

/** Rows 1-6 of a predictors table with one column pushed so that |eta| reaches about 700 to 900. */
function extremeRows(column: string, slope: (m: TrainedModel) => number): (p: Table, m: TrainedModel) => { table: Table; rows: number[] } {
  return (p, m) => {
    const j = p[0].indexOf(column);
    const b = slope(m);
    const table = p.map((r) => r.slice());
    // +-900 and +-760: EXP of them would overflow or underflow; -700: a tiny probability (~1e-304) kept to 1e-9.
    const pushes = [900, -900, 760, -760, 700, -700];
    pushes.forEach((eta, i) => (table[1 + i][j] = eta / b));
    return { table, rows: pushes.map((_, i) => i) };
  };
}

/** The coefficient of term `term` (largest in size over the equations). */
function largestCoefficient(m: TrainedModel, term: string): number {
  const t = m.fit.terms.indexOf(term);
  return m.fit.coefficients.map((eq) => eq[t]).reduce((a, b) => (Math.abs(b) > Math.abs(a) ? b : a), 0);
}

/** The offset model (binary only), written by the planner row by row as the pane writes it. */
function offsetSheet(wb: ExcelJS.Workbook): SheetPlan {
  const sheet = "SpectorOffset";
  const predictors = tableOf({ GPA: spectorPredictors.slice(1).map((r) => r[0]), TUCE: spectorPredictors.slice(1).map((r) => r[1]) });
  const offset = tableOf({ PSI: spectorPredictors.slice(1).map((r) => r[2]) });
  const model = trainModel(spectorLabels, predictors, { offset });
  writeTable(wb, { sheet, row: 1, column: 1, cells: spectorLabels });
  writeTable(wb, { sheet, row: 1, column: 2, cells: predictors });
  writeTable(wb, { sheet, row: 1, column: 4, cells: offset });
  const at = (column: number) => ({ sheet, column, firstRow: 2 });
  const place: BlockPlacement = {
    sheet,
    left: 6,
    headerRow: 1,
    predictors: new Map([["GPA", at(2)], ["TUCE", at(3)], ["PSI", at(4)]]),
    data: new Map(),
    coefficients: { sheet, top: 1, left: 20 },
  };
  const plan = planScoring(describeModel(model, { name: "offset", producerVersion: ADDIN_VERSION, basis: null }), place);
  const ws = wb.getWorksheet(sheet) as ExcelJS.Worksheet;
  const columns: WrittenListing["columns"] = new Map();
  plan.columns.forEach((c, j) => {
    ws.getCell(1, place.left + j).value = c.header;
    columns.set(c.header, { sheet, column: place.left + j, firstRow: 2, lastRow: 1 + model.rows });
  });
  for (let i = 0; i < model.rows; i++) {
    renderScoringRow(plan, place, i).forEach((f, j) => (ws.getCell(2 + i, place.left + j).value = { formula: f.slice(1), result: STALE_VALUE }));
  }
  writeTable(wb, { sheet, row: place.coefficients.top, column: place.coefficients.left, cells: plan.coefficientTable });
  const written = { columns, formulaCells: plan.columns.length * model.rows };
  return { sheet, source: "Spector & Mazzeo (1980), PSI as an offset", model, expected: scoreRows(model, null), written, extremeRows: [] };
}

/** Probability columns of a sheet: header -> class index in the fit's class order. */
function probabilityColumns(p: SheetPlan): { header: string; k: number }[] {
  const classes = p.model.fit.classes;
  if (p.model.kind === "binary") {
    const positive = p.model.fit.positiveClass as string;
    return [{ header: `P(${positive})`, k: classes.indexOf(positive) }];
  }
  return classes.map((cls, k) => ({ header: `P(${cls})`, k }));
}

interface Agreement {
  cells: number;
  worst: number;
  failures: string[];
}

/** Compare every probability cell of a recalculated sheet with the engine's. */
function compare(read: ExcelJS.Workbook, p: SheetPlan): Agreement {
  const ws = read.getWorksheet(p.sheet) as ExcelJS.Worksheet;
  const out: Agreement = { cells: 0, worst: 0, failures: [] };
  for (const { header, k } of probabilityColumns(p)) {
    const at = p.written.columns.get(header);
    if (!at) throw new Error(`${p.sheet}: no column "${header}" was written`);
    for (let i = 0; i <= at.lastRow - at.firstRow; i++) {
      const want = p.expected.prediction.probabilities[k][i];
      const got = cellResult(ws, at.firstRow + i, at.column);
      out.cells++;
      if (Number.isNaN(want)) {
        if (!(typeof got === "object" && got !== null && "error" in got)) out.failures.push(`${header} row ${i + 1}: expected an error, got ${JSON.stringify(got)}`);
        continue;
      }
      if (typeof got !== "number") {
        out.failures.push(`${columnLetters(at.column)}${at.firstRow + i} ${header}: expected ${want}, got ${JSON.stringify(got)}`);
        continue;
      }
      const rel = Math.abs(got - want) / Math.max(Math.abs(want), TINY);
      out.worst = Math.max(out.worst, rel);
      if (rel > RELATIVE) out.failures.push(`${columnLetters(at.column)}${at.firstRow + i} ${header}: LibreOffice ${got}, engine ${want} (relative ${rel.toExponential(2)})`);
    }
  }
  return out;
}

/** Rows whose class cell differs from the engine's predicted class (ties within TIE excepted). */
function classDisagreements(read: ExcelJS.Workbook, p: SheetPlan): string[] {
  const ws = read.getWorksheet(p.sheet) as ExcelJS.Worksheet;
  const at = p.written.columns.get("class");
  if (!at) throw new Error(`${p.sheet}: no class column was written`);
  const out: string[] = [];
  for (let i = 0; i <= at.lastRow - at.firstRow; i++) {
    const want = p.expected.predictedClass[i];
    if (want === null || !(p.expected.prediction.margin[i] > TIE)) continue;
    const got = cellResult(ws, at.firstRow + i, at.column);
    if (String(got) !== want) out.push(`${address(at.firstRow + i, at.column)}: LibreOffice ${JSON.stringify(got)}, engine ${want}`);
  }
  return out;
}

/** Formula cells of a sheet still holding the stale cached value (none after a recalculation). */
function staleCells(read: ExcelJS.Workbook, p: SheetPlan): string[] {
  const ws = read.getWorksheet(p.sheet) as ExcelJS.Worksheet;
  const stale: string[] = [];
  for (const at of p.written.columns.values()) {
    for (let r = at.firstRow; r <= at.lastRow; r++) if (cellResult(ws, r, at.column) === STALE_VALUE) stale.push(address(r, at.column));
  }
  return stale;
}

/** The largest |linear predictor| LibreOffice computed on the given data rows. */
function largestEta(read: ExcelJS.Workbook, p: SheetPlan, rows: number[]): number {
  const ws = read.getWorksheet(p.sheet) as ExcelJS.Worksheet;
  let most = 0;
  for (const [header, at] of p.written.columns) {
    if (!header.startsWith("linear predictor")) continue;
    for (const i of rows) {
      const v = cellResult(ws, at.firstRow + i, at.column);
      if (typeof v === "number") most = Math.max(most, Math.abs(v));
    }
  }
  return most;
}

describeWithLibreOffice("exported formulas recalculated by LibreOffice", () => {
  const plans: SheetPlan[] = [];
  let read: ExcelJS.Workbook;
  let written: ExcelJS.Workbook;
  /** The test's folder (the workbook and LibreOffice's copy); kept when ODDSMITH_KEEP_WORKBOOK is set. */
  let dir = "";
  const figures: string[] = [];

  beforeAll(async () => {
    const wb = new ExcelJS.Workbook();
    for (const c of FORMULA_CASES) plans.push(formulaSheet(wb, c));
    plans.push(offsetSheet(wb));
    const plain = FORMULA_CASES.find((c) => c.sheet === "SpectorPlain") as ExportCase;
    plans.push(formulaSheet(wb, { ...plain, sheet: "SpectorExtreme" }, extremeRows("GPA", (m) => largestCoefficient(m, "GPA"))));
    const party = FORMULA_CASES.find((c) => c.sheet === "PartyText") as ExportCase;
    plans.push(formulaSheet(wb, { ...party, sheet: "PartyExtreme" }, extremeRows("selfLR", (m) => largestCoefficient(m, "selfLR"))));
    dir = mkdtempSync(join(tmpdir(), "oddsmith-export-"));
    const file = join(dir, "exported-formulas.xlsx");
    await wb.xlsx.writeFile(file);
    written = new ExcelJS.Workbook();
    await written.xlsx.readFile(file);
    const outDir = join(dir, "recalculated");
    mkdirSync(outDir);
    const converted = recalculate(file, outDir, "xlsx");
    read = new ExcelJS.Workbook();
    await read.xlsx.readFile(converted);
    figures.push(`${sofficeVersion()}; ${plans.length} sheets recalculated`);
  }, 150_000);

  afterAll(() => {
    if (dir && !process.env.ODDSMITH_KEEP_WORKBOOK) rmSync(dir, { recursive: true, force: true });
    else if (dir) figures.push(`workbooks kept in ${dir}`);
    if (figures.length) console.log(`LibreOffice check of the exported formulas:\n${figures.join("\n")}`);
  });

  test("before LibreOffice opens it, every formula cell of the file holds the stale cached value", () => {
    for (const p of plans) {
      let holding = 0;
      for (const at of p.written.columns.values()) {
        for (let r = at.firstRow; r <= at.lastRow; r++) if (cellResult(written.getWorksheet(p.sheet) as ExcelJS.Worksheet, r, at.column) === STALE_VALUE) holding++;
      }
      expect(`${p.sheet}: ${holding}`).toBe(`${p.sheet}: ${p.written.formulaCells}`);
    }
  });

  const sheets = [...FORMULA_CASES.map((c) => c.sheet), "SpectorOffset", "SpectorExtreme", "PartyExtreme"];
  test.each(sheets)("%s: every probability agrees with the engine to 1e-9 relative", (sheet) => {
    const p = plans.find((q) => q.sheet === sheet) as SheetPlan;
    expect(staleCells(read, p)).toEqual([]);
    const agreement = compare(read, p);
    figures.push(
      `${sheet} (${p.source}): ${p.model.fit.classes.length} classes, ${p.model.fit.terms.length} terms, ${p.written.formulaCells} formula cells, ` +
        `${agreement.cells} probabilities, worst relative difference ${agreement.worst.toExponential(2)}`,
    );
    expect(agreement.failures.slice(0, 10)).toEqual([]);
    expect(agreement.cells).toBeGreaterThan(0);
    expect(classDisagreements(read, p)).toEqual([]);
  });

  test.each(["SpectorExtreme", "PartyExtreme"])("%s: linear predictors near +-800 give finite probabilities, no overflow", (sheet) => {
    const p = plans.find((q) => q.sheet === sheet) as SheetPlan;
    expect(largestEta(read, p, p.extremeRows)).toBeGreaterThan(LARGE_ETA);
    expect(compare(read, p).failures).toEqual([]);
  });
});
