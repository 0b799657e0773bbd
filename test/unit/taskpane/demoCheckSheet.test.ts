/**
 * The demo workbook's "Check" sheet (the validate-and-decide workflow) computes in the workbench's
 * formula evaluator: every formula gives a value, not an error, and the numbers are the engine's on
 * the same crates.
 */
import { loadDemo, DEMO_SHEETS } from "../../../src/preview/demo";
import { evaluateFormula } from "../../../src/preview/formulas";
import { MemoryWorkbook } from "../../../src/taskpane/memoryPort";
import { scoreRows, trainModel } from "../../../src/engine/model";
import { rocAuc } from "../../../src/engine/metrics/rocAuc";
import { confusionCounts } from "../../../src/engine/metrics/confusionCounts";
import { readModelOptions } from "../../../src/shared/fitService";
import { ERROR_VALUES } from "../../../src/preview/formulas";

function checkSheet() {
  const wb = new MemoryWorkbook({ evaluator: evaluateFormula });
  loadDemo(wb);
  const rect = wb.usedRect("Check");
  return { wb, values: wb.read("Check", rect), rect };
}

function engine() {
  const values = DEMO_SHEETS[0].values.slice(1);
  const options = readModelOptions("test", [[""]]);
  const model = trainModel(values.map((r) => [r[6]]), values.map((r) => r.slice(2, 6)), options.model);
  return { p: scoreRows(model, null).prediction.probabilities[1], labels: Float64Array.from(values, (r) => (r[6] === "yes" ? 1 : 0)) };
}

test("the Check sheet holds formulas that all compute (no error value anywhere)", () => {
  const { wb, values } = checkSheet();
  const formulas = DEMO_SHEETS.find((s) => s.name === "Check")!.values.flat().filter((v) => typeof v === "string" && v.startsWith("="));
  expect(formulas.length).toBeGreaterThanOrEqual(4);
  const errors = values.flatMap((row, i) => row.map((v, j) => ((ERROR_VALUES as readonly unknown[]).includes(v) ? `${i + 1},${j + 1}: ${wb.message("Check", i + 1, j + 1)}` : null))).filter(Boolean);
  expect(errors).toEqual([]);
});

test("its fitted probabilities, AUC and counts are the engine's", () => {
  const { wb } = checkSheet();
  const { p, labels } = engine();
  expect(wb.value("Check", 3, 1)).toBe("P(yes)");
  for (const i of [0, 17, 239]) expect(wb.value("Check", 4 + i, 1)).toBeCloseTo(p[i], 12);
  // AUC spills a header row and a value row from D3.
  expect(wb.value("Check", 3, 4)).toBe("AUC (positive: yes)");
  const auc = rocAuc(labels, p);
  expect(wb.value("Check", 4, 4) as number).toBeCloseTo(auc.auc, 12);
  expect(wb.value("Check", 4, 5) as number).toBeCloseTo(auc.lower, 12);
  // The confusion table from D6: actual classes down, predicted across (no, yes).
  const c = confusionCounts(labels, p, { threshold: 0.5 });
  expect(wb.read("Check", { top: 7, left: 4, bottom: 8, right: 6 })).toEqual([
    ["no", c.trueNegatives, c.falsePositives],
    ["yes", c.falseNegatives, c.truePositives],
  ]);
  expect(wb.value("Check", 21, 4)).not.toBe("#SPILL!");
});
