import { MemoryPort, MemoryWorkbook, parseTypedInput, type FormulaEvaluator } from "../../../src/taskpane/memoryPort";
import { columnLetters, columnNumber, parseAddress, quoteSheet, splitSheet } from "../../../src/taskpane/a1";

/** A tiny evaluator for tests: =SUM(range) and =GRID(rows, cols) (a rows x cols spill of 1..n). */
const testEvaluator: FormulaEvaluator = (formula, context) => {
  const sum = /^=SUM\(([^)]+)\)$/.exec(formula);
  if (sum) {
    const { sheet, address } = splitSheet(sum[1]);
    const values = context.readRange(sheet, address).flat();
    return { values: [[values.reduce<number>((a, v) => a + (typeof v === "number" ? v : 0), 0)]] };
  }
  const grid = /^=GRID\((\d+),(\d+)\)$/.exec(formula);
  if (grid) {
    const r = Number(grid[1]);
    const c = Number(grid[2]);
    return { values: Array.from({ length: r }, (_, i) => Array.from({ length: c }, (_, j) => i * c + j + 1)) };
  }
  return { error: "#NAME?", message: "unknown" };
};

function book() {
  const wb = new MemoryWorkbook({ evaluator: testEvaluator });
  const s = wb.addSheet("Data");
  return { wb, s, port: new MemoryPort(wb) };
}

describe("A1 addresses", () => {
  test("column letters round-trip", () => {
    for (const n of [1, 26, 27, 52, 702, 703, 16384]) expect(columnNumber(columnLetters(n))).toBe(n);
    expect(columnLetters(28)).toBe("AB");
  });

  test("ranges, whole columns and whole rows parse with corners in order", () => {
    expect(parseAddress("$D$40:B2")).toEqual({ top: 2, left: 2, bottom: 40, right: 4 });
    expect(parseAddress("B:C")).toEqual({ top: 1, left: 2, bottom: 1_048_576, right: 3 });
    expect(parseAddress("3:4")).toEqual({ top: 3, left: 1, bottom: 4, right: 16_384 });
    expect(parseAddress("not a cell")).toBeNull();
    expect(parseAddress("A0")).toBeNull();
  });

  test("sheet names are quoted only when needed, and split back", () => {
    expect(quoteSheet("Crates")).toBe("Crates");
    expect(quoteSheet("Oddsmith results")).toBe("'Oddsmith results'");
    expect(quoteSheet("A1")).toBe("'A1'");
    expect(quoteSheet("Bob's")).toBe("'Bob''s'");
    expect(splitSheet("'Bob''s'!B2:C3")).toEqual({ sheet: "Bob's", address: "B2:C3" });
  });
});

describe("typed input", () => {
  test.each([
    ["", null],
    ["12.5", 12.5],
    [" -3 ", -3],
    ["1e3", 1000],
    ["true", true],
    ["FALSE", false],
    ["=SUM(A1:A2)", "=SUM(A1:A2)"],
    ["1,5", "1,5"],
    ["<img src=x onerror=alert(1)>", "<img src=x onerror=alert(1)>"],
  ])("%j is entered as %j", (text, value) => {
    expect(parseTypedInput(text)).toEqual(value);
  });
});

