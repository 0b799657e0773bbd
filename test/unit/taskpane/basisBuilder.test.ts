import {
  basisFormula,
  callText,
  defaultChoices,
  executeWrite,
  formulaString,
  manyColumnsWarning,
  planWrite,
  previewBasis,
  readBasisSource,
  recipeColumn,
  recipeFromChoices,
  undoWrite,
  type BasisSource,
} from "../../../src/taskpane/basisBuilder";
import { buildBasisColumns } from "../../../src/shared/basisColumns";
import { cellAddress, parseAddress, rectAddress } from "../../../src/taskpane/a1";
import type { SheetBlock, WorkbookPort, WriteRequest } from "../../../src/taskpane/port";
import type { CellValue } from "../../../src/engine/types";

/** A small in-memory workbook implementing the port, recording writes and clears. */
class FakePort implements WorkbookPort {
  sheets = new Map<string, Map<string, CellValue>>();
  writes: WriteRequest[] = [];
  clears: string[] = [];
  constructor(private selection: { sheet: string; address: string }) {}

  put(sheet: string, top: number, left: number, values: CellValue[][]): void {
    if (!this.sheets.has(sheet)) this.sheets.set(sheet, new Map());
    values.forEach((row, i) => row.forEach((v, j) => this.sheets.get(sheet)!.set(cellAddress(top + i, left + j), v)));
  }
  get(sheet: string, row: number, col: number): CellValue {
    return this.sheets.get(sheet)?.get(cellAddress(row, col)) ?? null;
  }
  async selectedBlock(): Promise<SheetBlock> {
    return this.readBlock(this.selection.sheet, this.selection.address);
  }
  async readBlock(sheet: string, address: string): Promise<SheetBlock> {
    const r = parseAddress(address)!;
    const values: CellValue[][] = [];
    for (let i = r.top; i <= r.bottom; i++) {
      const row: CellValue[] = [];
      for (let j = r.left; j <= r.right; j++) row.push(this.get(sheet, i, j));
      values.push(row);
    }
    return { sheet, address, top: r.top, left: r.left, values };
  }
  async sheetNames(): Promise<string[]> {
    return [...this.sheets.keys()];
  }
  async addSheet(name: string): Promise<string> {
    let final = name;
    for (let k = 2; this.sheets.has(final); k++) final = `${name} (${k})`;
    this.sheets.set(final, new Map());
    return final;
  }
  async ensureHiddenSheet(name: string): Promise<boolean> {
    if (this.sheets.has(name)) return false;
    this.sheets.set(name, new Map());
    return true;
  }
  async writeText(sheet: string, at: string, values: string[][]): Promise<void> {
    const r = parseAddress(at)!;
    this.put(sheet, r.top, r.left, values);
  }
  async isEmpty(sheet: string, address: string): Promise<boolean> {
    const r = parseAddress(address)!;
    for (let i = r.top; i <= r.bottom; i++) for (let j = r.left; j <= r.right; j++) if (this.get(sheet, i, j) !== null && this.get(sheet, i, j) !== "") return false;
    return true;
  }
  async write(request: WriteRequest): Promise<void> {
    this.writes.push(request);
    const at = parseAddress(request.at)!;
    this.put(request.sheet, at.top, at.left, request.values);
  }
  async clear(sheet: string, address: string): Promise<void> {
    this.clears.push(`${sheet}!${address}`);
    const r = parseAddress(address)!;
    for (let i = r.top; i <= r.bottom; i++) for (let j = r.left; j <= r.right; j++) this.sheets.get(sheet)?.delete(cellAddress(i, j));
  }
  async highlightRows(): Promise<void> {}
  async selectRow(): Promise<void> {}
  async onChanged(): Promise<() => void> {
    return () => undefined;
  }
}

// Invented scenario: a small orchard's fruit crates (weight, days since picking, variety).
const crates: CellValue[][] = [
  ["weight", "days", "variety"],
  [12.1, 3, "Bramley"],
  [10.4, 8, "Cox"],
  [11.8, null, "Bramley"],
  [13.0, 1, "Russet"],
  [9.7, 12, "Cox"],
  [12.6, 5, "Bramley"],
];

function setup(top = 2, left = 2) {
  const port = new FakePort({ sheet: "Crates", address: rectAddress({ top, left, bottom: top + crates.length - 1, right: left + 2 }) });
  port.put("Crates", top, left, crates);
  return port;
}

