/**
 * The evaluation section ("5 Check and decide") in the preview workbench, in headless Chromium:
 * after a fit on the demo data the ROC curve, the calibration plot and the counts at the review's
 * threshold match the engine's own computation in this (Node) process; moving the threshold from
 * the chooser moves the borderline list; the charts are drawn at the pane's narrow and wide widths
 * with no overlapping labels. Screenshots go to test-artifacts/ (look at them).
 */
import type { Page } from "playwright-core";
import { nearBoundaryRows } from "../../src/engine/boundary";
import { rocAuc } from "../../src/engine/metrics/rocAuc";
import { confusionCounts } from "../../src/engine/metrics/confusionCounts";
import { chooseThreshold } from "../../src/engine/evaluation/chooseThreshold";
import { scoreRows, trainModel } from "../../src/engine/model";
import { readModelOptions } from "../../src/shared/fitService";
import { DEMO_SHEETS } from "../../src/preview/demo";
import { EVALUATION_CAUTIONS } from "../../src/taskpane/cautions";
import { crossValidate } from "../../src/engine/evaluation/crossValidate";
import { PANE_BUDGET } from "../../src/engine/evaluation/cvWork";
import { logSpacedPenalties } from "../../src/taskpane/evaluationController";
import { saveArtifact, useBrowser } from "./harness";

jest.setTimeout(120_000);

/** Time the pane may take to fit, write and recalculate on the demo data (~0.5 s measured). */
const FIT_WAIT_MS = 30_000;

const browser = useBrowser();
const pageErrors: string[] = [];