describe("in-memory workbook", () => {
  test("a formula sees the values of its range and recomputes after an edit", () => {
    const { wb, s } = book();
    wb.setValues(s, 1, 1, [[1], [2], [3]]);
    wb.setCell(s, 1, 3, "=SUM(A1:A3)");
    expect(wb.value(s, 1, 3)).toBe(6);
    wb.setCell(s, 2, 1, 10);
    expect(wb.value(s, 1, 3)).toBe(14);
    expect(wb.input(s, 1, 3)).toBe("=SUM(A1:A3)");
  });

  test("an array result spills right and down from its cell", () => {
    const { wb, s } = book();
    wb.setCell(s, 2, 2, "=GRID(2,3)");
    expect(wb.read(s, parseAddress("B2:D3")!)).toEqual([
      [1, 2, 3],
      [4, 5, 6],
    ]);
  });

  test("a spill blocked by an entered cell shows #SPILL! with the cell in the way", () => {
    const { wb, s } = book();
    wb.setCell(s, 3, 3, "x");
    wb.setCell(s, 2, 2, "=GRID(2,3)");
    expect(wb.value(s, 2, 2)).toBe("#SPILL!");
    expect(wb.message(s, 2, 2)).toContain("cell C3 is not empty");
    expect(wb.value(s, 2, 3)).toBeNull();
  });

  test("a formula reading another formula's spill is computed after it, whatever their order", () => {
    const { wb, s } = book();
    wb.setCell(s, 1, 1, "=SUM(C5:D6)"); // entered first, above the spill it reads
    wb.setCell(s, 5, 3, "=GRID(2,2)");
    expect(wb.value(s, 1, 1)).toBe(10);
  });

  test("a formula that reads its own cell is a cycle", () => {
    const { wb, s } = book();
    wb.setCell(s, 1, 1, "=SUM(A1:A3)");
    expect(wb.value(s, 1, 1)).toBe("#CYCLE!");
  });

  test("text that starts with '=' can be entered as text", () => {
    const { wb, s } = book();
    wb.setCell(s, 1, 1, "=not a formula", true);
    expect(wb.value(s, 1, 1)).toBe("=not a formula");
    expect(wb.isFormulaCell(s, 1, 1)).toBe(false);
  });

  test("the current region is the block of filled cells around a cell", () => {
    const { wb, s } = book();
    wb.setValues(s, 2, 2, [["a", "b"], [1, 2], [3, null]]);
    wb.setCell(s, 8, 8, "far away");
    expect(wb.currentRegion(s, 3, 3)).toEqual({ top: 2, left: 2, bottom: 4, right: 3 });
  });
});

describe("MemoryPort", () => {
  test("selectedBlock reads the table around a single picked cell", async () => {
    const { wb, s, port } = book();
    wb.setValues(s, 1, 1, [["h", "k"], [1, "a"], [2, "b"]]);
    wb.select(s, { top: 2, left: 2, bottom: 2, right: 2 });
    const block = await port.selectedBlock();
    expect([block.sheet, block.address, block.top, block.left]).toEqual(["Data", "A1:B3", 1, 1]);
    expect(block.values).toEqual([["h", "k"], [1, "a"], [2, "b"]]);
  });

  test("a whole-column read is cut to the used rows; blanks are null", async () => {
    const { wb, s, port } = book();
    wb.setValues(s, 1, 1, [[1, null], [2, 5]]);
    const block = await port.readBlock(s, "A:B");
    expect(block.address).toBe("A1:B2");
    expect(block.values).toEqual([[1, null], [2, 5]]);
  });

  test("addSheet appends a number when the name is taken", async () => {
    const { port } = book();
    expect(await port.addSheet("Data")).toBe("Data (2)");
    expect(await port.sheetNames()).toEqual(["Data", "Data (2)"]);
  });

  test("isEmpty sees entered values and spilled results", async () => {
    const { wb, s, port } = book();
    expect(await port.isEmpty(s, "A1:C3")).toBe(true);
    wb.setCell(s, 1, 1, "=GRID(3,3)");
    expect(await port.isEmpty(s, "C3")).toBe(false);
  });

  test("write enters formulas only when asked; literal text stays text", async () => {
    const { wb, s, port } = book();
    await port.write({ sheet: s, at: "A1", values: [["=GRID(1,2)"]], formulas: true });
    expect(wb.value(s, 1, 2)).toBe(2);
    await port.write({ sheet: s, at: "A3", values: [["=GRID(1,2)"]] });
    expect(wb.value(s, 3, 1)).toBe("=GRID(1,2)");
  });

  test("highlightRows marks the rows within the block's columns; off unmarks them", async () => {
    const { wb, s, port } = book();
    await port.highlightRows(s, "B1:C10", [2, 5], true);
    expect(wb.markedRows(s)).toEqual([2, 5]);
    expect(wb.isMarked(s, 2, 1)).toBe(false);
    expect(wb.isMarked(s, 2, 3)).toBe(true);
    await port.highlightRows(s, "B1:C10", [2], false);
    expect(wb.markedRows(s)).toEqual([5]);
  });

  test("selectRow selects the row across the block's columns", async () => {
    const { wb, s, port } = book();
    await port.selectRow(s, "B1:D9", 4);
    expect(wb.selection).toEqual({ sheet: s, rect: { top: 4, bottom: 4, left: 2, right: 4 } });
  });

  test("onChanged fires after input on that sheet only, asynchronously, and can be stopped", async () => {
    const { wb, s, port } = book();
    const other = wb.addSheet("Other");
    let calls = 0;
    const stop = await port.onChanged(s, () => calls++);
    wb.setCell(s, 1, 1, 5);
    expect(calls).toBe(0); // not yet: delivered after the current task, as Excel does
    await new Promise((r) => setTimeout(r, 5));
    expect(calls).toBe(1);
    wb.setCell(other, 1, 1, 5);
    await port.highlightRows(s, "A1:A1", [1], true);
    await new Promise((r) => setTimeout(r, 5));
    expect(calls).toBe(1);
    stop();
    wb.setCell(s, 2, 1, 5);
    await new Promise((r) => setTimeout(r, 5));
    expect(calls).toBe(1);
  });
});

