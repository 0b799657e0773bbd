/**
 * The pane's logic driven end to end against the in-memory workbook with the workbench's formula
 * evaluator: set-up guesses, the fit, the live formulas on the results sheet, the borderline review
 * (checked against statsmodels on the same data), row selection, highlighting, refresh after an
 * edit, cancel, and failures shown as catalogue messages.
 */
import fixture from "../../fixtures/boundary/demo-borderline.json";
import { MemoryPort, MemoryWorkbook } from "../../../src/taskpane/memoryPort";
import { evaluateFormula } from "../../../src/preview/formulas";
import { loadDemo } from "../../../src/preview/demo";
import { PaneController } from "../../../src/taskpane/paneController";
import { InlineFitRunner } from "../../../src/taskpane/fitRunner";
import { nearBoundaryRows } from "../../../src/engine/boundary";
import { scoreRows, trainModel } from "../../../src/engine/model";
import type { CellValue } from "../../../src/engine/types";
import { readModelOptions } from "../../../src/shared/fitService";
import { DEMO_SHEETS } from "../../../src/preview/demo";

/**
 * Agreement with statsmodels: both fits converge to |relative change| < 1e-10 on the deviance, so
 * probabilities agree to about 1e-8; 1e-6 leaves room for different iteration paths.
 */
const PROBABILITY_TOLERANCE = 1e-6;

async function setUp() {
  const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
  const sheet = loadDemo(workbook);
  workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
  const port = new MemoryPort(workbook);
  const controller = new PaneController({ port, runner: "inline", refreshDelayMs: 0 });
  await controller.useSelection();
  return { workbook, sheet, port, controller };
}

/** The engine's borderline rows of the demo layout (label G, predictors C:F), 0.5 threshold, 0.1 band. */
function engineReview(values: CellValue[][]) {
  const options = readModelOptions("test", [["penalty=0; level=0.95; threshold=0.5"]]);
  const model = trainModel(values.map((r) => [r[6]]), values.map((r) => r.slice(2, 6)), options.model);
  return nearBoundaryRows(scoreRows(model, null, { threshold: 0.5 }).prediction, { threshold: 0.5, band: 0.1, undecided: true, limit: 200 });
}

/** Wait until the controller reports a settled status after a refresh. */
async function settle(controller: PaneController, phases = ["done", "failed", "cancelled"]): Promise<void> {
  for (let i = 0; i < 400; i++) {
    await new Promise((r) => setTimeout(r, 5));
    if (phases.includes(controller.status.phase)) return;
  }
  throw new Error(`status stayed ${controller.status.phase}`);
}

describe("pane set-up", () => {
  test("a single picked cell stands for the whole table; the two-class column is proposed as label", async () => {
    const { controller } = await setUp();
    expect(controller.data!.block.address).toBe("A1:H241");
    expect(controller.data!.table.rows).toBe(240);
    expect(controller.data!.columns[controller.choice!.label].name).toBe("held");
    expect(controller.choice!.predictors.map((p) => controller.data!.columns[p].name)).toEqual(["days_stored", "firmness", "brix", "bruises"]);
    expect(controller.labelClasses()).toEqual(["no", "yes"]);
  });

  test("choosing a new label removes it from the predictors and resets the class of interest", async () => {
    const { controller } = await setUp();
    controller.setChoice({ focusClass: "yes" });
    controller.setChoice({ label: 3 });
    expect(controller.choice!.predictors).not.toContain(3);
    expect(controller.choice!.focusClass).toBeNull();
  });

  test("fitting without any predictor says what to do", async () => {
    const { controller } = await setUp();
    controller.setChoice({ predictors: [] });
    await controller.fit();
    expect(controller.status.phase).toBe("failed");
    expect(controller.status.message).toBe('The option predictors cannot be "none". Tick at least one predictor column.');
  });
});