describe("basis builder: reading and summarising", () => {
  test("summarises each column: kind, count, blanks, min/max/mean for numbers, levels by frequency for text", async () => {
    const s = await readBasisSource(setup());
    expect(s.summaries.map((c) => [c.name, c.kind, c.count, c.blanks, c.distinct])).toEqual([
      ["weight", "number", 6, 0, 6],
      ["days", "number", 5, 1, 5],
      ["variety", "text", 6, 0, 3],
    ]);
    expect(s.summaries[1]).toMatchObject({ min: 1, max: 12, mean: 29 / 5 });
    expect(s.summaries[2].levels).toEqual([
      { level: "Bramley", count: 3 },
      { level: "Cox", count: 2 },
      { level: "Russet", count: 1 },
    ]);
    expect(s.summaries[2].min).toBeNull();
  });

  test("suggests raw for number columns and levels for text columns", async () => {
    const s = await readBasisSource(setup());
    expect(recipeFromChoices(defaultChoices(s))).toBe("weight: raw; days: raw; variety: levels");
  });

  test("a block without a header row is refused with what to do", async () => {
    const port = new FakePort({ sheet: "S", address: "A1:A3" });
    port.put("S", 1, 1, [[1], [2], [3]]);
    await expect(readBasisSource(port)).rejects.toThrow(/does not seem to start with a header row.*Select the block including its header row/);
  });
});

describe("basis builder: choices to recipe", () => {
  test("per-column transforms, joint transforms and products become recipe items", () => {
    const recipe = recipeFromChoices({
      columns: [
        { name: "weight", transforms: [{ transform: "ns", settings: { df: 3 } }, { transform: "z" }] },
        { name: "variety", transforms: [{ transform: "levels", settings: { ref: "Cox", pool: 2 } }] },
        { name: "days", transforms: [] },
      ],
      joint: [{ columns: ["weight", "days"], transform: { transform: "rbf", settings: { k: 4, centres: "kmeans" } } }],
      products: [["weight", "days"]],
    });
    expect(recipe).toBe("weight: ns(df=3) + z; variety: levels(ref=Cox, pool=2); weight, days: rbf(k=4, centres=kmeans); weight*days");
  });

  test("headers and values with recipe symbols are quoted; lists are bracketed", () => {
    expect(recipeColumn("weight (kg)")).toBe('"weight (kg)"');
    expect(recipeColumn("days picked")).toBe("days picked");
    expect(recipeColumn('say "hi"')).toBe('"say ""hi"""');
    expect(callText({ transform: "ns", settings: { knots: [5, 10] } })).toBe("ns(knots=[5, 10])");
    expect(callText({ transform: "levels", settings: { ref: "A, B" } })).toBe('levels(ref="A, B")');
  });

  test("the generated recipe parses back to the same columns (round trip through the parser)", async () => {
    const port = new FakePort({ sheet: "S", address: "A1:B4" });
    port.put("S", 1, 1, [["weight (kg)", "kind"], [1, "a, b"], [2, "c"], [3, "a, b"]]);
    const s = await readBasisSource(port);
    const recipe = recipeFromChoices({
      columns: [
        { name: "weight (kg)", transforms: [{ transform: "z" }] },
        { name: "kind", transforms: [{ transform: "levels", settings: { ref: "a, b" } }] },
      ],
    });
    expect(previewBasis(s, recipe).names).toEqual(["z(weight (kg))", "kind=c"]);
  });
});

describe("basis builder: preview", () => {
  test("shows the new column names and the first rows, blank where a row has a problem", async () => {
    const s = await readBasisSource(setup());
    const p = previewBasis(s, "days: log; variety: levels(ref=Bramley)", 4);
    expect(p.error).toBeNull();
    expect(p.names).toEqual(["log(days)", "variety=Cox", "variety=Russet"]);
    expect(p.rows).toEqual([
      [Math.log(3), 0, 0],
      [Math.log(8), 1, 0],
      ["", 0, 0],
      [0, 0, 1],
    ]);
    expect(p.problemRows).toBe(1);
    expect(p.firstProblem).toBe('Row 3 has no value in "days", so it cannot be scored.');
  });

  test("a recipe being typed returns its error for display instead of throwing", async () => {
    const s = await readBasisSource(setup());
    const p = previewBasis(s, "days: ns(");
    expect(p.error?.code).toBe("RECIPE_SYNTAX");
    expect(p.names).toEqual([]);
  });

  test("warns when there are fewer than 10 rows per generated column, with the numbers", async () => {
    const s = await readBasisSource(setup());
    const p = previewBasis(s, "weight: ns(3)");
    expect(p.warnings[0]).toEqual({
      code: "BASIS_MANY_COLUMNS",
      message: "The recipe makes 3 columns for 6 rows (2.0 rows per column). With fewer than 10 rows per column a fit tends to overfit or separate: use fewer or smaller transforms, or more rows.",
    });
  });

  test("the warning rule: 10 or more rows per column is quiet, fewer warns", () => {
    expect(manyColumnsWarning(10, 100)).toBeNull();
    expect(manyColumnsWarning(11, 100)?.message).toContain("11 columns for 100 rows (9.1 rows per column)");
  });
});

