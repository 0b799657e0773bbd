/**
 * ExcelPort against office-addin-mock: the mock enforces the Office.js contract that a property can
 * only be read after load() and sync(), so these tests also check that every read is loaded first.
 * Ranges are created on demand by the mock worksheet's getRange over a small in-memory grid.
 */
import { OfficeMockObject } from "office-addin-mock";

import { columnNumber, parseAddress, rectAddress } from "../../../src/taskpane/a1";
import { ExcelPort, OUR_FILL, rowRuns, type TransferProgress } from "../../../src/taskpane/excelPort";
import { scoreRows, trainModel } from "../../../src/engine";
import { keptCell } from "../../../src/functions/keptCell";
import { keepInWorkbook, paneDescription } from "../../../src/taskpane/portableModel";

type Grid = (string | number | boolean)[][];

interface Created {
  address: string;
  range: Record<string, any>;
}

/** A mock Excel with one or more sheets held as grids from A1; records every range it hands out. */
function mockExcel(sheets: Record<string, Grid>, selected = "Data!A1", fills: Record<string, string> = {}) {
  const created: Created[] = [];
  const added: string[] = [];
  const addedSheets: Record<string, unknown>[] = [];
  const events: { sheet: string; handler: () => Promise<void> }[] = [];
  const loads: string[] = [];
  let counter = 0;

  function cellsOf(sheet: string, address: string): Grid {
    const rect = parseAddress(address)!;
    const grid = sheets[sheet];
    const out: Grid = [];
    for (let r = rect.top; r <= rect.bottom; r++) {
      const row: (string | number | boolean)[] = [];
      for (let c = rect.left; c <= rect.right; c++) row.push(grid[r - 1]?.[c - 1] ?? "");
      out.push(row);
    }
    return out;
  }

  function usedAddress(sheet: string): string | null {
    const grid = sheets[sheet];
    let bottom = 0;
    let right = 0;
    grid.forEach((row, i) =>
      row.forEach((v, j) => {
        if (v !== "") {
          bottom = Math.max(bottom, i + 1);
          right = Math.max(right, j + 1);
        }
      }),
    );
    return bottom === 0 ? null : rectAddress({ top: 1, left: 1, bottom, right });
  }

  /** Attach a new range mock under `owner` so context.sync() reaches it. */
  function rangeMock(owner: any, sheet: string, address: string) {
    const name = `range${counter++}`;
    owner.addMock(name);
    const range = owner[name];
    const isEmpty = cellsOf(sheet, address).every((row) => row.every((v) => v === ""));
    range.populate({
      address: `${sheet}!${address}`,
      values: cellsOf(sheet, address),
      rowCount: parseAddress(address)!.bottom - parseAddress(address)!.top + 1,
      columnCount: parseAddress(address)!.right - parseAddress(address)!.left + 1,
      format: {
        fill: {
          color: fills[address] ?? "#FFFFFF",
          clear: function (this: any) {
            this.cleared = true;
          },
        },
      },
      clear: function (this: any) {
        this.clearedAll = true;
      },
      select: function (this: any) {
        this.selected = true;
      },
      getUsedRangeOrNullObject: function (this: any) {
        // isNullObject is readable after sync without load (Office.js contract), so a plain field.
        return { isNullObject: isEmpty };
      },
      getSurroundingRegion: function (this: any) {
        const used = usedAddress(sheet)!;
        return rangeMock(owner, sheet, used);
      },
    });
    created.push({ address, range });
    return range;
  }

  const sheetMocks: Record<string, any> = {};
  const data = {
    context: {
      workbook: {
        worksheets: {
          // The mock cannot navigate into arrays ("items/name"), so the collection's load is replaced:
          // it records what was asked and exposes the items only when the names were requested.
          load: function (this: any, what: string) {
            loads.push(what);
            if (what === "items/name") this.items = Object.keys(sheets).map((name) => ({ name }));
          },
          getItem: function (this: any, name: string) {
            return sheetMocks[name];
          },
          add: function (name: string) {
            added.push(name);
            // The new sheet, recording what the port sets on it (its visibility).
            const sheet: Record<string, unknown> = { name };
            addedSheets.push(sheet);
            return sheet;
          },
        },
        getSelectedRange: function () {
          const [sheet, address] = selected.split("!");
          return rangeMock(root.context.workbook, sheet, address);
        },
      },
    },
    run: async function (this: any, batch: (context: any) => Promise<unknown>) {
      return batch(this.context);
    },
  };
  const root = new OfficeMockObject(data) as any;
  for (const sheet of Object.keys(sheets)) {
    root.context.workbook.worksheets.addMock(`sheet_${sheet}`);
    const ws = root.context.workbook.worksheets[`sheet_${sheet}`];
    ws.populate({
      name: sheet,
      activate: function (this: any) {
        this.activated = true;
      },
      getRange: function (this: any, address: string) {
        return rangeMock(this, sheet, address);
      },
      getUsedRangeOrNullObject: function (this: any) {
        const used = usedAddress(sheet);
        if (!used) return { isNullObject: true, load() {} };
        return rangeMock(this, sheet, used);
      },
      onChanged: {
        add: function (handler: () => Promise<void>) {
          events.push({ sheet, handler });
          return { context: root.context, remove() {} };
        },
      },
    });
    sheetMocks[sheet] = ws;
  }
  return { root, created, added, addedSheets, events, loads, fills, run: (batch: any) => root.run(batch) };
}

