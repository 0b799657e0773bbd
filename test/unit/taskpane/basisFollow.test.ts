/**
 * Generated basis columns following the table's rows, driven end to end through the real in-memory
 * workbook (MemoryPort) with the workbench's formula evaluator: the builder writes =ODDS.BASIS as a
 * live formula, the workbook evaluates it, a row is appended, the pane refreshes, the formula is
 * rewritten over the grown rows and the refit uses the new row.
 *
 * Reference for the numbers: the engine itself on the same cells (buildBasisColumns on the grown block, then
 * trainModel), i.e. these tests check the wiring, not the spline: ns itself is checked against R's
 * splines::ns in test/unit/engine (test/fixtures/basis/generate-r-reference.R).
 */
import { MemoryPort, MemoryWorkbook } from "../../../src/taskpane/memoryPort";
import { evaluateFormula } from "../../../src/preview/formulas";
import { DEMO_SHEETS, loadDemo } from "../../../src/preview/demo";
import { PaneController } from "../../../src/taskpane/paneController";
import {
  basisDerived,
  executeWrite,
  followTableRows,
  generatedBasis,
  planWrite,
  readBasisSource,
  undoWrite,
  type GeneratedBasis,
} from "../../../src/taskpane/basisBuilder";
import { buildBasisColumns } from "../../../src/shared/basisColumns";
import { readModelOptions } from "../../../src/shared/fitService";
import { trainModel } from "../../../src/engine/model";
import type { CellValue } from "../../../src/engine/types";
import { rectAddress } from "../../../src/taskpane/a1";

/**
 * The pane's refit and the reference fit run the same engine on the same numbers; they may differ
 * only by the iteration path of the Newton steps (converged to 1e-10 relative deviance), so 1e-7.
 */
const SAME_FIT_TOLERANCE = 1e-7;
/** Basis values read back from the evaluated formula are the adapter's numbers, untouched. */
const SAME_VALUE_DIGITS = 12;

const RECIPE = "firmness: ns(df=3)";
const SHEET_ROWS = 241; // header + 240 crates
/** Two new crates typed under the demo table (invented). */
const ADDED: CellValue[][] = [
  ["C-241", "Hilltop", 30, 55, 14.5, 1, "yes", "market"],
  ["C-242", "River bend", 20, 22, 14.0, 3, "no", "juice"],
];

/**
 * Wait for the pane to take in an edit: the workbook delivers change events on a timer, the pane
 * refreshes on another; then awaiting refresh() joins the refresh under way (or runs it) and returns
 * when it and any refresh queued behind it are finished.
 */
async function settle(controller: PaneController): Promise<void> {
  await new Promise((r) => setTimeout(r, 10));
  await controller.refresh();
  if (controller.status.busy) throw new Error(`status still busy: ${controller.status.message}`);
}

/** What the basis section does on "Add beside the data", then a first fit on the widened table. */
async function paneWithBasis(mode: "formula" | "values", track = true) {
  const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
  const sheet = loadDemo(workbook);
  workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
  const port = new MemoryPort(workbook);
  const controller = new PaneController({ port, runner: "inline", refreshDelayMs: 0 });
  await controller.useSelection();
  const source = await readBasisSource(port, { sheet, address: "A1:H241" });
  const plan = planWrite(source, RECIPE, { place: "beside", mode });
  const written = await executeWrite(port, plan);
  if (written.status !== "written") throw new Error("basis columns not written");
  if (track) controller.trackBasis(generatedBasis(source, plan, written), basisDerived(RECIPE, source.block.values));
  await controller.useTable(sheet, "A1:L241", true);
  const names = ["days_stored", "brix", "bruises", ...plan.names];
  controller.setChoice({ predictors: names.map((n) => controller.data!.columns.findIndex((c) => c.name === n)) });
  await controller.fit();
  if (controller.status.phase !== "done") throw new Error(controller.status.message);
  return { workbook, sheet, port, controller, plan };
}

