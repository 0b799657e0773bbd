/**
 * The preview workbench in headless Chromium: the real task pane beside the in-memory workbook.
 * Each check below is what a person would do and see; numbers in the pane are compared with the
 * engine's own computation from the same data in this (Node) process.
 */
import type { Server } from "http";
import type { BrowserContext, Page } from "playwright-core";
import fs from "fs";
import { nearBoundaryRows } from "../../src/engine/boundary";
import { scoreRows, trainModel } from "../../src/engine/model";
import type { CellValue } from "../../src/engine/types";
import { readModelOptions } from "../../src/shared/fitService";
import { buildBasisColumns } from "../../src/shared/basisColumns";
import { DEMO_SHEETS } from "../../src/preview/demo";
import { CAUTIONS, CAUTIONS_TITLE } from "../../src/taskpane/cautions";
import { BUILD_TIMEOUT_MS, ensureBuild, launch, saveArtifact, startServer } from "./harness";

jest.setTimeout(120_000);

/** Probabilities are printed with 3 decimals in the list. */
const PRINTED_DECIMALS = 3;
/**
 * Least a curved boundary strays from a straight line, in SVG pixels: a linear model's boundary is
 * straight (deviation ~0 after clipping), the spline model's bends by tens of pixels on the demo data.
 */
const CURVE_MIN_DEVIATION_PX = 10;

/** Largest distance of the path's points (inside the frame) from their total-least-squares line. */
function straightLineDeviation(d: string): number {
  const pts = [...d.matchAll(/[ML](-?[\d.]+),(-?[\d.]+)/g)].map((m) => [Number(m[1]), Number(m[2])]);
  // Keep points inside the plot frame (48..328 across, 12..240 down): the closing edges lie outside.
  const inside = pts.filter(([x, y]) => x > 49 && x < 327 && y > 13 && y < 239);
  const mx = inside.reduce((a, p) => a + p[0], 0) / inside.length;
  const my = inside.reduce((a, p) => a + p[1], 0) / inside.length;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (const [x, y] of inside) {
    sxx += (x - mx) ** 2;
    syy += (y - my) ** 2;
    sxy += (x - mx) * (y - my);
  }
  const angle = 0.5 * Math.atan2(2 * sxy, sxx - syy);
  const nx = -Math.sin(angle);
  const ny = Math.cos(angle);
  return Math.max(...inside.map(([x, y]) => Math.abs((x - mx) * nx + (y - my) * ny)));
}

/** Time the pane may take to fit, write and recalculate on the demo data (~0.5 s measured). */
const FIT_WAIT_MS = 30_000;

let server: Server;
let base: string;
let context: BrowserContext;
let profile: string;
/** Requests that left our origin (must stay empty). */
const foreignRequests: string[] = [];
/** Console errors and page errors (must stay empty). */
const pageErrors: string[] = [];

beforeAll(async () => {
  ensureBuild();
  ({ server, base } = await startServer());
  ({ context, profile } = await launch());
  context.on("request", (r) => {
    if (!r.url().startsWith(base) && !r.url().startsWith("data:")) foreignRequests.push(r.url());
  });
}, BUILD_TIMEOUT_MS);

afterAll(async () => {
  await context?.close();
  server?.closeAllConnections();
  server?.close();
  if (profile) fs.rmSync(profile, { recursive: true, force: true });
});

async function openWorkbench(query = ""): Promise<Page> {
  const page = await context.newPage();
  page.on("console", (m) => {
    if (m.type() === "error") pageErrors.push(m.text());
  });
  page.on("pageerror", (e) => pageErrors.push(e.message));
  await page.goto(`${base}/preview.html${query}`);
  await page.waitForSelector("#osm-use");
  return page;
}