/** A 12 x 3 grid: header row, then numbers with a blank at row 5, column B. */
function sampleGrid(): Grid {
  const grid: Grid = [["weight", "moisture", "flag"]];
  for (let i = 1; i <= 11; i++) grid.push([i, i === 4 ? "" : i * 0.5, i % 2 === 0 ? "yes" : "no"]);
  return grid;
}

describe("office-addin-mock under jest (office-addin-manifest stand-in)", () => {
  test("the stand-in gives the mock the real host names, so a mock object's host is recognised", () => {
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const { OfficeApp } = require("office-addin-manifest");
    expect(OfficeApp).toEqual({ Excel: "excel", OneNote: "onenote", Outlook: "outlook", PowerPoint: "powerpoint", Project: "project", Word: "word" });
    // The mock skips load() for an Outlook host and only for it: both need the enum's values.
    const outlook = new OfficeMockObject({ host: "outlook", item: { subject: "s" } }) as any;
    const excel = new OfficeMockObject({ host: "excel", range: { values: [[1]] } }) as any;
    expect(outlook.load("item")).toBeUndefined();
    expect(excel.load("range")).toBe(excel);
  });
});

describe("ExcelPort reading", () => {
  test("reads a block in chunks of at most chunkCells cells and reports progress to the end", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    const progress: TransferProgress[] = [];
    const port = new ExcelPort({ chunkCells: 10, onProgress: (p) => progress.push(p) }, excel.run);
    const block = await port.readBlock("Data", "A1:C12");
    // 10 cells per chunk with 3 columns -> 3 rows per chunk -> 4 chunks for 12 rows.
    expect(excel.created.map((c) => c.address)).toEqual(["A1:C3", "A4:C6", "A7:C9", "A10:C12"]);
    expect(block.values).toHaveLength(12);
    expect(block.values[0]).toEqual(["weight", "moisture", "flag"]);
    expect(block.values[11]).toEqual([11, 5.5, "no"]);
    expect([block.top, block.left, block.address]).toEqual([1, 1, "A1:C12"]);
    expect(progress.map((p) => p.done)).toEqual([9, 18, 27, 36]);
    expect(progress.every((p) => p.total === 36 && p.task === "read")).toBe(true);
  });

  test("turns Excel's blank \"\" into null, the engine's blank", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    const block = await new ExcelPort({}, excel.run).readBlock("Data", "B5");
    expect(block.values).toEqual([[null]]);
  });

  test("the default chunk is 50,000 cells", () => {
    expect(new ExcelPort({}, mockExcel({ Data: [] }).run).chunkCells).toBe(50_000);
  });

  test("a whole-column address is cut to the used rows", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    const block = await new ExcelPort({}, excel.run).readBlock("Data", "B:C");
    expect(block.address).toBe("B1:C12");
    expect(block.values).toHaveLength(12);
    expect(block.left).toBe(columnNumber("B"));
  });

  test("a single selected cell stands for the table around it", async () => {
    const excel = mockExcel({ Data: sampleGrid() }, "Data!B3");
    const block = await new ExcelPort({}, excel.run).selectedBlock();
    expect(block.sheet).toBe("Data");
    expect(block.address).toBe("A1:C12");
  });

  test("sheet names come from the loaded worksheet collection", async () => {
    const excel = mockExcel({ Data: sampleGrid(), Results: [] });
    expect(await new ExcelPort({}, excel.run).sheetNames()).toEqual(["Data", "Results"]);
    expect(excel.loads).toEqual(["items/name"]);
  });

  test("isEmpty asks Excel for the used part of the block", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    const port = new ExcelPort({}, excel.run);
    expect(await port.isEmpty("Data", "E1:F20")).toBe(true);
    expect(await port.isEmpty("Data", "A1:B2")).toBe(false);
  });

  test("a bad address is refused before any request", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    await expect(new ExcelPort({}, excel.run).readBlock("Data", "not an address")).rejects.toThrow(
      '"not an address" is not a cell address.',
    );
    expect(excel.created).toHaveLength(0);
  });
});