/** The engine's fit of held ~ days_stored + brix + bruises + ns(firmness) on the given demo rows. */
function referenceFit(values: CellValue[][]) {
  const basis = buildBasisColumns(values, RECIPE, null);
  const predictors = values.map((r, i) => [r[2], r[4], r[5], ...basis[i]]);
  const options = readModelOptions("test", [["penalty=0; level=0.95; threshold=0.5"]]);
  return trainModel(values.map((r) => [r[6]]), predictors, options.model);
}

describe("generated basis formulas follow the table's rows (through the in-memory workbook)", () => {
  test("the builder's formula is evaluated by the workbook and spills the adapter's values beside the data", async () => {
    const { workbook, sheet, plan } = await paneWithBasis("formula");
    expect(plan.address).toBe("J1:L241");
    expect(workbook.input(sheet, 1, 10)).toBe('=ODDS.BASIS(Crates!$A$1:$H$241, "firmness: ns(df=3)")');
    const expected = buildBasisColumns(DEMO_SHEETS[0].values, RECIPE, null);
    expect(workbook.read(sheet, { top: 1, left: 10, bottom: 1, right: 12 })[0]).toEqual(["ns(firmness)1", "ns(firmness)2", "ns(firmness)3"]);
    for (const i of [1, 120, 240]) {
      for (let j = 0; j < 3; j++) expect(workbook.value(sheet, i + 1, 10 + j)).toBeCloseTo(expected[i][j] as number, SAME_VALUE_DIGITS);
    }
  });

  test("without following (the old behaviour) an appended row gets blank basis cells and is skipped from the fit", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("formula", false);
    workbook.setValues(sheet, 242, 1, [ADDED[0]]);
    await settle(controller);
    expect(controller.data!.block.address).toBe("A1:L242");
    expect(workbook.value(sheet, 242, 10)).toBeNull();
    expect(controller.outcome!.model.fit.rowsUsed).toBe(240);
    expect(controller.diagnostics.map((d) => d.code)).toContain("ROWS_SKIPPED");
  });

  test("an appended row: the formula is rewritten over the grown rows, the new row's basis cells fill and the refit uses it", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("formula");
    expect(controller.outcome!.model.fit.rowsUsed).toBe(240);
    workbook.setValues(sheet, 242, 1, [ADDED[0]]);
    await settle(controller);
    expect(workbook.input(sheet, 1, 10)).toBe('=ODDS.BASIS(Crates!$A$1:$H$242, "firmness: ns(df=3)")');
    const grown = [...DEMO_SHEETS[0].values, ADDED[0]];
    const expected = buildBasisColumns(grown, RECIPE, null);
    for (let j = 0; j < 3; j++) expect(workbook.value(sheet, 242, 10 + j)).toBeCloseTo(expected[241][j] as number, SAME_VALUE_DIGITS);
    expect(controller.data!.block.address).toBe("A1:L242");
    expect(controller.outcome!.model.fit.rowsUsed).toBe(241);
    expect(controller.diagnostics.map((d) => d.code)).not.toContain("ROWS_SKIPPED");
    const reference = referenceFit(grown);
    const ours = [...controller.outcome!.model.fit.coefficients[0]];
    const theirs = [...reference.fit.coefficients[0]];
    expect(ours.length).toBe(7); // intercept, 3 predictors, 3 spline columns
    expect(theirs.length).toBe(7);
    ours.forEach((b, k) => expect(Math.abs(b - theirs[k])).toBeLessThan(SAME_FIT_TOLERANCE * (1 + Math.abs(theirs[k]))));
    // The results sheet's formulas were rewritten too and reach the new row.
    expect(workbook.input("Oddsmith results", 1, 1)).toContain("Crates!$G$1:$G$242");
    expect(typeof workbook.value("Oddsmith results", 242, 1)).toBe("number");
    expect(controller.basisNotes().map((n) => n.code)).toEqual(["BASIS_FOLLOWED_ROWS"]);
    expect(controller.basisNotes()[0].message).toBe(
      "The table now has 241 data rows, so the basis formula at Crates!J1 was rewritten over Crates!$A$1:$H$242: its knots, centres, levels and scales are refitted on all 241 rows, and the fit uses the new rows.",
    );
  });

  test("the knots are refitted on the grown data: old rows' basis values change to those of a fit on all rows", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("formula");
    const before = workbook.value(sheet, 2, 10) as number;
    // A crate softer than any before (22 < 28.9) moves the lower boundary knot, so every row's spline values move.
    workbook.setValues(sheet, 242, 1, [ADDED[1]]);
    await settle(controller);
    const expected = buildBasisColumns([...DEMO_SHEETS[0].values, ADDED[1]], RECIPE, null);
    const after = workbook.value(sheet, 2, 10) as number;
    expect(after).toBeCloseTo(expected[1][0] as number, SAME_VALUE_DIGITS);
    expect(after).not.toBeCloseTo(before, 6);
  });

  test("the plot recomputes the generated columns with the refitted knots", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("formula");
    workbook.setValues(sheet, 242, 1, [ADDED[1]]);
    await settle(controller);
    const derived = controller.derived.find((d) => d.outputs.includes("ns(firmness)1"))!;
    const probe: CellValue[][] = [["firmness"], [48]];
    const grown = [...DEMO_SHEETS[0].values, ADDED[1]];
    expect(derived.compute(probe)).toEqual(buildBasisColumns(probe, RECIPE, grown));
    expect(derived.compute(probe)).not.toEqual(buildBasisColumns(probe, RECIPE, DEMO_SHEETS[0].values));
  });

  test("several rows appended at once are all covered", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("formula");
    workbook.setValues(sheet, 242, 1, ADDED);
    await settle(controller);
    expect(workbook.input(sheet, 1, 10)).toContain("$A$1:$H$243");
    expect(typeof workbook.value(sheet, 243, 12)).toBe("number");
    expect(controller.outcome!.model.fit.rowsUsed).toBe(242);
  });

  test("rows deleted from the bottom: the formula is rewritten over the shorter table", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("formula");
    workbook.clearRect(sheet, { top: 240, left: 1, bottom: 241, right: 8 });
    await settle(controller);
    expect(workbook.input(sheet, 1, 10)).toContain("$A$1:$H$239");
    expect(controller.data!.block.address).toBe("A1:L239");
    expect(controller.outcome!.model.fit.rowsUsed).toBe(238);
    expect(workbook.value(sheet, 240, 10)).toBeNull();
  });

  test("an edit inside the table leaves the basis formula as written (it recalculates by itself)", async () => {
    const { workbook, sheet, controller, port } = await paneWithBasis("formula");
    const writes = jest.spyOn(port, "write");
    workbook.setCell(sheet, 5, 4, 40);
    await settle(controller);
    expect(writes).not.toHaveBeenCalled();
    expect(workbook.input(sheet, 1, 10)).toContain("$A$1:$H$241");
    expect(controller.basisNotes()).toEqual([]);
  });

  test("a user's cell where the new row's basis values would go is never overwritten; a note names the cells", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("formula");
    // A number the user typed under the generated columns (text there would stop the fit on its own).
    workbook.setCell(sheet, 242, 11, 7);
    await settle(controller);
    workbook.setValues(sheet, 242, 1, [ADDED[0]]);
    await settle(controller);
    expect(workbook.input(sheet, 242, 11)).toBe(7);
    expect(workbook.input(sheet, 1, 10)).toContain("$A$1:$H$241");
    expect(workbook.value(sheet, 2, 10)).not.toBe("#SPILL!");
    const notes = controller.basisNotes();
    expect(notes.map((n) => n.code)).toEqual(["BASIS_FOLLOW_BLOCKED"]);
    expect(notes[0].message).toContain("because the cells J242:L242 it would fill are not empty");
  });

  test("values-mode columns are not rewritten on new rows; the pane says they were not refreshed", async () => {
    const { workbook, sheet, controller, port } = await paneWithBasis("values");
    const writes = jest.spyOn(port, "write");
    workbook.setValues(sheet, 242, 1, [ADDED[0]]);
    await settle(controller);
    expect(writes).not.toHaveBeenCalledWith(expect.objectContaining({ sheet }));
    expect(workbook.value(sheet, 242, 10)).toBeNull();
    expect(controller.outcome!.model.fit.rowsUsed).toBe(240);
    const notes = controller.basisNotes();
    expect(notes.map((n) => n.code)).toEqual(["BASIS_VALUES_NOT_REFRESHED"]);
    expect(notes[0].message).toBe(
      'The basis columns at Crates!J1:L241 hold values, not a live formula, so they were not refreshed after 1 row was added to the table (rows 242 to 242). Rows without basis values are skipped from the fit and edited rows keep their old basis values. Remove the generated columns and add them again, or add them as a live formula.',
    );
  });

  test("values-mode columns whose source cells are edited in place are reported stale", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("values");
    workbook.setCell(sheet, 5, 4, 40); // a firmness cell
    await settle(controller);
    expect(controller.basisNotes()[0].message).toContain("were not refreshed after cells of their source columns were edited");
  });

  test("values-mode columns are not flagged by an edit outside their source columns", async () => {
    const { workbook, sheet, controller } = await paneWithBasis("values");
    workbook.setCell(sheet, 5, 6, 4); // bruises: not a source of the basis
    await settle(controller);
    expect(controller.basisNotes()).toEqual([]);
  });
});