describe("pane fit and borderline review", () => {
  test("the borderline list equals statsmodels' on the demo data (threshold 0.5, band 0.1, 95% intervals)", async () => {
    const { controller } = await setUp();
    await controller.fit();
    expect(controller.status.phase).toBe("done");
    const review = controller.review!;
    expect(review.review.withinBand).toBe(fixture.counts.withinBand);
    expect(review.review.undecidedOnly).toBe(fixture.counts.undecidedOnly);
    expect(review.review.total).toBe(fixture.counts.total);
    expect(review.lines.map((l) => l.dataRow)).toEqual(fixture.borderline.map((r) => r.row));
    review.lines.forEach((l, k) => {
      expect(Math.abs(l.probability - fixture.borderline[k].probability)).toBeLessThan(PROBABILITY_TOLERANCE);
      expect([l.withinBand, l.undecided]).toEqual([fixture.borderline[k].withinBand, fixture.borderline[k].undecided]);
    });
    // Sheet rows: data row 0 is sheet row 2 (header on row 1).
    expect(review.lines[0].sheetRow).toBe(review.lines[0].dataRow + 2);
    expect(review.keyNames).toEqual(["crate", "days_stored", "firmness"]);
    expect(review.probabilityLabel).toBe("P(yes)");
    expect(review.summary).toBe(
      "77 rows lie within 0.10 of the threshold 0.50. 27 more rows have a 95% interval that contains the threshold. 240 rows scored.",
    );
  });

  test("the live formulas on the results sheet give the pane's probabilities", async () => {
    const { controller, workbook } = await setUp();
    await controller.fit();
    const layout = controller.layout!;
    expect(layout.sheet).toBe("Oddsmith results");
    expect(layout.anchors.map((a) => [a.what, a.at])).toEqual([
      ["probabilities", "A1"],
      ["classes", "B1"],
      ["margins", "C1"],
      ["coefficients", "E1"],
      ["report", "Q1"],
    ]);
    expect(workbook.input("Oddsmith results", 1, 1)).toBe(
      '=ODDS.PROB(Crates!$G$1:$G$241, Crates!$C$1:$F$241, , "penalty=0; level=0.95; threshold=0.5")',
    );
    expect(workbook.value("Oddsmith results", 1, 1)).toBe("P(yes)");
    const p = controller.outcome!.scores.prediction.probabilities[1];
    for (const i of [0, 17, 239]) expect(workbook.value("Oddsmith results", i + 2, 1)).toBeCloseTo(p[i], 12);
    // The coefficient table spills from E1 with its header.
    expect(workbook.value("Oddsmith results", 1, 6)).toBe("term");
    for (const [k, name] of ["(intercept)", "days_stored", "firmness", "brix", "bruises"].entries()) {
      expect(workbook.value("Oddsmith results", k + 2, 6)).toBe(name);
      expect(workbook.value("Oddsmith results", k + 2, 7)).toBeCloseTo((fixture.coefficients as Record<string, number>)[name], 6);
    }
  });

  test("changing the band or threshold refreshes the list without refitting", async () => {
    const { controller } = await setUp();
    await controller.fit();
    const model = controller.outcome!.model;
    await controller.setReview({ band: 0.02, undecided: false });
    expect(controller.outcome!.model).toBe(model);
    expect(controller.review!.lines.every((l) => l.margin <= 0.02 && l.withinBand)).toBe(true);
    await controller.setReview({ threshold: 0.3 });
    expect(controller.review!.lines.every((l) => Math.abs(l.probability - 0.3) <= 0.02)).toBe(true);
    expect(controller.choice!.threshold).toBe(0.3);
  });

  test("a band outside 0..1 is refused with a message", async () => {
    const { controller } = await setUp();
    await controller.fit();
    await controller.setReview({ band: 2 });
    expect(controller.status.phase).toBe("failed");
    expect(controller.status.message).toContain("The option band cannot be \"2\"");
    expect(controller.reviewSettings.band).toBe(0.1);
  });

  test("selecting a listed row selects that sheet row within the table's columns", async () => {
    const { controller, workbook } = await setUp();
    await controller.fit();
    const line = controller.review!.lines[3];
    await controller.selectRow(line.sheetRow);
    expect(workbook.selection).toEqual({ sheet: "Crates", rect: { top: line.sheetRow, bottom: line.sheetRow, left: 1, right: 8 } });
  });

  test("highlight marks every borderline row (not only the listed ones) and removal unmarks exactly those", async () => {
    const { controller, workbook } = await setUp();
    await controller.fit();
    await controller.setReview({ limit: 5 });
    await controller.highlightAll();
    const marked = workbook.markedRows("Crates");
    expect(marked).toHaveLength(fixture.counts.total);
    expect(marked).toEqual(fixture.borderline.map((r) => r.row + 2).sort((a, b) => a - b));
    expect(controller.review!.lines).toHaveLength(5);
    await controller.removeHighlight();
    expect(workbook.markedRows("Crates")).toEqual([]);
  });

  test("editing a data cell refits, refreshes the list and the formulas recalculate", async () => {
    const { controller, workbook } = await setUp();
    await controller.fit();
    const firstRow = controller.review!.lines[0].sheetRow;
    const oldFormulaValue = workbook.value("Oddsmith results", firstRow, 1) as number;
    // Make that crate very bruised: its probability of being held rises far above the threshold.
    workbook.setCell("Crates", firstRow, 6, 9);
    await new Promise((r) => setTimeout(r, 10));
    await settle(controller);
    expect(controller.data!.block.values[firstRow - 1][5]).toBe(9);
    expect(controller.review!.lines.map((l) => l.sheetRow)).not.toContain(firstRow);
    const recomputed = nearBoundaryRows(controller.outcome!.scores.prediction, { threshold: 0.5, band: 0.1 });
    expect(controller.review!.review.total).toBe(recomputed.total);
    const newFormulaValue = workbook.value("Oddsmith results", firstRow, 1) as number;
    expect(newFormulaValue).toBeGreaterThan(oldFormulaValue + 0.2);
    expect(newFormulaValue).toBeCloseTo(controller.outcome!.scores.prediction.probabilities[1][firstRow - 2], 12);
  });

  test("rows appended directly below the table are taken in: new extent, refit, list and rewritten formulas", async () => {
    const { controller, workbook } = await setUp();
    await controller.fit();
    // Two new crates typed under the table (rows 242 and 243).
    const added: CellValue[][] = [
      ["C-241", "Hilltop", 30, 55, 14.5, 1, "yes", "market"],
      ["C-242", "River bend", 20, 52, 14.0, 3, "no", "juice"],
    ];
    workbook.setValues("Crates", 242, 1, added);
    await new Promise((r) => setTimeout(r, 10));
    await settle(controller);
    expect(controller.data!.block.address).toBe("A1:H243");
    expect(controller.data!.table.rows).toBe(242);
    expect(controller.outcome!.model.fit.rowsUsed).toBe(242);
    // The list and counts are the engine's on the grown data.
    const values = [...DEMO_SHEETS[0].values, ...added];
    const expected = engineReview(values);
    expect(controller.review!.review.total).toBe(expected.total);
    expect(controller.review!.review.withinBand).toBe(expected.withinBand);
    expect(controller.review!.lines.map((l) => l.dataRow)).toEqual(expected.rows.map((r) => r.row));
    // The formulas were rewritten over the grown ranges and show the new rows' probabilities.
    expect(workbook.input("Oddsmith results", 1, 1)).toBe(
      '=ODDS.PROB(Crates!$G$1:$G$243, Crates!$C$1:$F$243, , "penalty=0; level=0.95; threshold=0.5")',
    );
    const p = controller.outcome!.scores.prediction.probabilities[1];
    expect(workbook.value("Oddsmith results", 243, 1)).toBe(p[241]);
  });

  test("rows deleted from the bottom of the table leave it: smaller extent, refit and shorter formulas", async () => {
    const { controller, workbook } = await setUp();
    await controller.fit();
    workbook.clearRect("Crates", { top: 240, left: 1, bottom: 241, right: 8 });
    await new Promise((r) => setTimeout(r, 10));
    await settle(controller);
    expect(controller.data!.block.address).toBe("A1:H239");
    expect(controller.outcome!.model.fit.rowsUsed).toBe(238);
    const expected = engineReview(DEMO_SHEETS[0].values.slice(0, 239));
    expect(controller.review!.review.total).toBe(expected.total);
    expect(controller.review!.lines.map((l) => l.dataRow)).toEqual(expected.rows.map((r) => r.row));
    expect(workbook.input("Oddsmith results", 1, 1)).toContain("Crates!$G$1:$G$239, Crates!$C$1:$F$239");
    expect(workbook.value("Oddsmith results", 239, 1)).toBe(controller.outcome!.scores.prediction.probabilities[1][237]);
    expect(workbook.value("Oddsmith results", 240, 1)).toBeNull();
  });

  test("an edit inside the table keeps the formulas as written (no rewrite)", async () => {
    const { controller, workbook, port } = await setUp();
    await controller.fit();
    const writes = jest.spyOn(port, "write");
    workbook.setCell("Crates", 5, 4, 40);
    await new Promise((r) => setTimeout(r, 10));
    await settle(controller);
    expect(controller.data!.block.address).toBe("A1:H241");
    expect(writes).not.toHaveBeenCalled();
  });

  test("a cancelled fit writes nothing and says so", async () => {
    const { controller, workbook } = await setUp();
    const run = controller.fit();
    controller.cancel();
    await run;
    expect(controller.status.phase).toBe("cancelled");
    // No results sheet: only the demo workbook's own sheets.
    expect(workbook.sheetNames()).toEqual(DEMO_SHEETS.map((s) => s.name));
    expect(controller.outcome).toBeNull();
  });

  test("a separated fit shows the engine's reason instead of numbers", async () => {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = workbook.addSheet("Tiny");
    workbook.setValues(sheet, 1, 1, [["x", "y"], [1, "a"], [2, "a"], [3, "a"], [4, "b"], [5, "b"], [6, "b"]]);
    const controller = new PaneController({ port: new MemoryPort(workbook), runner: "inline" });
    await controller.useTable(sheet, "A1:B7");
    await controller.fit();
    expect(controller.status.phase).toBe("failed");
    expect(controller.status.message).toMatch(/separat/i);
    expect(controller.review).toBeNull();
  });

  test("the inline runner is the one used where no Worker exists", () => {
    expect(typeof Worker).toBe("undefined");
    expect(new InlineFitRunner().kind).toBe("inline");
  });
});

