/**
 * ODDS.CONFUSION(labels, probabilities, [options]): counts of actual against predicted classes.
 * Two classes: predicted positive when p >= threshold (engine confusionCounts), with sensitivity,
 * specificity, precision, negative predictive value, F1 and accuracy. Several classes: the most
 * probable class is predicted (engine confusionMatrix), with accuracy and each class's recall.
 * Layout: one row per ACTUAL class, one column per PREDICTED class.
 */
import { confusionCounts, confusionMatrix, type CellValue } from "../engine";
import { problem } from "../shared/messages";
import { spill } from "../shared/cellOutput";
import { readMetricInputs, withSheetRows } from "./metricInputs";
import { CONFUSION_OPTIONS } from "./metricOptions";
import { OPT_THRESHOLD, parseOptions } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { required } from "./required";

const CORNER = "actual \\ predicted";

/** The ODDS.CONFUSION adapter. */
export function confusionCell(labels: CellValue[][] | null, probabilities: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const l = required(labels, "labels");
  const p = required(probabilities, "probabilities");
  checkPayload([{ argument: "labels", cells: l }, { argument: "probabilities", cells: p }], 200);
  const opts = parseOptions("ODDS.CONFUSION", CONFUSION_OPTIONS, options);
  const inputs = readMetricInputs(l, p, { fn: "ODDS.CONFUSION", positive: opts.positive, headers: opts.headers });
  const footer = [
    ["rows used", inputs.rowsUsed],
    ["rows skipped", inputs.rowsSkipped],
  ];
  if (inputs.kind === "binary") {
    const c = withSheetRows(inputs, () => confusionCounts(inputs.y, inputs.p, { threshold: opts.threshold }));
    const [negative, positive] = inputs.classes;
    const rows: unknown[][] = [
      [CORNER, negative, positive],
      [negative, c.trueNegatives, c.falsePositives],
      [positive, c.falseNegatives, c.truePositives],
      [],
      ["threshold", c.threshold],
      [`sensitivity (${positive})`, c.sensitivity],
      [`specificity (${negative})`, c.specificity],
      ["precision", c.precision],
      ["negative predictive value", c.negativePredictiveValue],
      ["F1", c.f1],
      ["accuracy", c.accuracy],
      ...footer,
    ];
    if (c.diagnostics.length > 0) rows.push([], ...c.diagnostics.map((d) => [d.message]));
    return spill(rows);
  }
  // Several classes: each row gets its most probable class; a threshold would be ignored, so refuse it.
  if (opts.threshold !== OPT_THRESHOLD.default) {
    throw problem("BAD_OPTION_VALUE", {
      name: "threshold",
      value: opts.threshold,
      expected: "A threshold applies to two classes only; with several classes each row is assigned its most probable class. Remove the threshold option.",
    });
  }
  const m = withSheetRows(inputs, () => confusionMatrix(inputs.classIndex, inputs.probabilities));
  const k = inputs.classes.length;
  const rows: unknown[][] = [[CORNER, ...inputs.classes]];
  for (let a = 0; a < k; a++) rows.push([inputs.classes[a], ...Array.from(m.counts[a])]);
  rows.push([], ["accuracy", m.accuracy]);
  for (let a = 0; a < k; a++) {
    let total = 0;
    for (let b = 0; b < k; b++) total += m.counts[a][b];
    // Recall of a class absent from the labels is 0/0: left blank (NaN -> "").
    rows.push([`recall (${inputs.classes[a]})`, total > 0 ? m.counts[a][a] / total : NaN]);
  }
  rows.push(...footer);
  return spill(rows);
}
