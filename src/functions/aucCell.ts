/**
 * ODDS.AUC(labels, probabilities, [options]): area under the ROC curve of the positive-class
 * probabilities, with the DeLong standard error and a normal interval cut to [0, 1] (the engine's
 * rocAuc). Two classes only.
 */
import { rocAuc, type CellValue } from "../engine";
import { levelLabel, spill } from "../shared/cellOutput";
import { readMetricInputs, withSheetRows } from "./metricInputs";
import { AUC_OPTIONS } from "./metricOptions";
import { parseOptions } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { required } from "./required";

/**
 * The ODDS.AUC adapter.
 * @returns header row ["AUC", "lower 95%", "upper 95%", "std. error", "rows used"] and one row of
 *   values; notes (e.g. why the interval is missing) follow below a blank row
 */
export function aucCell(labels: CellValue[][] | null, probabilities: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const l = required(labels, "labels");
  const p = required(probabilities, "probabilities");
  checkPayload([{ argument: "labels", cells: l }, { argument: "probabilities", cells: p }], 10);
  const opts = parseOptions("ODDS.AUC", AUC_OPTIONS, options);
  const inputs = readMetricInputs(l, p, { fn: "ODDS.AUC", positive: opts.positive, headers: opts.headers, binaryOnly: true });
  const r = withSheetRows(inputs, () => rocAuc(inputs.y, inputs.p, { level: opts.level }));
  const pct = levelLabel(r.level);
  const rows: unknown[][] = [
    [`AUC (positive: ${inputs.positiveClass})`, `lower ${pct}`, `upper ${pct}`, "std. error", "rows used"],
    [r.auc, r.lower, r.upper, r.standardError, inputs.rowsUsed],
  ];
  if (r.diagnostics.length > 0) rows.push([], ...r.diagnostics.map((d) => [d.message]));
  return spill(rows);
}