describe("pane with several classes", () => {
  test("a three-class label fits a softmax model, writes one probability column per class and lists close calls", async () => {
    const { controller, workbook } = await setUp();
    const grade = controller.data!.columns.find((c) => c.name === "grade")!.index;
    controller.setChoice({ label: grade, focusClass: "juice" });
    expect(controller.labelClasses()).toEqual(["juice", "market", "premium"]);
    await controller.fit();
    expect(controller.status.phase).toBe("done");
    expect(controller.outcome!.model.fit.referenceClass).toBe("juice");
    expect(controller.layout!.anchors.map((a) => `${a.what}@${a.at}`)).toEqual(["probabilities@A1", "classes@D1", "coefficients@F1", "report@R1"]);
    expect(controller.layout!.anchors[0].formula).toContain('"reference=juice; penalty=0; level=0.95"');
    expect(workbook.read("Oddsmith results", { top: 1, left: 1, bottom: 1, right: 4 })[0].every((v) => typeof v === "string" && !v.startsWith("#"))).toBe(true);
    const review = controller.review!;
    expect(review.review.kind).toBe("multiclass");
    expect(review.probabilityLabel).toBe("P(top class)");
    const expected = nearBoundaryRows(controller.outcome!.scores.prediction, { band: 0.1, limit: 200 });
    expect(review.lines.map((l) => l.dataRow)).toEqual(expected.rows.map((r) => r.row));
    for (const l of review.lines) expect(l.predicted).not.toBe(l.runnerUp);
    expect(review.summary).toMatch(/^\d+ rows have their two most likely classes within 0.10 of each other\./);
  });

  test("progress of a chunked read shows as a fraction with a count", async () => {
    const { controller } = await setUp();
    controller.transferProgress({ task: "read", done: 50_000, total: 200_000 });
    expect(controller.status).toEqual({ phase: "reading", message: "Reading 50,000 of 200,000 cells (25%)...", progress: 0.25, busy: true });
  });
});