describe("basis builder: planning and writing", () => {
  test("beside the data: two columns right of the block, on its header row, as a live formula", async () => {
    const port = setup(2, 2); // block B2:D8
    const s = await readBasisSource(port);
    const plan = planWrite(s, "weight: z; variety: levels", { place: "beside", mode: "formula" });
    expect(plan.address).toBe("F2:H8");
    expect(plan.formula).toBe('=ODDS.BASIS(Crates!$B$2:$D$8, "weight: z; variety: levels")');
    const out = await executeWrite(port, plan);
    expect(out.status).toBe("written");
    expect(port.writes).toEqual([{ sheet: "Crates", at: "F2", values: [[plan.formula]], formulas: true }]);
  });

  test("as values: writes exactly what ODDS.BASIS returns for the same block and recipe", async () => {
    const port = setup(1, 1);
    const s = await readBasisSource(port);
    const plan = planWrite(s, "days: sqrt + z", { place: "beside", mode: "values" });
    expect(plan.values).toEqual(buildBasisColumns(crates, "days: sqrt + z", null));
    await executeWrite(port, plan);
    expect(port.get("Crates", 1, 5)).toBe("sqrt(days)");
    expect(port.get("Crates", 4, 5)).toBe(""); // the blank "days" row
    expect(port.get("Crates", 2, 5)).toBeCloseTo(Math.sqrt(3), 15);
  });

  test("refuses to overwrite non-empty cells unless confirmed, naming the cells", async () => {
    const port = setup(1, 1);
    port.put("Crates", 3, 6, [["keep me"]]);
    const s = await readBasisSource(port);
    const plan = planWrite(s, "weight: z + minmax", { place: "beside", mode: "values" });
    const blocked = await executeWrite(port, plan);
    expect(blocked).toMatchObject({ status: "blocked", address: "E1:F7" });
    if (blocked.status === "blocked") {
      expect(blocked.message.message).toBe('The cells E1:F7 on sheet "Crates" are not empty. Choose another place or a new sheet, or confirm that they may be overwritten.');
    }
    expect(port.writes).toHaveLength(0);
    expect(port.get("Crates", 3, 6)).toBe("keep me");
    const confirmed = await executeWrite(port, plan, true);
    expect(confirmed.status).toBe("written");
  });

  test("on a new sheet: column A on the data's header row, the sheet added with a free name", async () => {
    const port = setup(3, 2);
    port.sheets.set("Basis columns", new Map());
    const s = await readBasisSource(port);
    const plan = planWrite(s, "variety: levels", { place: "newSheet", mode: "formula" });
    expect(plan.address).toBe("A3:B9");
    const out = await executeWrite(port, plan);
    expect(out).toMatchObject({ status: "written", sheet: "Basis columns (2)" });
    if (out.status === "written") expect(out.undo.addedSheet).toBe("Basis columns (2)");
    expect(port.writes[0]).toMatchObject({ sheet: "Basis columns (2)", at: "A3" });
  });

  test("undo removes the generated columns and nothing else", async () => {
    const port = setup(1, 1);
    const s = await readBasisSource(port);
    const out = await executeWrite(port, planWrite(s, "weight: z", { place: "beside", mode: "values" }));
    if (out.status !== "written") throw new Error("not written");
    expect(out.undo.label).toBe("remove generated columns");
    await undoWrite(port, out.undo);
    expect(port.clears).toEqual(["Crates!E1:E7"]);
    expect(await port.isEmpty("Crates", "E1:E7")).toBe(true);
    expect(port.get("Crates", 1, 1)).toBe("weight");
  });

  test("a recipe error stops the plan with the catalogue error", async () => {
    const s: BasisSource = await readBasisSource(setup());
    expect(() => planWrite(s, "height: z", { place: "beside", mode: "formula" })).toThrow(/names the column "height"/);
  });

  test("recipes longer than 255 characters are split into joined text pieces in the formula", () => {
    const long = "a".repeat(300);
    expect(formulaString(long)).toBe(`"${"a".repeat(255)}"&"${"a".repeat(45)}"`);
    expect(formulaString('x: levels(ref="A")')).toBe('"x: levels(ref=""A"")"');
  });

  test("the formula's range covers the header and data rows only (trailing blank rows left out)", async () => {
    const port = new FakePort({ sheet: "My data", address: "A1:A6" });
    port.put("My data", 1, 1, [["x"], [1], [2], [3]]);
    const s = await readBasisSource(port);
    expect(basisFormula(s, "x: z")).toBe(`=ODDS.BASIS('My data'!$A$1:$A$4, "x: z")`);
  });
});
