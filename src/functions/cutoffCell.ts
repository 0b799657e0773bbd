/**
 * ODDS.CUTOFF(labels, probabilities, [options]): the decision threshold chosen by one rule (engine
 * chooseThreshold) and the confusion counts at it. Rules, one per call: `cost` (cost of a false
 * positive over that of a false negative; the default, 1), `sensitivity` (target), `budget` (at most
 * this many rows flagged). Two classes only.
 */
import { chooseThreshold, type CellValue, type ThresholdRule } from "../engine";
import { problem } from "../shared/messages";
import { spill } from "../shared/cellOutput";
import { readMetricInputs, withSheetRows } from "./metricInputs";
import { CUTOFF_OPTIONS } from "./metricOptions";
import { parseOptions } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { required } from "./required";

/** The one rule the options ask for; two rules at once are refused. */
function ruleOf(opts: { cost: number | null; sensitivity: number | null; budget: number | null }): ThresholdRule {
  const given = (["cost", "sensitivity", "budget"] as const).filter((k) => opts[k] !== null);
  if (given.length > 1) {
    throw problem("BAD_OPTION_VALUE", {
      name: given[1],
      value: opts[given[1]],
      expected: `Give one rule only: cost, sensitivity or budget (this call gives ${given.join(" and ")}).`,
    });
  }
  if (opts.sensitivity !== null) return { rule: "sensitivity", target: opts.sensitivity };
  if (opts.budget !== null) return { rule: "budget", budget: opts.budget };
  return { rule: "cost", costRatio: opts.cost ?? 1 };
}

/** The ODDS.CUTOFF adapter: a two-column table (what, value), the 2 x 2 counts, then the rates. */
export function cutoffCell(labels: CellValue[][] | null, probabilities: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const l = required(labels, "labels");
  const p = required(probabilities, "probabilities");
  checkPayload([{ argument: "labels", cells: l }, { argument: "probabilities", cells: p }], 40);
  const opts = parseOptions("ODDS.CUTOFF", CUTOFF_OPTIONS, options);
  const rule = ruleOf(opts);
  const inputs = readMetricInputs(l, p, { fn: "ODDS.CUTOFF", positive: opts.positive, headers: opts.headers, binaryOnly: true });
  const c = withSheetRows(inputs, () => chooseThreshold(inputs.y, inputs.p, rule));
  const [negative, positive] = inputs.classes;
  const k = c.counts;
  const ruleText =
    rule.rule === "cost"
      ? `least expected cost, a false positive costing ${rule.costRatio} x a false negative`
      : rule.rule === "sensitivity"
        ? `highest threshold with sensitivity >= ${rule.target}`
        : `lowest threshold flagging at most ${rule.budget} rows`;
  const rows: unknown[][] = [
    ["rule", ruleText],
    ["threshold", c.threshold],
    ["rows flagged (p >= threshold)", c.flaggedRows],
    [`expected cost per row (false positive = ${c.costRatio})`, c.expectedCost],
    [],
    ["actual \\ predicted", negative, positive],
    [negative, k.trueNegatives, k.falsePositives],
    [positive, k.falseNegatives, k.truePositives],
    [],
    [`sensitivity (${positive})`, k.sensitivity],
    [`specificity (${negative})`, k.specificity],
    ["precision", k.precision],
    ["accuracy", k.accuracy],
    ["rows used", inputs.rowsUsed],
    ["rows skipped", inputs.rowsSkipped],
  ];
  if (k.diagnostics.length > 0) rows.push([], ...k.diagnostics.map((d) => [d.message]));
  return spill(rows);
}
