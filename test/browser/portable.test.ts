/**
 * The portable model in the preview workbench (headless Chromium): fit the demo model in the real
 * pane, keep it in the workbook, read it back with =ODDS.KEPT and compare with the fitted
 * probabilities; download the description; write the scoring formulas. Screenshots are saved under
 * test-artifacts/ to be looked at.
 */
import type { Server } from "http";
import type { BrowserContext, Page } from "playwright-core";
import fs from "fs";
import { readDescription, scoreRows, restoreModel, trainModel } from "../../src/engine";
import type { CellValue } from "../../src/engine/types";
import { readModelOptions } from "../../src/shared/fitService";
import { DEMO_SHEETS } from "../../src/preview/demo";
import { BUILD_TIMEOUT_MS, ensureBuild, launch, saveArtifact, startServer } from "./harness";

jest.setTimeout(120_000);

/** The kept model against the pane's own fit in the same page: the brief's 1e-12 (0 expected). */
const ROUND_TRIP = 1e-12;
/**
 * The page's fit against this process's fit of the same cells: both converge to a relative deviance
 * change below 1e-10 (the page may use WebAssembly sums), so probabilities agree far inside 1e-8.
 */
const SAME_FIT = 1e-8;
const FIT_WAIT_MS = 30_000;

let server: Server;
let base: string;
let context: BrowserContext;
let profile: string;
const pageErrors: string[] = [];
const foreignRequests: string[] = [];

beforeAll(async () => {
  ensureBuild();
  ({ server, base } = await startServer());
  ({ context, profile } = await launch());
  context.on("request", (r) => {
    if (!r.url().startsWith(base) && !r.url().startsWith("data:") && !r.url().startsWith("blob:")) foreignRequests.push(r.url());
  });
}, BUILD_TIMEOUT_MS);

afterAll(async () => {
  await context?.close();
  server?.closeAllConnections();
  server?.close();
  if (profile) fs.rmSync(profile, { recursive: true, force: true });
});

type Workbench = {
  workbook: {
    setCell(s: string, r: number, c: number, v: CellValue): void;
    value(s: string, r: number, c: number): CellValue;
    input(s: string, r: number, c: number): CellValue;
    isFormulaCell(s: string, r: number, c: number): boolean;
    message(s: string, r: number, c: number): string | undefined;
    sheetNames(): string[];
    visibleSheetNames(): string[];
  };
  controller: { outcome: { scores: { prediction: { probabilities: Float64Array[] } } } };
};

let page: Page;
const demo = DEMO_SHEETS[0];