describe("the builder's write and undo through the in-memory workbook", () => {
  test("a target covered by another formula's spill counts as not empty: nothing is written", async () => {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = loadDemo(workbook);
    const port = new MemoryPort(workbook);
    const source = await readBasisSource(port, { sheet, address: "A1:H241" });
    // A first basis formula two rows lower than the planned block spills into its area.
    workbook.setCell(sheet, 3, 11, '=ODDS.BASIS(Crates!$A$1:$H$20, "brix: z")');
    expect(workbook.input(sheet, 5, 11)).toBeNull();
    expect(typeof workbook.value(sheet, 5, 11)).toBe("number");
    const out = await executeWrite(port, planWrite(source, RECIPE, { place: "beside", mode: "formula" }));
    expect(out.status).toBe("blocked");
    expect(workbook.input(sheet, 1, 10)).toBeNull();
  });

  test("undo of a formula write clears the formula and its whole spill", async () => {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = loadDemo(workbook);
    const port = new MemoryPort(workbook);
    const source = await readBasisSource(port, { sheet, address: "A1:H241" });
    const out = await executeWrite(port, planWrite(source, RECIPE, { place: "beside", mode: "formula" }));
    if (out.status !== "written") throw new Error("not written");
    expect(await port.isEmpty(sheet, "J1:L241")).toBe(false);
    await undoWrite(port, out.undo);
    expect(await port.isEmpty(sheet, "J1:L241")).toBe(true);
    expect(workbook.value(sheet, 2, 4)).toBe(DEMO_SHEETS[0].values[1][3]);
  });
});