describe("MemoryPort.readGrownBlock: the table's rows as they are now", () => {
  /** A 4-row table at B2:C5 (header and three rows), a note in B9 (rows 6-8 blank). */
  function table() {
    const t = book();
    t.wb.setValues(t.s, 2, 2, [["x", "y"], [1, "a"], [2, "b"], [3, "a"]]);
    t.wb.setCell(t.s, 9, 2, "note below the table");
    return t;
  }

  test("an unchanged table keeps its address and values", async () => {
    const { port, s } = table();
    const block = await port.readGrownBlock(s, "B2:C5");
    expect(block.address).toBe("B2:C5");
    expect(block.values).toEqual([["x", "y"], [1, "a"], [2, "b"], [3, "a"]]);
  });

  test("rows entered directly below are taken in, up to the first blank row", async () => {
    const { port, s, wb } = table();
    wb.setValues(s, 6, 2, [[4, "b"], [5, null]]);
    const block = await port.readGrownBlock(s, "B2:C5");
    expect(block.address).toBe("B2:C7");
    expect(block.values.slice(4)).toEqual([[4, "b"], [5, null]]);
  });

  test("a row with only one filled cell in the table's columns still continues the table", async () => {
    const { port, s, wb } = table();
    wb.setCell(s, 6, 3, "b");
    expect((await port.readGrownBlock(s, "B2:C5")).address).toBe("B2:C6");
  });

  test("cells beside the table's columns do not grow it", async () => {
    const { port, s, wb } = table();
    wb.setCell(s, 6, 4, 99);
    expect((await port.readGrownBlock(s, "B2:C5")).address).toBe("B2:C5");
  });

  test("rows cleared at the bottom are dropped, and what lies below the new gap is not taken", async () => {
    const { port, s, wb } = table();
    wb.clearRect(s, { top: 5, left: 2, bottom: 5, right: 3 });
    wb.setValues(s, 6, 2, [[9, "z"]]);
    const block = await port.readGrownBlock(s, "B2:C5");
    expect(block.address).toBe("B2:C4");
    expect(block.values).toEqual([["x", "y"], [1, "a"], [2, "b"]]);
  });

  test("a blank row inside the chosen block stays part of it", async () => {
    const { port, s, wb } = table();
    wb.clearRect(s, { top: 4, left: 2, bottom: 4, right: 3 });
    wb.setValues(s, 6, 2, [[4, "b"]]);
    const block = await port.readGrownBlock(s, "B2:C5");
    expect(block.address).toBe("B2:C6");
    expect(block.values[2]).toEqual([null, null]);
  });

  test("an emptied table keeps its header row only", async () => {
    const { port, s, wb } = table();
    wb.clearRect(s, { top: 2, left: 2, bottom: 5, right: 3 });
    expect((await port.readGrownBlock(s, "B2:C5")).address).toBe("B2:C2");
  });
});