async function openFitted(width: number): Promise<Page> {
  const page = await browser.context.newPage();
  page.on("console", (m) => {
    if (m.type() === "error") pageErrors.push(m.text());
  });
  page.on("pageerror", (e) => pageErrors.push(e.message));
  await page.setViewportSize({ width: 1360, height: 900 });
  await page.goto(`${browser.base}/preview.html`);
  await page.waitForSelector("#osm-use");
  // Narrow the pane column to the width under test (the pane is the right-hand column).
  // (Through the CSSOM: the page's policy refuses style elements and attributes.)
  await page.evaluate((w) => {
    (document.querySelector(".wb-split") as HTMLElement).style.gridTemplateColumns = `minmax(0, 1fr) ${w}px`;
  }, width);
  await page.click("#osm-use");
  await page.waitForFunction(() => (document.querySelector("#osm-label") as HTMLSelectElement).options.length > 0);
  await page.click("#osm-fit");
  await page.waitForFunction(() => /^Fitted on/.test(document.querySelector("#osm-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });
  await page.waitForSelector("#osm-roc svg");
  return page;
}

/** The engine's probabilities for the demo data with the pane's default set-up. */
function engineFit() {
  const values = DEMO_SHEETS[0].values.slice(1);
  const options = readModelOptions("test", [["penalty=0; level=0.95; threshold=0.5"]]);
  const model = trainModel(values.map((r) => [r[6]]), values.map((r) => r.slice(2, 6)), options.model);
  const scores = scoreRows(model, null, { threshold: 0.5 });
  const labels = Float64Array.from(values, (r) => (r[6] === "yes" ? 1 : 0));
  return { labels, p: scores.prediction.probabilities[1], model };
}

/** Bounding boxes of every text element of an SVG, in page pixels. */
async function textBoxes(page: Page, selector: string) {
  return page.$$eval(`${selector} svg text`, (ts) =>
    ts.map((t) => {
      const r = (t as SVGGraphicsElement).getBoundingClientRect();
      return { text: t.textContent ?? "", left: r.left, right: r.right, top: r.top, bottom: r.bottom };
    }),
  );
}

type Box = { text: string; left: number; right: number; top: number; bottom: number };
function overlaps(boxes: Box[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < boxes.length; i++)
    for (let j = i + 1; j < boxes.length; j++) {
      const a = boxes[i];
      const b = boxes[j];
      if (a.left < b.right - 0.5 && b.left < a.right - 0.5 && a.top < b.bottom - 0.5 && b.top < a.bottom - 0.5) out.push(`${a.text} / ${b.text}`);
    }
  return out;
}

describe("evaluation section", () => {
  test("ROC, AUC with DeLong interval and the counts at the threshold match the engine; cautions are shown", async () => {
    const page = await openFitted(420);
    const { labels, p } = engineFit();
    const auc = rocAuc(labels, p, { level: 0.95 });
    const caption = await page.textContent("#osm-roc-caption");
    expect(caption).toContain(`AUC ${auc.auc.toFixed(3)} (95% DeLong interval ${auc.lower.toFixed(3)} to ${auc.upper.toFixed(3)}), 240 fitted rows (in-sample)`);
    const counts = confusionCounts(labels, p, { threshold: 0.5 });
    expect(await page.textContent("#osm-threshold-now")).toContain(
      `Review threshold 0.5: ${counts.truePositives} true positives, ${counts.falsePositives} false positives, ${counts.trueNegatives} true negatives, ${counts.falseNegatives} false negatives`,
    );
    const cautions = await page.textContent("#osm-eval-cautions");
    for (const c of EVALUATION_CAUTIONS) expect(cautions).toContain(c);
    expect(await page.$$eval("#osm-calibration .osm-cal-point", (ps) => ps.length)).toBe(10);
    expect(await page.textContent("#osm-calibration-caption")).toMatch(/^Calibration slope \d\.\d{3} \(95% interval/);
    await page.close();
  });

  test("typing a threshold in the chooser moves the boundary review's threshold and list", async () => {
    const page = await openFitted(420);
    await page.selectOption("#osm-goal", "direct");
    await page.fill("#osm-goal-value", "0.3");
    await page.click("#osm-goal-apply");
    await page.waitForFunction(() => (document.querySelector("#osm-review-threshold") as HTMLInputElement).value === "0.3");
    const { labels, p, model } = engineFit();
    const expected = nearBoundaryRows(scoreRows(model, null, { threshold: 0.3 }).prediction, { threshold: 0.3, band: 0.1, undecided: true, limit: 200 });
    const listed = await page.$$eval("#osm-review-table tbody tr", (trs) => trs.map((tr) => Number((tr as HTMLElement).dataset.sheetRow)));
    expect(listed).toEqual(expected.rows.map((r) => r.row + 2));
    expect(await page.textContent("#osm-review-summary")).toContain(`${expected.withinBand} rows lie within 0.10 of the threshold 0.30.`);
    // The counts and the ROC marker moved with it.
    const counts = confusionCounts(labels, p, { threshold: 0.3 });
    expect(await page.textContent("#osm-threshold-now")).toContain(`Review threshold 0.3: ${counts.truePositives} true positives, ${counts.falsePositives} false positives`);
    const title = await page.$eval("#osm-roc .osm-roc-marker title", (t) => t.textContent);
    expect(title).toBe(`Threshold 0.3: sensitivity ${counts.sensitivity.toFixed(3)}, false positive rate ${(1 - counts.specificity).toFixed(3)}`);
    // The boundary plot's legend follows the new threshold too.
    expect(await page.textContent("#osm-plot-legend")).toContain("boundary where p = 0.3");
    await page.close();
  });

  test("a review budget in the chooser moves the review threshold to the engine's budget threshold", async () => {
    const page = await openFitted(360);
    await page.selectOption("#osm-goal", "budget");
    await page.fill("#osm-goal-value", "25");
    await page.click("#osm-goal-apply");
    const { labels, p } = engineFit();
    const expected = chooseThreshold(labels, p, { rule: "budget", budget: 25 });
    await page.waitForFunction(() => /rows flagged/.test(document.querySelector("#osm-chooser-note")?.textContent ?? ""));
    expect(await page.textContent("#osm-chooser-note")).toContain(`${expected.flaggedRows} rows flagged`);
    const shown = Number(await page.$eval("#osm-review-threshold", (e) => (e as HTMLInputElement).value));
    // The review box shows the shortest decimal that flags exactly the same rows.
    expect(confusionCounts(labels, p, { threshold: shown }).truePositives + confusionCounts(labels, p, { threshold: shown }).falsePositives).toBe(expected.flaggedRows);
    await page.$eval("#osm-threshold-chooser", (e) => e.scrollIntoView({ block: "center" }));
    saveArtifact("evaluation-budget-chooser.png", await page.screenshot());
    await page.close();
  });

  test("clicking the ROC curve moves the review threshold to that point", async () => {
    const page = await openFitted(420);
    await page.$eval("#osm-roc", (e) => e.scrollIntoView({ block: "center" }));
    // A point about a third of the way along the drawn curve, in page coordinates.
    const target = await page.$eval("#osm-roc .osm-roc-curve", (path) => {
      const p = path as SVGPathElement;
      const pt = p.getPointAtLength(p.getTotalLength() / 3);
      const m = p.getScreenCTM()!;
      return { x: pt.x * m.a + pt.y * m.c + m.e, y: pt.x * m.b + pt.y * m.d + m.f };
    });
    await page.mouse.click(target.x, target.y);
    await page.waitForFunction(() => (document.querySelector("#osm-review-threshold") as HTMLInputElement).value !== "0.5");
    const t = Number(await page.inputValue("#osm-review-threshold"));
    expect(t).toBeGreaterThan(0);
    expect(t).toBeLessThan(1);
    const { labels, p } = engineFit();
    const counts = confusionCounts(labels, p, { threshold: t });
    expect(await page.textContent("#osm-threshold-now")).toContain(`Review threshold ${t}: ${counts.truePositives} true positives, ${counts.falsePositives} false positives`);
    // The marker sits where the click was (within a few pixels of the curve point).
    const marker = await page.$eval("#osm-roc .osm-roc-marker", (c) => c.getBoundingClientRect().toJSON());
    expect(Math.hypot(marker.x + marker.width / 2 - target.x, marker.y + marker.height / 2 - target.y)).toBeLessThan(8);
    await page.close();
  });

  test("with the ROC chart focused, the arrow keys step the review threshold along the curve", async () => {
    const page = await openFitted(420);
    await page.focus("#osm-roc");
    await page.keyboard.press("ArrowRight");
    await page.waitForFunction(() => (document.querySelector("#osm-review-threshold") as HTMLInputElement).value !== "0.5");
    const down = Number(await page.inputValue("#osm-review-threshold"));
    expect(down).toBeLessThan(0.5);
    const { p } = engineFit();
    // One operating point further: exactly one more distinct probability is flagged.
    const flagged = (t: number) => new Set(Array.from(p).filter((v) => v >= t)).size;
    expect(flagged(down)).toBe(flagged(0.5) + 1);
    await page.keyboard.press("ArrowLeft");
    await page.waitForFunction((d) => (document.querySelector("#osm-review-threshold") as HTMLInputElement).value !== String(d), down);
    expect(flagged(Number(await page.inputValue("#osm-review-threshold")))).toBe(flagged(0.5));
    await page.close();
  });

  test("the calibration plot split by block draws one line per block with a legend", async () => {
    const page = await openFitted(420);
    await page.selectOption("#osm-cal-split", { label: "block" });
    await page.waitForSelector("#osm-calibration .osm-cal-series-line");
    const blocks = [...new Set(DEMO_SHEETS[0].values.slice(1).map((r) => String(r[1])))].sort();
    expect(await page.$$eval("#osm-calibration .osm-cal-series-line", (ls) => ls.length)).toBe(blocks.length);
    const legend = await page.$$eval("#osm-calibration-legend li", (ls) => ls.map((l) => l.textContent));
    expect(legend.map((t) => t!.replace(/ \(\d+ rows\)$/, ""))).toEqual(blocks);
    expect(await page.textContent("#osm-calibration-caption")).toContain("a statistical association in this data, not a cause");
    expect(overlaps(await textBoxes(page, "#osm-calibration"))).toEqual([]);
    saveArtifact("evaluation-calibration-split.png", await page.locator("#osm-calibration").screenshot());
    await page.close();
  });

  for (const width of [330, 450]) {
    test(`at a pane width of ${width} px the charts fit, their labels do not overlap and stay readable`, async () => {
      const page = await openFitted(width);
      for (const sel of ["#osm-roc", "#osm-calibration"]) {
        const boxes = await textBoxes(page, sel);
        expect(overlaps(boxes)).toEqual([]);
        const svgBox = await page.$eval(`${sel} svg`, (s) => s.getBoundingClientRect().toJSON());
        // Inside the section (no horizontal clipping) and every label inside the drawing.
        const section = await page.$eval("#osm-eval", (s) => s.getBoundingClientRect().toJSON());
        expect(svgBox.right).toBeLessThanOrEqual(section.right);
        for (const b of boxes) {
          expect(b.left).toBeGreaterThanOrEqual(svgBox.left - 0.5);
          expect(b.right).toBeLessThanOrEqual(svgBox.right + 0.5);
          expect(b.bottom).toBeLessThanOrEqual(svgBox.bottom + 0.5);
        }
        // Tick labels at least 9 px tall on screen.
        const heights = boxes.map((b) => b.bottom - b.top);
        expect(Math.min(...heights)).toBeGreaterThanOrEqual(9);
      }
      // A tall window, so the whole pane is laid out without its own scrolling for the screenshot.
      await page.setViewportSize({ width: 1360, height: 4200 });
      saveArtifact(`evaluation-${width}.png`, await page.locator("#osm-eval").screenshot());
      await page.close();
    });
  }

  test("a cross-validation path is drawn at 330 px with SE bars, both marks and a legend, labels apart", async () => {
    const page = await openFitted(330);
    // A given path (the drawing is under test here, not the computation): 11 penalties, 5 folds.
    await page.evaluate(() => {
      const penalties = [0.001, 0.00398, 0.01585, 0.0631, 0.2512, 1, 3.981, 15.85, 63.1, 251.2, 1000];
      const means = [0.652, 0.651, 0.649, 0.645, 0.639, 0.634, 0.636, 0.648, 0.668, 0.684, 0.69];
      const entries = penalties.map((penalty, i) => ({ penalty, mean: means[i], standardError: 0.012 + 0.001 * i }));
      const w = window as unknown as { oddsmithWorkbench: { evaluation: { setPath(p: unknown): void } } };
      w.oddsmithWorkbench.evaluation.setPath({ entries, best: 5, oneSe: 6, folds: 5, rows: 240, outOfFold: null, elapsedMs: 0, runner: "inline" });
    });
    await page.waitForSelector("#osm-cv-chart svg");
    // The run controls show exactly when this build can run a path.
    const canRun = await page.evaluate(() => (window as unknown as { oddsmithWorkbench: { evaluation: { canRunPath: boolean } } }).oddsmithWorkbench.evaluation.canRunPath);
    expect(await page.isVisible("#osm-cv-run")).toBe(canRun);
    expect(await page.isVisible("#osm-cv-chart svg")).toBe(true);
    expect(await page.$$eval("#osm-cv-chart .osm-path-bar", (b) => b.length)).toBe(11);
    expect(await page.$$eval("#osm-cv-chart .osm-path-best", (b) => b.length)).toBe(1);
    expect(await page.$$eval("#osm-cv-chart .osm-path-onese", (b) => b.length)).toBe(1);
    expect(await page.textContent("#osm-cv-legend")).toContain("lowest log-loss (penalty 1)");
    expect(await page.textContent("#osm-cv-legend")).toContain("one-SE choice (penalty 3.981)");
    expect(overlaps(await textBoxes(page, "#osm-cv-chart"))).toEqual([]);
    await page.click("#osm-cv-adopt");
    expect(await page.inputValue("#osm-penalty")).toBe("3.981");
    await page.setViewportSize({ width: 1360, height: 4200 });
    saveArtifact("evaluation-path-330.png", await page.locator("#osm-cv").screenshot());
    await page.close();
  });

  test("the run control cross-validates the demo table in the page: progress, the engine's path and marks, out-of-fold view", async () => {
    const page = await openFitted(330);
    expect(await page.isVisible("#osm-cv-run")).toBe(true);
    await page.fill("#osm-cv-folds", "5");
    await page.fill("#osm-cv-seed", "7");
    await page.fill("#osm-cv-count", "6");
    await page.fill("#osm-cv-from", "0.01");
    await page.fill("#osm-cv-to", "100");
    await page.click("#osm-cv-run");
    await page.waitForFunction(() => /^Done in/.test(document.querySelector("#osm-cv-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });

    // The same cross-validation in Node, through the engine: same cells, options, folds and seed.
    const values = DEMO_SHEETS[0].values;
    const penalties = logSpacedPenalties(0.01, 100, 6);
    const cv = crossValidate({
      labels: values.map((r) => [r[6]]),
      predictors: values.map((r) => r.slice(2, 6)),
      options: readModelOptions("test", [["penalty=0; level=0.95; threshold=0.5"]]).model,
      folds: 5,
      seed: 7,
      penalties,
      outOfFold: true,
      budget: PANE_BUDGET,
    });
    expect(await page.$$eval("#osm-cv-chart .osm-path-bar", (b) => b.length)).toBe(cv.entries.filter((e) => Number.isFinite(e.scores.logLoss.mean)).length);
    const legend = await page.textContent("#osm-cv-legend");
    expect(legend).toContain(`lowest log-loss (penalty ${penalties[cv.lowest]})`);
    expect(legend).toContain(`one-SE choice (penalty ${penalties[cv.oneSe]})`);
    expect(await page.textContent("#osm-cv-status")).toContain(`one-standard-error choice is ${penalties[cv.oneSe]}`);
    expect(overlaps(await textBoxes(page, "#osm-cv-chart"))).toEqual([]);

    // Judge the fit on the out-of-fold probabilities: the ROC caption gives their AUC.
    await page.check("#osm-source-oof");
    const oof = cv.outOfFold!.probabilities[1];
    const labels = Float64Array.from(values.slice(1), (r) => (r[6] === "yes" ? 1 : 0));
    const auc = rocAuc(labels, oof, { level: 0.95 });
    await page.waitForFunction(() => /out-of-fold/.test(document.querySelector("#osm-roc-caption")?.textContent ?? ""));
    expect(await page.textContent("#osm-roc-caption")).toContain(`AUC ${auc.auc.toFixed(3)}`);
    await page.setViewportSize({ width: 1360, height: 4200 });
    saveArtifact("evaluation-path-run-330.png", await page.locator("#osm-cv").screenshot());
    saveArtifact("evaluation-oof-330.png", await page.locator("#osm-eval").screenshot());
    await page.close();
  });

  test("a long cross-validation shows progress and Cancel stops it; the pane stays usable", async () => {
    const page = await openFitted(330);
    // 20 folds x 30 penalties = 600 fits: seconds of work, run in the background worker.
    await page.fill("#osm-cv-folds", "20");
    await page.fill("#osm-cv-count", "30");
    await page.click("#osm-cv-run");
    await page.waitForFunction(() => /^Cross-validation: \d+ of \d+ fits/.test(document.querySelector("#osm-cv-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });
    expect(await page.isVisible("#osm-cv-progress")).toBe(true);
    expect(await page.isVisible("#osm-cv-cancel")).toBe(true);
    saveArtifact("evaluation-path-progress-330.png", await page.locator("#osm-cv").screenshot());
    await page.click("#osm-cv-cancel");
    await page.waitForFunction(() => /cancelled/.test(document.querySelector("#osm-cv-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });
    // Still usable: a small path runs to the end afterwards.
    await page.fill("#osm-cv-folds", "5");
    await page.fill("#osm-cv-count", "4");
    await page.click("#osm-cv-run");
    await page.waitForFunction(() => /^Done in/.test(document.querySelector("#osm-cv-status")?.textContent ?? ""), null, { timeout: FIT_WAIT_MS });
    expect(await page.$$eval("#osm-cv-chart .osm-path-bar", (b) => b.length)).toBe(4);
    await page.close();
  });

  test("the demo workbook's Check sheet shows the validate-and-decide steps, computed", async () => {
    const page = await browser.context.newPage();
    page.on("pageerror", (e) => pageErrors.push(e.message));
    await page.goto(`${browser.base}/preview.html`);
    await page.click('.ledger-tab[data-sheet="Check"]');
    await page.waitForSelector('.ledger-table td[data-row="4"][data-col="4"]');
    const { labels, p } = engineFit();
    const shown = Number(await page.textContent('.ledger-table td[data-row="4"][data-col="4"]'));
    expect(shown).toBeCloseTo(rocAuc(labels, p).auc, 3);
    expect(await page.$$eval(".ledger-table td.is-error", (tds) => tds.length)).toBe(0);
    saveArtifact("workbench-check-sheet.png", await page.screenshot({ fullPage: false }));
    await page.close();
  });

  test("no page error occurred", () => {
    expect(pageErrors).toEqual([]);
  });
});
