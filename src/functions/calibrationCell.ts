/**
 * ODDS.CALIBRATION(labels, probabilities, [options]): observed against expected counts by groups of
 * predicted probability (engine calibrationTable, quantile groups with ties kept together) and the
 * Hosmer-Lemeshow test on those groups (engine hosmerLemeshow). Two classes only. The grouping rule is
 * written under the table, because H-L results depend on it.
 */
import { calibrationTable, hosmerLemeshow, type HosmerLemeshowResult, type CellValue } from "../engine";
import { OddsmithError } from "../shared/messages";
import { spill } from "../shared/cellOutput";
import { readMetricInputs, withSheetRows } from "./metricInputs";
import { CALIBRATION_OPTIONS } from "./metricOptions";
import { parseOptions } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { required } from "./required";

/** The ODDS.CALIBRATION adapter. */
export function calibrationCell(labels: CellValue[][] | null, probabilities: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const l = required(labels, "labels");
  const p = required(probabilities, "probabilities");
  checkPayload([{ argument: "labels", cells: l }, { argument: "probabilities", cells: p }], 8 * 1000);
  const opts = parseOptions("ODDS.CALIBRATION", CALIBRATION_OPTIONS, options);
  const inputs = readMetricInputs(l, p, { fn: "ODDS.CALIBRATION", positive: opts.positive, headers: opts.headers, binaryOnly: true });
  const table = withSheetRows(inputs, () => calibrationTable(inputs.y, inputs.p, { groups: opts.groups }));
  let test: HosmerLemeshowResult | null = null;
  let testProblem: string | null = null;
  try {
    test = withSheetRows(inputs, () => hosmerLemeshow(inputs.y, inputs.p, { groups: opts.groups, sample: opts.sample }));
  } catch (error) {
    // Too few distinct groups: the table still stands; the test's absence is explained below it.
    if (error instanceof OddsmithError && error.code === "TOO_FEW_CALIBRATION_GROUPS") testProblem = error.message;
    else throw error;
  }
  const rows: unknown[][] = [
    ["group", "rows", "lowest p", "highest p", "mean predicted", `observed rate (${inputs.positiveClass})`, "expected", "observed"],
  ];
  table.groups.forEach((g, i) => rows.push([i + 1, g.rows, g.lower, g.upper, g.meanPredicted, g.observedRate, g.expected, g.observed]));
  rows.push([]);
  if (test) {
    rows.push(
      ["Hosmer-Lemeshow statistic", test.statistic],
      ["df", test.df],
      ["p", test.p],
      ["sample", test.sample],
    );
  } else rows.push(["Hosmer-Lemeshow test", testProblem]);
  rows.push(["groups formed", table.groups.length], ["groups requested", table.requestedGroups]);
  rows.push(["rows used", inputs.rowsUsed], ["rows skipped", inputs.rowsSkipped], ["grouping rule", table.rule]);
  if (test && test.diagnostics.length > 0) rows.push([], ...test.diagnostics.map((d) => [d.message]));
  return spill(rows);
}
