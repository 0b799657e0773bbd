/**
 * The basis section's logic (BasisController) against the in-memory workbook: it reads the pane's
 * table as its source, previews recipes, writes generated columns beside the table, ticks them as
 * predictors in place of their sources, and removes them again. The view only renders this state
 * (browser tests: test/browser/workbench.test.ts).
 *
 * Reference for the values: buildBasisColumns on the same cells (the spline itself is checked against
 * R's splines::ns in test/unit/engine/basis).
 */
import { loadDemo } from "../../../src/preview/demo";
import { evaluateFormula } from "../../../src/preview/formulas";
import { buildBasisColumns } from "../../../src/shared/basisColumns";
import { formatMessage } from "../../../src/shared/messages";
import { BasisController } from "../../../src/taskpane/basisController";
import { MemoryPort, MemoryWorkbook } from "../../../src/taskpane/memoryPort";
import { PaneController } from "../../../src/taskpane/paneController";

const RECIPE = "firmness: ns(df=3)";
/** The demo table: header row and 240 crates in A1:H241. */
const TABLE_ROWS = 241;

async function paneOnDemo() {
  const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
  const sheet = loadDemo(workbook);
  workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
  const port = new MemoryPort(workbook);
  const pane = new PaneController({ port, runner: "inline", refreshDelayMs: 0 });
  const basis = new BasisController(pane, port);
  const sourceRead = new Promise<void>((resolve) => basis.subscribe((c) => c === "source" && resolve()));
  await pane.useSelection();
  await sourceRead;
  return { workbook, sheet, pane, basis };
}

function names(pane: PaneController, indices: number[]): string[] {
  return indices.map((i) => pane.data!.columns[i].name);
}

describe("BasisController", () => {
  test("reads the pane's table as its source and offers the number columns", async () => {
    const { basis } = await paneOnDemo();
    expect(basis.sourceProblem).toBeNull();
    expect(basis.source!.block.address).toBe("A1:H241");
    expect(basis.numericColumns().map((s) => s.name)).toEqual(["days_stored", "firmness", "brix", "bruises"]);
  });

  test("writes one recipe item per picked column, and none for a column left as it is", async () => {
    const { basis } = await paneOnDemo();
    const recipe = basis.recipeOf([
      { column: "days_stored", transform: "", setting: null, value: 0 },
      { column: "firmness", transform: "ns", setting: "df", value: 3 },
      { column: "brix", transform: "z", setting: null, value: 0 },
    ]);
    expect(recipe).toBe("firmness: ns(df=3); brix: z");
  });

  test("previews the new columns of a recipe, and a broken recipe's catalogue message as an error", async () => {
    const { basis } = await paneOnDemo();
    basis.preview(RECIPE);
    expect(basis.line).toEqual({ text: "New columns: ns(firmness)1, ns(firmness)2, ns(firmness)3.", error: false });
    basis.preview("ripeness: z");
    expect(basis.line.error).toBe(true);
    expect(basis.line.text).toBe(
      formatMessage("RECIPE_UNKNOWN_COLUMN", { column: "ripeness", argument: "data", headers: '"crate", "block", "days_stored", "firmness", "brix", "bruises", "held" and "grade"' }),
    );
  });

  test("writes the columns beside the table as a live formula and ticks them in place of their source", async () => {
    const { workbook, sheet, pane, basis } = await paneOnDemo();
    expect(names(pane, pane.choice!.predictors)).toContain("firmness");
    await basis.write(RECIPE, "formula");
    expect(basis.line).toEqual({
      text: `Added 3 columns at ${sheet}!J1:L241, ticked as predictors in place of firmness. Press Fit to refit.`,
      error: false,
    });
    // The formula spilled the same values the shared builder computes over the table.
    const expected = buildBasisColumns(workbook.read(sheet, { top: 1, left: 1, bottom: TABLE_ROWS, right: 8 }), RECIPE, null);
    expect(workbook.value(sheet, 1, 10)).toBe(expected[0][0]);
    expect(workbook.value(sheet, 100, 11)).toBe(expected[99][1]);
    // The pane's table now spans the block; its columns are predictors and firmness is not.
    expect(pane.data!.block.address).toBe("A1:L241");
    const ticked = names(pane, pane.choice!.predictors);
    expect(ticked).toEqual(expect.arrayContaining(["ns(firmness)1", "ns(firmness)2", "ns(firmness)3"]));
    expect(ticked).not.toContain("firmness");
    expect(pane.generated).toHaveLength(1);
  });

  test("removes the block it wrote and re-reads the table without it", async () => {
    const { workbook, sheet, pane, basis } = await paneOnDemo();
    await basis.write(RECIPE, "values");
    expect(typeof workbook.value(sheet, 2, 10)).toBe("number");
    await basis.remove();
    expect(basis.line).toEqual({ text: "Generated columns removed.", error: false });
    expect(workbook.value(sheet, 2, 10)).toBeNull();
    expect(pane.data!.block.address).toBe("A1:H241");
    expect(pane.generated).toHaveLength(0);
    expect(basis.written).toBeNull();
  });

  test("refuses to write over cells that are not empty, and writes nothing", async () => {
    const { workbook, sheet, pane, basis } = await paneOnDemo();
    workbook.setValues(sheet, 5, 11, [["in the way"]]);
    await basis.write(RECIPE, "formula");
    expect(basis.line.text).toBe(formatMessage("BASIS_TARGET_NOT_EMPTY", { address: "J1:L241", sheet }));
    expect(workbook.value(sheet, 1, 10)).toBeNull();
    expect(pane.generated).toHaveLength(0);
  });

  test("asks for a recipe before writing", async () => {
    const { basis } = await paneOnDemo();
    await basis.write("  ", "formula");
    expect(basis.line.text).toBe("Choose a transform for a column (or type a recipe) first.");
  });
});