beforeAll(async () => {
  page = await context.newPage();
  page.on("console", (m) => {
    if (m.type() === "error") pageErrors.push(m.text());
  });
  page.on("pageerror", (e) => pageErrors.push(e.message));
  await page.goto(`${base}/preview.html`);
  await page.waitForSelector("#osm-use");
  await page.click("#osm-use");
  await page.waitForFunction(() => (document.querySelector("#osm-label") as HTMLSelectElement).options.length > 0);
  await page.click("#osm-fit");
  await page.waitForFunction(() => /^Fitted on/.test(document.querySelector("#osm-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });
});

describe("portable model in the workbench", () => {
  test("keep the model: a hidden sheet, and =ODDS.KEPT gives the fitted probabilities to 1e-12", async () => {
    expect(await page.isDisabled("#osm-keep-model")).toBe(false);
    await page.click("#osm-keep-model");
    await page.waitForFunction(() => /^Kept "held model"/.test(document.querySelector("#osm-status")?.textContent ?? ""));
    const status = await page.textContent("#osm-status");
    expect(status).toContain("=ODDS.KEPT(OddsmithModels!2:2, rows)");
    // Said beside the buttons too.
    expect(await page.textContent("#osm-portable-status")).toBe(status);
    saveArtifact("portable-section-kept.png", await page.locator("#osm-portable").screenshot());
    const sheets = await page.evaluate(() => {
      const w = (window as unknown as { oddsmithWorkbench: Workbench }).oddsmithWorkbench.workbook;
      return { all: w.sheetNames(), visible: w.visibleSheetNames() };
    });
    expect(sheets.all).toContain("OddsmithModels");
    expect(sheets.visible).not.toContain("OddsmithModels");
    // The tabs of the sheet view do not show the hidden sheet.
    expect(await page.$$eval(".ledger-tabs button, .ledger-tabs [role=tab], .ledger-tabs *", (els) => els.map((e) => e.textContent ?? "").join("|"))).not.toContain("OddsmithModels");

    const read = await page.evaluate(
      ({ sheet }) => {
        const wb = (window as unknown as { oddsmithWorkbench: Workbench }).oddsmithWorkbench;
        wb.workbook.setCell(sheet, 1, 12, "=ODDS.KEPT(OddsmithModels!2:2, C1:F241)");
        const kept: CellValue[] = [];
        for (let r = 1; r <= 241; r++) kept.push(wb.workbook.value(sheet, r, 12));
        return { kept, message: wb.workbook.message(sheet, 1, 12) ?? null, fitted: Array.from(wb.controller.outcome.scores.prediction.probabilities[1]) };
      },
      { sheet: demo.name },
    );
    expect(read.message).toBeNull();
    expect(read.kept[0]).toBe("P(yes)");
    let worst = 0;
    read.fitted.forEach((p, i) => {
      const got = read.kept[i + 1];
      expect(typeof got).toBe("number");
      worst = Math.max(worst, Math.abs((got as number) - p));
    });
    expect(worst).toBeLessThanOrEqual(ROUND_TRIP);
    // And the page's fit is this process's fit of the same cells.
    const values = demo.values;
    const model = trainModel(values.map((r) => [r[6]]), values.map((r) => r.slice(2, 6)), readModelOptions("test", [["penalty=0; level=0.95; threshold=0.5"]]).model);
    const here = scoreRows(model, null).prediction.probabilities[1];
    here.forEach((p, i) => expect(Math.abs((read.kept[i + 1] as number) - p)).toBeLessThanOrEqual(SAME_FIT));
    saveArtifact("portable-kept.png", await page.screenshot({ fullPage: false }));
  });

  test("download the description: a JSON file the reader accepts, scoring as the fitted model", async () => {
    const [download] = await Promise.all([page.waitForEvent("download"), page.click("#osm-download-model")]);
    expect(download.suggestedFilename()).toBe("held model.oddsmith-model.json");
    const file = await download.path();
    const text = fs.readFileSync(file as string, "utf8");
    const desc = readDescription(text);
    expect(desc.label.positiveClass).toBe("yes");
    const fitted = await page.evaluate(() => Array.from((window as unknown as { oddsmithWorkbench: Workbench }).oddsmithWorkbench.controller.outcome.scores.prediction.probabilities[1]));
    const rows = demo.values.map((r) => r.slice(2, 6));
    const p = scoreRows(restoreModel(desc), rows).prediction.probabilities[1];
    fitted.forEach((q, i) => expect(Math.abs(p[i] - q)).toBeLessThanOrEqual(ROUND_TRIP));
    expect(await page.textContent("#osm-status")).toContain("nothing was sent anywhere");
  });

  test("write scoring formulas: a sheet of plain formulas, one row per data row", async () => {
    await page.click("#osm-scoring-formulas");
    await page.waitForFunction(() => /^Wrote the model as plain formulas/.test(document.querySelector("#osm-status")?.textContent ?? ""));
    const cells = await page.evaluate(() => {
      const w = (window as unknown as { oddsmithWorkbench: Workbench }).oddsmithWorkbench.workbook;
      const header: CellValue[] = [];
      for (let c = 1; c <= 12; c++) header.push(w.input("OddsmithScoring", 1, c));
      return { header, first: w.input("OddsmithScoring", 2, 1), formula: w.isFormulaCell("OddsmithScoring", 241, 1), after: w.input("OddsmithScoring", 242, 1) };
    });
    expect(cells.header).toContain("P(yes)");
    expect(String(cells.first)).toMatch(/^=IF\(ISBLANK\(/);
    expect(cells.formula).toBe(true);
    expect(cells.after).toBeNull();
    expect(await page.textContent("#osm-portable-status")).toMatch(/^Wrote the model as plain formulas on the sheet OddsmithScoring/);
    saveArtifact("portable-section-formulas.png", await page.locator("#osm-portable").screenshot());
    await page.click('.ledger-tabs >> text="OddsmithScoring"');
    saveArtifact("portable-scoring-sheet.png", await page.screenshot({ fullPage: false }));
  });

  test("nothing left the page's origin and no page error occurred", () => {
    expect(foreignRequests).toEqual([]);
    expect(pageErrors).toEqual([]);
  });
});