describe("a recipe that makes other columns on the grown rows", () => {
  test("a new level's indicator column is written, read into the table and ticked like the old ones", async () => {
    // Invented: parcels delivered late (y) by distance and depot; depots North and South at first.
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = workbook.addSheet("Parcels");
    const depots = ["North", "South", "North", "South", "North", "North", "South", "North", "South", "South", "North", "South"];
    const late = ["no", "yes", "yes", "no", "no", "yes", "yes", "no", "no", "yes", "no", "yes"];
    workbook.setValues(sheet, 1, 1, [["km", "depot", "late"], ...depots.map((d, i) => [3 + ((i * 7) % 11), d, late[i]])]);
    const port = new MemoryPort(workbook);
    const controller = new PaneController({ port, runner: "inline", refreshDelayMs: 0 });
    await controller.useTable(sheet, "A1:C13");
    const source = await readBasisSource(port, { sheet, address: "A1:C13" });
    const recipe = "depot: levels(ref=North)";
    const plan = planWrite(source, recipe, { place: "beside", mode: "formula" });
    const written = await executeWrite(port, plan);
    if (written.status !== "written") throw new Error("not written");
    controller.trackBasis(generatedBasis(source, plan, written), basisDerived(recipe, source.block.values));
    await controller.useTable(sheet, "A1:E13", true);
    const col = (name: string) => controller.data!.columns.findIndex((c) => c.name === name);
    controller.setChoice({ label: col("late"), predictors: [col("km"), col("depot=South")] });
    await controller.fit();
    expect(controller.status.phase).toBe("done");
    workbook.setValues(sheet, 14, 1, [
      [9, "East", "yes"],
      [4, "East", "no"],
    ]);
    await settle(controller);
    expect(workbook.read(sheet, { top: 1, left: 5, bottom: 1, right: 6 })[0]).toEqual(["depot=South", "depot=East"]);
    expect(controller.data!.block.address).toBe("A1:F15");
    const ticked = controller.choice!.predictors.map((p) => controller.data!.columns[p].name);
    expect(ticked).toEqual(["km", "depot=South", "depot=East"]);
    expect(controller.outcome!.model.fit.rowsUsed).toBe(14);
  });
});