describe("ExcelPort.readGrownBlock: rows appended below or deleted from the bottom", () => {
  test("rows entered below the table are read in chunks up to the first blank row", async () => {
    const grid = sampleGrid();
    grid.push([12, 6, "yes"], [13, 6.5, "no"], ["", "", ""], ["notes", "", ""]);
    const excel = mockExcel({ Data: grid });
    const port = new ExcelPort({ chunkCells: 6 }, excel.run);
    const block = await port.readGrownBlock("Data", "A1:C12");
    expect(block.address).toBe("A1:C14");
    expect(block.values.slice(12)).toEqual([
      [12, 6, "yes"],
      [13, 6.5, "no"],
    ]);
    // 6 cells per chunk = 2 rows: the block (6 chunks), the used range (A1:C16, for where to stop),
    // then rows 13-14, then 15-16 where the blank row ends the table.
    expect(excel.created.map((c) => c.address).slice(-4)).toEqual(["A11:C12", "A1:C16", "A13:C14", "A15:C16"]);
  });

  test("with nothing below, only the block is read and its address stays", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    const block = await new ExcelPort({}, excel.run).readGrownBlock("Data", "A1:C12");
    expect(block.address).toBe("A1:C12");
    // The block, then the used range, which ends at the block: no further read.
    expect(excel.created.map((c) => c.address)).toEqual(["A1:C12", "A1:C12"]);
  });

  test("rows cleared at the bottom shrink the table and nothing below is read", async () => {
    const grid = sampleGrid();
    grid[10] = ["", "", ""];
    grid[11] = ["", "", ""];
    grid.push([99, 1, "yes"]);
    const excel = mockExcel({ Data: grid });
    const block = await new ExcelPort({}, excel.run).readGrownBlock("Data", "A1:C12");
    expect(block.address).toBe("A1:C10");
    expect(block.values).toHaveLength(10);
    expect(excel.created.map((c) => c.address)).toEqual(["A1:C12"]);
  });
});