async function fitDemo(page: Page): Promise<void> {
  await page.click("#osm-use");
  await page.waitForFunction(() => (document.querySelector("#osm-label") as HTMLSelectElement).options.length > 0);
  await page.click("#osm-fit");
  await page.waitForFunction(() => /^Fitted on/.test(document.querySelector("#osm-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });
}

/** The engine's borderline list for the demo data, computed here from the same cells and options. */
function engineBorderline(values: CellValue[][], threshold = 0.5, band = 0.1) {
  const options = readModelOptions("test", [[`penalty=0; level=0.95; threshold=${threshold}`]]);
  const labels = values.map((r) => [r[6]]);
  const predictors = values.map((r) => r.slice(2, 6));
  const model = trainModel(labels, predictors, options.model);
  const scores = scoreRows(model, null, { threshold });
  return nearBoundaryRows(scores.prediction, { threshold, band, undecided: true, limit: 200 });
}

async function listedRows(page: Page): Promise<{ row: number; probability: string }[]> {
  return page.$$eval("#osm-review-table tbody tr", (trs) =>
    trs.map((tr) => ({ row: Number((tr as HTMLElement).dataset.sheetRow), probability: tr.children[tr.children.length - 3].textContent ?? "" })),
  );
}

/** Use the demo table and choose a natural spline for "firmness" in the pane's basis builder. */
async function chooseSplineForFirmness(page: Page): Promise<void> {
  await page.click("#osm-use");
  await page.waitForSelector('#osm-basis-columns select[data-column="firmness"]');
  await page.selectOption('#osm-basis-columns select[data-column="firmness"]', "ns");
}

describe("preview workbench", () => {
  test("the engine's WebAssembly kernels load under the page's Content-Security-Policy", async () => {
    // The page's own script compiles the kernels ('wasm-unsafe-eval' in script-src); if the policy
    // refused them the engine would fall back to its JavaScript kernels and this would say so.
    const page = await openWorkbench();
    expect(await page.evaluate(() => (window as unknown as { oddsmithWorkbench: { kernels: string } }).oddsmithWorkbench.kernels)).toBe("webassembly");
    await page.close();
  });

  test("the pane shows the safety cautions", async () => {
    const page = await openWorkbench();
    const text = await page.textContent("#osm-cautions");
    expect(text).toContain(CAUTIONS_TITLE);
    for (const c of CAUTIONS) expect(text).toContain(c);
    await page.close();
  });

  test("setting up a model on the demo data lists the same borderline rows as the engine", async () => {
    const page = await openWorkbench();
    await fitDemo(page);
    expect(await page.$eval("#osm-label", (s) => (s as HTMLSelectElement).selectedOptions[0].textContent)).toBe("held");
    const expected = engineBorderline(DEMO_SHEETS[0].values);
    const listed = await listedRows(page);
    expect(listed.map((l) => l.row)).toEqual(expected.rows.map((r) => r.row + 2));
    expect(listed.map((l) => l.probability)).toEqual(expected.rows.map((r) => r.probability.toFixed(PRINTED_DECIMALS)));
    const summary = await page.textContent("#osm-review-summary");
    expect(summary).toContain(`${expected.withinBand} rows lie within 0.10 of the threshold 0.50.`);
    expect(summary).toContain(`${expected.undecidedOnly} more rows have a 95% interval`);
    // The live formulas landed on the results sheet.
    await page.click('.ledger-tab[data-sheet="Oddsmith results"]');
    expect(await page.textContent('.ledger-table td[data-row="1"][data-col="1"]')).toBe("P(yes)");
    expect(await page.textContent('.ledger-table td[data-row="1"][data-col="6"]')).toBe("term");
    await page.close();
  });

  test("clicking a listed row selects it in the sheet view", async () => {
    const page = await openWorkbench();
    await fitDemo(page);
    const third = (await listedRows(page))[2].row;
    await page.click(`#osm-review-table tbody tr[data-sheet-row="${third}"]`);
    await page.waitForSelector(`.ledger-table tr[data-row="${third}"].is-picked-row`);
    const selected = await page.$$eval(`.ledger-table tr[data-row="${third}"] td.is-selected`, (tds) => tds.length);
    expect(selected).toBe(8);
    expect(await page.textContent("#entry-address")).toBe(`Crates!A${third}`);
    await page.close();
  });

  test("editing a cell refreshes the formulas and the borderline list", async () => {
    const page = await openWorkbench();
    await fitDemo(page);
    const first = (await listedRows(page))[0].row;
    // Bruises of that crate (column F) go from few to 9: far more likely to be held back.
    await page.click(`.ledger-table td[data-row="${first}"][data-col="6"]`);
    await page.fill("#entry", "9");
    await page.press("#entry", "Enter");
    await page.waitForFunction(
      (row) => ![...document.querySelectorAll("#osm-review-table tbody tr")].some((tr) => (tr as HTMLElement).dataset.sheetRow === String(row)),
      first,
      { timeout: FIT_WAIT_MS },
    );
    const edited = DEMO_SHEETS[0].values.map((r) => r.slice());
    edited[first - 1][5] = 9;
    const expected = engineBorderline(edited);
    await page.waitForFunction(() => /^Fitted on/.test(document.querySelector("#osm-status")?.textContent ?? ""));
    expect((await listedRows(page)).map((l) => l.row)).toEqual(expected.rows.map((r) => r.row + 2));
    // The results sheet's PROB formula recalculated for that row.
    await page.click('.ledger-tab[data-sheet="Oddsmith results"]');
    const shown = Number(await page.textContent(`.ledger-table td[data-row="${first}"][data-col="1"]`));
    const options = readModelOptions("test", [["penalty=0; level=0.95; threshold=0.5"]]);
    const p = scoreRows(trainModel(edited.map((r) => [r[6]]), edited.map((r) => r.slice(2, 6)), options.model), null).prediction.probabilities[1][first - 2];
    expect(shown).toBeCloseTo(p, 5);
    await page.close();
  });

  test("a row typed directly below the table joins it: refit, list, counts and formulas follow", async () => {
    const page = await openWorkbench();
    await fitDemo(page);
    const values = DEMO_SHEETS[0].values;
    // A new crate with the measurements of the closest call so far: it lands in the list itself.
    const closest = engineBorderline(values).rows[0].row + 1;
    const added: CellValue[] = ["C-241", ...values[closest].slice(1, 7)];
    for (const [k, v] of added.entries()) {
      await page.click(`.ledger-table td[data-row="242"][data-col="${k + 1}"]`);
      await page.fill("#entry", String(v));
      await page.press("#entry", "Enter");
    }
    await page.waitForFunction(() => /^Fitted on 241 rows/.test(document.querySelector("#osm-status")?.textContent ?? ""), null, {
      timeout: FIT_WAIT_MS,
    });
    const expected = engineBorderline([...values, added]);
    expect(expected.rows.map((r) => r.row)).toContain(240); // data row 240 = sheet row 242
    expect((await listedRows(page)).map((l) => l.row)).toEqual(expected.rows.map((r) => r.row + 2));
    const summary = await page.textContent("#osm-review-summary");
    expect(summary).toContain(`${expected.withinBand} rows lie within 0.10 of the threshold 0.50.`);
    expect(summary).toContain("241 rows scored.");
    // The formulas were rewritten over the grown table: their spill reaches the new row.
    await page.click('.ledger-tab[data-sheet="Oddsmith results"]');
    const options = readModelOptions("test", [["penalty=0; level=0.95; threshold=0.5"]]);
    const grown = [...values, added];
    const p = scoreRows(trainModel(grown.map((r) => [r[6]]), grown.map((r) => r.slice(2, 6)), options.model), null).prediction.probabilities[1][240];
    expect(Number(await page.textContent('.ledger-table td[data-row="242"][data-col="1"]'))).toBeCloseTo(p, 5);
    await page.close();
  });

  test("the boundary plot draws every row, the borderline rings and the boundary line", async () => {
    const page = await openWorkbench();
    await fitDemo(page);
    await page.waitForSelector("#osm-plot-area svg");
    expect(await page.$$eval("#osm-plot-area .osm-point", (p) => p.length)).toBe(240);
    const rings = await page.$$eval("#osm-plot-area .osm-ring", (p) => p.length);
    expect(rings).toBe(engineBorderline(DEMO_SHEETS[0].values).total);
    const boundary = await page.$eval("#osm-plot-area .osm-boundary", (p) => p.getAttribute("d") ?? "");
    // Without basis columns the model is linear in the plotted columns: a straight boundary.
    expect(straightLineDeviation(boundary)).toBeLessThan(1);
    expect(await page.textContent("#osm-plot-caption")).toContain("Other predictors held at: brix =");
    saveArtifact("workbench-plot.png", await page.locator("#osm-plot").screenshot());
    saveArtifact("workbench.png", await page.screenshot({ fullPage: false }));
    await page.close();
  });

  test("hostile cell text shows as plain text and creates no element", async () => {
    const page = await openWorkbench();
    const hostile = '<img src=x onerror="window.__oddsmithPwned=1">';
    const header = "<b>crate</b>";
    // Into a data cell (the key column shown in the list) and into the header of that column.
    await page.click('.ledger-table td[data-row="1"][data-col="1"]');
    await page.fill("#entry", header);
    await page.press("#entry", "Enter");
    await page.waitForFunction((t) => document.querySelector('.ledger-table td[data-row="1"][data-col="1"]')?.textContent === t, header);
    await page.click('.ledger-table td[data-row="2"][data-col="1"]');
    await page.fill("#entry", hostile);
    await page.press("#entry", "Enter");
    await page.waitForFunction((t) => document.querySelector('.ledger-table td[data-row="2"][data-col="1"]')?.textContent === t, hostile);
    await fitDemo(page);
    await page.fill("#osm-band", "0.5");
    await page.dispatchEvent("#osm-band", "change");
    await page.waitForSelector('#osm-review-table tbody tr[data-sheet-row="2"]');
    const cell = await page.textContent('#osm-review-table tbody tr[data-sheet-row="2"] td:nth-child(2)');
    expect(cell).toBe(hostile);
    expect(await page.textContent("#osm-review-table thead th:nth-child(2)")).toBe(header);
    const created = await page.evaluate(() => ({
      img: document.querySelectorAll("img").length,
      bold: document.querySelectorAll("b").length,
      pwned: (window as unknown as Record<string, unknown>).__oddsmithPwned ?? null,
    }));
    expect(created).toEqual({ img: 0, bold: 0, pwned: null });
    await page.close();
  });

  test("spline basis columns built in the pane bend the boundary, and the list matches the engine", async () => {
    const page = await openWorkbench();
    await chooseSplineForFirmness(page);
    expect(await page.inputValue("#osm-recipe")).toBe("firmness: ns(df=3)");
    await page.click("#osm-basis-write");
    await page.waitForFunction(() => /^Added 3 columns/.test(document.querySelector("#osm-basis-preview")?.textContent ?? ""));
    const ticked = await page.$$eval("#osm-predictors input:checked", (els) => els.map((e) => (e as HTMLElement).dataset.name));
    expect(ticked).toEqual(["days_stored", "brix", "bruises", "ns(firmness)1", "ns(firmness)2", "ns(firmness)3"]);
    await page.click("#osm-fit");
    await page.waitForFunction(() => /^Fitted on/.test(document.querySelector("#osm-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });
    // The engine on the same cells: the basis columns the formula spilled, beside the data.
    const values = DEMO_SHEETS[0].values;
    const basis = buildBasisColumns(values, "firmness: ns(df=3)", null);
    const predictors = values.map((r, i) => [r[2], r[4], r[5], ...basis[i]]);
    const options = readModelOptions("test", [["penalty=0; level=0.95; threshold=0.5"]]);
    const model = trainModel(values.map((r) => [r[6]]), predictors, options.model);
    const expected = nearBoundaryRows(scoreRows(model, null).prediction, { threshold: 0.5, band: 0.1, limit: 200 });
    expect((await listedRows(page)).map((l) => l.row)).toEqual(expected.rows.map((r) => r.row + 2));
    // Plot firmness across: the boundary is drawn from the recomputed spline columns.
    await page.selectOption("#osm-plot-x", { label: "firmness" });
    await page.selectOption("#osm-plot-y", { label: "days_stored" });
    await page.waitForFunction(() => document.querySelector("#osm-plot-area svg title")?.textContent === "Decision boundary over firmness and days_stored");
    const boundaries = await page.$$eval("#osm-plot-area .osm-boundary", (ps) => ps.map((p) => p.getAttribute("d") ?? ""));
    // Curved, not straight: the boundary points stray from their best-fitting straight line.
    expect(straightLineDeviation(boundaries.join(""))).toBeGreaterThan(CURVE_MIN_DEVIATION_PX);
    expect(await page.textContent("#osm-plot-caption")).not.toContain("ns(firmness)");
    saveArtifact("workbench-plot-spline.png", await page.locator("#osm-plot").screenshot());

    // A crate typed under the table: the basis formula follows the new row and the refit uses it.
    const added: CellValue[] = ["C-241", "Hilltop", 30, 55, 14.5, 1, "yes", "market"];
    for (const [k, v] of added.entries()) {
      await page.click(`.ledger-table td[data-row="242"][data-col="${k + 1}"]`);
      await page.fill("#entry", String(v));
      await page.press("#entry", "Enter");
    }
    await page.waitForFunction(() => /^Fitted on 241 rows/.test(document.querySelector("#osm-status")?.textContent ?? ""), null, {
      timeout: FIT_WAIT_MS,
    });
    const grown = [...values, added];
    const grownBasis = buildBasisColumns(grown, "firmness: ns(df=3)", null);
    for (let j = 0; j < 3; j++) {
      const shown = Number(await page.textContent(`.ledger-table td[data-row="242"][data-col="${10 + j}"]`));
      expect(shown).toBeCloseTo(grownBasis[241][j] as number, 3);
    }
    expect(await page.textContent('#osm-basis-notes li[data-code="BASIS_FOLLOWED_ROWS"]')).toContain(
      "rewritten over Crates!$A$1:$H$242: its knots, centres, levels and scales are refitted on all 241 rows",
    );
    const grownModel = trainModel(
      grown.map((r) => [r[6]]),
      grown.map((r, i) => [r[2], r[4], r[5], ...grownBasis[i]]),
      options.model,
    );
    const grownExpected = nearBoundaryRows(scoreRows(grownModel, null).prediction, { threshold: 0.5, band: 0.1, limit: 200 });
    expect((await listedRows(page)).map((l) => l.row)).toEqual(grownExpected.rows.map((r) => r.row + 2));
    await page.close();
  });

  test("basis columns written as values do not follow a new row, and the pane says so", async () => {
    const page = await openWorkbench();
    await chooseSplineForFirmness(page);
    await page.check("#osm-basis-values");
    await page.click("#osm-basis-write");
    await page.waitForFunction(() => /^Added 3 columns/.test(document.querySelector("#osm-basis-preview")?.textContent ?? ""));
    // Values, not a formula: the first generated cell holds the header text itself (a formula would show "=ODDS.BASIS(...").
    await page.click('.ledger-table td[data-row="1"][data-col="10"]');
    expect(await page.inputValue("#entry")).toBe("ns(firmness)1");
    await page.click("#osm-fit");
    await page.waitForFunction(() => /^Fitted on 240 rows/.test(document.querySelector("#osm-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });
    const added: CellValue[] = ["C-241", "Hilltop", 30, 55, 14.5, 1, "yes", "market"];
    for (const [k, v] of added.entries()) {
      await page.click(`.ledger-table td[data-row="242"][data-col="${k + 1}"]`);
      await page.fill("#entry", String(v));
      await page.press("#entry", "Enter");
    }
    const note = await page.waitForSelector('#osm-basis-notes li[data-code="BASIS_VALUES_NOT_REFRESHED"]', { timeout: FIT_WAIT_MS });
    expect(await note.textContent()).toContain("hold values, not a live formula, so they were not refreshed after 1 row was added to the table");
    expect(await page.textContent('.ledger-table td[data-row="242"][data-col="10"]')).toBe("");
    await page.close();
  });

  test("the fit can run in the background worker with the same result", async () => {
    const page = await openWorkbench("?runner=worker");
    const cacheStats = () => page.evaluate(() => (globalThis as unknown as { __oddsmithFitCache__: { stats(): { hits: number; misses: number } } }).__oddsmithFitCache__.stats());
    // Counted from here: the demo's Check sheet computed its own formulas when the page loaded.
    const before = await cacheStats();
    await fitDemo(page);
    expect(await page.textContent("#osm-status")).toMatch(/^Fitted on 240 rows in [\d.]+ s \(in the background\)\./);
    // The worker's model reached the page's shared fit cache: every formula the pane wrote found it
    // (hits) and none trained again (no miss).
    const stats = await cacheStats();
    expect(stats.misses - before.misses).toBe(0);
    expect(stats.hits - before.hits).toBeGreaterThanOrEqual(5);
    const expected = engineBorderline(DEMO_SHEETS[0].values);
    expect((await listedRows(page)).map((l) => l.row)).toEqual(expected.rows.map((r) => r.row + 2));
    await page.close();
  });

  test("nothing left the page's origin and no page error occurred", () => {
    expect(foreignRequests).toEqual([]);
    expect(pageErrors).toEqual([]);
  });
});