describe("removing generated columns after they followed the table", () => {
  test("the pane forgets them and hands back their current extent, so removal clears the grown block", async () => {
    const { workbook, sheet, controller, port } = await paneWithBasis("formula");
    workbook.setValues(sheet, 242, 1, ADDED);
    await settle(controller);
    const record = controller.untrackBasis(sheet, "J1:L241");
    expect(record && rectAddress(record.rect)).toBe("J1:L243");
    expect(controller.generated).toEqual([]);
    expect(controller.derived).toEqual([]);
    await port.clear(sheet, rectAddress(record!.rect));
    expect(await port.isEmpty(sheet, "J1:L243")).toBe(true);
  });

  test("columns built from another table on the sheet do not follow this one", async () => {
    const { workbook, sheet, controller, port } = await paneWithBasis("formula");
    // The pane now works on a narrower table that does not hold the basis source (A:H).
    await controller.useTable(sheet, "A1:C241");
    const writes = jest.spyOn(port, "write").mockClear();
    workbook.setValues(sheet, 242, 1, [ADDED[0].slice(0, 3)]);
    await settle(controller);
    expect(controller.data!.block.address).toBe("A1:C242");
    expect(writes).not.toHaveBeenCalledWith(expect.objectContaining({ at: "J1" }));
    expect(workbook.input(sheet, 1, 10)).toContain("$A$1:$H$241");
  });
});