describe("ExcelPort writing", () => {
  test("adding a sheet whose name is taken (in any case) appends a number", async () => {
    const excel = mockExcel({ Data: sampleGrid(), Results: [] });
    const port = new ExcelPort({}, excel.run);
    expect(await port.addSheet("results")).toBe("results (2)");
    expect(await port.addSheet("Model")).toBe("Model");
    expect(excel.added).toEqual(["results (2)", "Model"]);
  });

  test("formulas are written through Range.formulas, in chunks", async () => {
    const excel = mockExcel({ Results: [] });
    const port = new ExcelPort({ chunkCells: 4 }, excel.run);
    await port.write({
      sheet: "Results",
      at: "B2",
      values: [["=ODDS.FIT(Data!A2:A9,Data!B2:C9)", null], ["=1+1", "x"], ["=2", 3]],
      formulas: true,
    });
    expect(excel.created.map((c) => c.address)).toEqual(["B2:C3", "B4:C4"]);
    expect(excel.created[0].range.formulas).toEqual([["=ODDS.FIT(Data!A2:A9,Data!B2:C9)", ""], ["=1+1", "x"]]);
    expect(excel.created[1].range.formulas).toEqual([["=2", 3]]);
  });

  test("literal text that starts with '=' is written as text, not as a formula", async () => {
    const excel = mockExcel({ Results: [] });
    await new ExcelPort({}, excel.run).write({ sheet: "Results", at: "A1", values: [["=not a formula", 2]] });
    expect(excel.created[0].range.values).toEqual([["=not a formula", 2]]);
    expect(excel.created[0].range.numberFormat).toEqual([["@", "General"]]);
  });

  test("clear clears values and formats of the block", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    await new ExcelPort({}, excel.run).clear("Data", "D1:E12");
    expect(excel.created[0].address).toBe("D1:E12");
    expect(excel.created[0].range.clearedAll).toBe(true);
  });
});

describe("ExcelPort highlighting, selection and events", () => {
  test("rowRuns merges consecutive rows and drops repeats", () => {
    expect(rowRuns([9, 3, 4, 5, 4, 12, 11])).toEqual([
      [3, 5],
      [9, 9],
      [11, 12],
    ]);
    expect(rowRuns([])).toEqual([]);
  });

  test("highlighting fills runs of rows within the block's columns with our colour", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    await new ExcelPort({}, excel.run).highlightRows("Data", "A1:C12", [4, 5, 9], true);
    const painted = excel.created.filter((c) => c.range.format.fill.color === OUR_FILL);
    expect(painted.map((c) => c.address)).toEqual(["A4:C5", "A9:C9"]);
  });

  test("removing the highlight gives each row its own fill back, or clears it", async () => {
    const excel = mockExcel({ Data: sampleGrid() }, "Data!A1", { "A7:C7": "#C6E0B4" });
    const port = new ExcelPort({}, excel.run);
    await port.highlightRows("Data", "A1:C12", [7, 8], true);
    excel.created.length = 0;
    await port.highlightRows("Data", "A1:C12", [7, 8], false);
    const byAddress = Object.fromEntries(excel.created.map((c) => [c.address, c.range.format.fill]));
    expect(byAddress["A7:C7"].color).toBe("#C6E0B4");
    expect(byAddress["A7:C7"].cleared).toBeUndefined();
    expect(byAddress["A8:C8"].cleared).toBe(true);
  });

  test("highlighting a row twice still restores its original fill", async () => {
    const excel = mockExcel({ Data: sampleGrid() }, "Data!A1", { "A3:C3": "#BDD7EE" });
    const port = new ExcelPort({}, excel.run);
    await port.highlightRows("Data", "A1:C12", [3], true);
    excel.fills["A3:C3"] = OUR_FILL; // what Excel now reports for that row
    await port.highlightRows("Data", "A1:C12", [3], true);
    excel.created.length = 0;
    await port.highlightRows("Data", "A1:C12", [3], false);
    expect(excel.created[0].range.format.fill.color).toBe("#BDD7EE");
  });

  test("selecting a row activates the sheet and selects the row within the block's columns", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    await new ExcelPort({}, excel.run).selectRow("Data", "A1:C12", 8);
    expect(excel.created[0].address).toBe("A8:C8");
    expect(excel.created[0].range.selected).toBe(true);
    expect(excel.root.context.workbook.worksheets.sheet_Data.activated).toBe(true);
  });

  test("onChanged registers on the worksheet and calls the handler when Excel fires", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    let calls = 0;
    await new ExcelPort({}, excel.run).onChanged("Data", () => calls++);
    expect(excel.events.map((e) => e.sheet)).toEqual(["Data"]);
    await excel.events[0].handler();
    expect(calls).toBe(1);
  });
});

