/**
 * The pane's portable model against the in-memory workbook with the workbench's formula evaluator:
 * keeping the fitted model in the hidden sheet, reading it back with =ODDS.KEPT (the same
 * probabilities as the fit, to 1e-12), replacing a kept model of the same name, the download's
 * JSON, and the plain scoring formulas written from the coefficient cells.
 */
import { MemoryPort, MemoryWorkbook } from "../../../src/taskpane/memoryPort";
import { evaluateFormula } from "../../../src/preview/formulas";
import { loadDemo } from "../../../src/preview/demo";
import { PaneController } from "../../../src/taskpane/paneController";
import { readDescription } from "../../../src/engine";
import { KEPT_SHEET, KEPT_SHEET_TITLE, readKeptText } from "../../../src/shared/keptModel";
import { SCORING_SHEET } from "../../../src/taskpane/portableModel";
import { formatMessage } from "../../../src/shared/messages";

/** The brief's agreement between the kept model's scores and the fit's (JSON keeps doubles: 0 expected). */
const ROUND_TRIP = 1e-12;

async function fitted() {
  const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
  const sheet = loadDemo(workbook);
  workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
  const port = new MemoryPort(workbook);
  const controller = new PaneController({ port, runner: "inline", refreshDelayMs: 0 });
  await controller.useSelection();
  await controller.fit(false);
  expect(controller.status.phase).toBe("done");
  return { workbook, sheet, port, controller };
}

describe("keep the model in the workbook", () => {
  test("writes a hidden sheet whose row ODDS.KEPT reads back to the fit's probabilities", async () => {
    const { workbook, sheet, controller } = await fitted();
    await controller.keepModel();
    expect(controller.status.phase).toBe("done");
    expect(controller.status.message).toContain(`=ODDS.KEPT(${KEPT_SHEET}!2:2, rows)`);
    expect(workbook.isHidden(KEPT_SHEET)).toBe(true);
    expect(workbook.visibleSheetNames()).not.toContain(KEPT_SHEET);
    expect(workbook.input(KEPT_SHEET, 1, 1)).toBe(KEPT_SHEET_TITLE);
    const row = workbook.read(KEPT_SHEET, { top: 2, bottom: 2, left: 1, right: 40 });
    const { header, text } = readKeptText(row);
    expect(header.name).toBe("held model");
    expect(readDescription(text).label.positiveClass).toBe("yes");
    // The demo's predictors are C:F under a header row in row 1; score them with the kept model.
    workbook.setCell(sheet, 1, 20, `=ODDS.KEPT(${KEPT_SHEET}!2:2, C1:F241)`);
    expect(workbook.message(sheet, 1, 20)).toBeUndefined();
    expect(workbook.value(sheet, 1, 20)).toBe("P(yes)");
    const p = controller.outcome!.scores.prediction.probabilities[1];
    let compared = 0;
    for (let i = 0; i < controller.data!.table.rows; i++) {
      const got = workbook.value(sheet, 2 + i, 20);
      if (Number.isNaN(p[i])) expect(got).toBe("");
      else {
        expect(Math.abs((got as number) - p[i])).toBeLessThanOrEqual(ROUND_TRIP);
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(200);
  });

  test("keeping again (same label, so the same name) replaces that row instead of adding one", async () => {
    const { workbook, controller } = await fitted();
    await controller.keepModel();
    await controller.keepModel();
    expect(controller.kept!.row).toBe(2);
    expect(workbook.input(KEPT_SHEET, 3, 1)).toBeNull();
    controller.setChoice({ predictors: controller.choice!.predictors.slice(0, 2), label: controller.choice!.label });
    await controller.fit(false);
    const relabel = controller.data!.columns[controller.choice!.label].name;
    expect(relabel).toBe("held");
    // Same label: same name, so still row 2, now with the two-predictor model.
    await controller.keepModel();
    expect(controller.kept!.row).toBe(2);
    const { text } = readKeptText(workbook.read(KEPT_SHEET, { top: 2, bottom: 2, left: 1, right: 40 }));
    expect(readDescription(text).terms).toHaveLength(3);
  });

  test("without a fit the buttons answer with the catalogue message", async () => {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const controller = new PaneController({ port: new MemoryPort(workbook), runner: "inline" });
    await controller.keepModel();
    expect(controller.status).toMatchObject({ phase: "failed", message: formatMessage("PORTABLE_NO_FIT", { action: "keep" }) });
    expect(controller.descriptionDownload()).toBeNull();
    expect(workbook.sheetNames()).toEqual([]);
  });
});

describe("download and scoring formulas", () => {
  test("the download is the description's JSON, named after the model", async () => {
    const { controller } = await fitted();
    const file = controller.descriptionDownload()!;
    expect(file.name).toBe("held model.oddsmith-model.json");
    const desc = readDescription(file.text);
    expect(desc.equations[0].coefficients).toEqual(Array.from(controller.outcome!.model.fit.coefficients[0]));
  });

  test("the scoring formulas are formulas, one row per data row, reading the data cells and the coefficient table", async () => {
    const { workbook, sheet, controller } = await fitted();
    const out = (await controller.writeScoringFormulas())!;
    expect(controller.status.phase).toBe("done");
    expect(out.notes).toEqual([]);
    const rows = controller.data!.table.rows;
    const probabilityColumn = out.probabilityAt.charCodeAt(0) - 64;
    expect(workbook.input(SCORING_SHEET, 1, probabilityColumn)).toBe("P(yes)");
    for (const r of [2, 2 + rows - 1]) {
      for (let c = 1; c <= out.columns; c++) expect(workbook.isFormulaCell(SCORING_SHEET, r, c)).toBe(true);
    }
    expect(workbook.input(SCORING_SHEET, 2 + rows, 1)).toBeNull();
    const first = String(workbook.input(SCORING_SHEET, 2, 1));
    expect(first).toContain(`${sheet}!`);
    // The coefficient table: ODDS.FIT's class, term, coefficient columns with the fitted numbers.
    const coefAt = out.columns + 2;
    expect(workbook.input(SCORING_SHEET, 2, coefAt + 1)).toBe("(intercept)");
    expect(workbook.input(SCORING_SHEET, 2, coefAt + 2)).toBe(controller.outcome!.model.fit.coefficients[0][0]);
  });
});