describe("followTableRows on its own", () => {
  async function written(mode: "formula" | "values" = "formula") {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = loadDemo(workbook);
    const port = new MemoryPort(workbook);
    const source = await readBasisSource(port, { sheet, address: "A1:H241" });
    const plan = planWrite(source, RECIPE, { place: "beside", mode });
    const out = await executeWrite(port, plan);
    if (out.status !== "written") throw new Error("not written");
    return { workbook, sheet, port, basis: generatedBasis(source, plan, out) };
  }

  test("records the source range and the generated block", async () => {
    const { basis } = await written();
    expect(basis).toMatchObject({
      sourceSheet: "Crates",
      source: { top: 1, left: 1, bottom: SHEET_ROWS, right: 8 },
      sheet: "Crates",
      rect: { top: 1, left: 10, bottom: SHEET_ROWS, right: 12 },
      recipe: RECIPE,
      mode: "formula",
      names: ["ns(firmness)1", "ns(firmness)2", "ns(firmness)3"],
      note: null,
    });
  });

  test("unchanged rows write nothing", async () => {
    const { port, sheet, basis } = await written();
    const writes = jest.spyOn(port, "write");
    const out = await followTableRows(port, basis, await port.readBlock(sheet, "A1:L241"));
    expect(out.status).toBe("unchanged");
    expect(writes).not.toHaveBeenCalled();
  });

  test("a blank row read below the table does not stretch the formula (it would only spill blanks)", async () => {
    const { port, sheet, basis } = await written();
    const out = await followTableRows(port, basis, await port.readBlock(sheet, "A1:L245"));
    expect(out.status).toBe("unchanged");
  });

  test("a removed or replaced generated block is left alone, with a note", async () => {
    const { workbook, port, sheet, basis } = await written();
    workbook.clearRect(sheet, { top: 1, left: 10, bottom: 1, right: 10 });
    workbook.setValues(sheet, 242, 1, [ADDED[0]]);
    const writes = jest.spyOn(port, "write");
    const out = await followTableRows(port, basis, await port.readBlock(sheet, "A1:L242"));
    expect(out.status).toBe("lost");
    expect(writes).not.toHaveBeenCalled();
    expect(out.basis.note?.message).toBe(
      'The basis columns written at Crates!J1:L241 were changed or removed (their header row no longer reads "ns(firmness)1", "ns(firmness)2" and "ns(firmness)3"), so they were not rewritten for the table\'s new rows. Add them again from the basis section if you still need them.',
    );
  });

  test("a recipe that cannot be computed over the new rows keeps the old formula, with the reason", async () => {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = workbook.addSheet("Plots");
    workbook.setValues(sheet, 1, 1, [["area"], [2], [5], [9]]);
    const port = new MemoryPort(workbook);
    const source = await readBasisSource(port, { sheet, address: "A1:A4" });
    const plan = planWrite(source, "area: log", { place: "beside", mode: "formula" });
    const out = await executeWrite(port, plan);
    if (out.status !== "written") throw new Error("not written");
    const basis: GeneratedBasis = generatedBasis(source, plan, out);
    workbook.setValues(sheet, 5, 1, [["big"]]); // text where log needs numbers
    const follow = await followTableRows(port, basis, await port.readBlock(sheet, "A1:C5"));
    expect(follow.status).toBe("failed");
    expect(follow.basis.note?.message).toBe(
      'The basis formula at Plots!C1 was kept over its old rows, because its recipe cannot be computed over the table\'s new rows: The data value in row 5, column 1 ("big") is not a number. Enter a number or clear the cell.',
    );
    expect(workbook.input(sheet, 1, 3)).toBe('=ODDS.BASIS(Plots!$A$1:$A$4, "area: log")');
  });

  test("a new level widens the result: the cells to the right must be empty too", async () => {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = workbook.addSheet("Shops");
    workbook.setValues(sheet, 1, 1, [["region"], ["North"], ["South"], ["North"]]);
    const port = new MemoryPort(workbook);
    const source = await readBasisSource(port, { sheet, address: "A1:A4" });
    const plan = planWrite(source, "region: levels(ref=North)", { place: "beside", mode: "formula" });
    const out = await executeWrite(port, plan);
    if (out.status !== "written") throw new Error("not written");
    const basis = generatedBasis(source, plan, out);
    workbook.setCell(sheet, 2, 4, "memo");
    workbook.setValues(sheet, 5, 1, [["East"]]);
    const blocked = await followTableRows(port, basis, await port.readBlock(sheet, "A1:C5"));
    expect(blocked.status).toBe("blocked");
    expect(blocked.basis.note?.message).toContain("the cells D1:D4 it would fill are not empty");
    workbook.clearRect(sheet, { top: 2, left: 4, bottom: 2, right: 4 });
    const follow = await followTableRows(port, basis, await port.readBlock(sheet, "A1:C5"));
    expect(follow.status).toBe("rewritten");
    expect(follow.basis.names).toEqual(["region=South", "region=East"]);
    expect(workbook.read(sheet, { top: 1, left: 3, bottom: 5, right: 4 })).toEqual([
      ["region=South", "region=East"],
      [0, 0],
      [1, 0],
      [0, 0],
      [0, 1],
    ]);
  });

  test("values mode is never rewritten and gets the not-refreshed note", async () => {
    const { port, sheet, basis, workbook } = await written("values");
    workbook.setValues(sheet, 242, 1, ADDED);
    const writes = jest.spyOn(port, "write");
    const out = await followTableRows(port, basis, await port.readBlock(sheet, "A1:L243"));
    expect(out.status).toBe("values");
    expect(writes).not.toHaveBeenCalled();
    expect(out.basis.note?.message).toContain("after 2 rows were added to the table (rows 242 to 243)");
  });
});