describe("ExcelPort keeping text (the kept model)", () => {
  test("ensureHiddenSheet adds the sheet hidden when it is missing and leaves an existing one alone", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    const port = new ExcelPort({}, excel.run);
    expect(await port.ensureHiddenSheet("OddsmithModels")).toBe(true);
    expect(excel.added).toEqual(["OddsmithModels"]);
    expect(excel.addedSheets[0].visibility).toBe("Hidden");
    expect(await port.ensureHiddenSheet("Data")).toBe(false);
    expect(excel.added).toEqual(["OddsmithModels"]);
  });

  test("writeText formats every cell as text before setting it, and splits a long row into requests", async () => {
    const excel = mockExcel({ Data: sampleGrid() });
    const port = new ExcelPort({}, excel.run);
    const part = "x".repeat(30_000);
    // Header + 40 parts of 30,000 characters: 1,200,000 characters, more than one request carries.
    const row = ["oddsmith-model 1.0; ...", ...Array.from({ length: 40 }, (_, k) => `part ${k + 1}/40:${part}`), "=looks like a formula"];
    await port.writeText("Data", "A2", [row]);
    const writes = excel.created.filter((c) => c.range.values !== undefined && c.range.numberFormat !== undefined && Array.isArray(c.range.numberFormat));
    expect(writes.length).toBe(2);
    expect(writes.map((w) => w.address)).toEqual(["A2:AH2", "AI2:AP2"]);
    for (const w of writes) {
      expect((w.range.numberFormat as string[][])[0].every((f) => f === "@")).toBe(true);
      const chars = (w.range.values as string[][])[0].reduce((n, v) => n + v.length, 0);
      expect(chars).toBeLessThanOrEqual(1_000_000);
    }
    const written = writes.flatMap((w) => (w.range.values as string[][])[0]);
    expect(written).toEqual(row);
  });
});

/** The brief's agreement for a model read back from its kept cells (JSON keeps doubles: 0 expected). */
const KEPT_ROUND_TRIP = 1e-12;

describe("ExcelPort: a kept model written through the Excel API reads back with ODDS.KEPT", () => {
  test("the cells the port writes for a kept model, read back as Excel returns them, score as the fitted model to 1e-12", async () => {
    const grid = sampleGrid();
    const labels = grid.map((r) => [r[2]]);
    const predictors = grid.map((r) => [r[0], r[1] === "" ? null : r[1]]);
    // Weight and moisture against the yes/no flag (row 5's blank moisture is skipped in the fit).
    const model = trainModel(labels, predictors, { penalty: 0.5 });
    const excel = mockExcel({ Data: grid, OddsmithModels: [] });
    const place = await keepInWorkbook(new ExcelPort({}, excel.run), paneDescription(model, "flag model", "2026-12-05T13:00:00Z"));
    expect(place).toMatchObject({ row: 2, reference: "OddsmithModels!2:2" });
    const writes = excel.created.filter((c) => Array.isArray(c.range.numberFormat) && c.range.values !== undefined);
    const row = writes.flatMap((w) => (w.range.values as string[][])[0]);
    expect(writes.every((w) => (w.range.numberFormat as string[][])[0].every((f) => f === "@"))).toBe(true);
    expect(row.length).toBe(place.parts + 1);
    const scored = keptCell([row], predictors, null);
    const p = scoreRows(model, predictors).prediction.probabilities[1];
    for (let i = 0; i < p.length; i++) {
      if (Number.isNaN(p[i])) expect(scored[i + 1][0]).toBe("");
      else expect(Math.abs((scored[i + 1][0] as number) - p[i])).toBeLessThanOrEqual(KEPT_ROUND_TRIP);
    }
  });
});
