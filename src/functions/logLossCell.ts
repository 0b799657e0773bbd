/**
 * ODDS.LOGLOSS(labels, probabilities, [options]): mean negative log-likelihood of the observed classes.
 * Two classes with one column: the binary log-loss of the positive-class probability; one column per
 * class: the multi-class (categorical cross-entropy) form. Probabilities are clipped to
 * [1e-15, 1 - 1e-15] by the engine so one overconfident row gives a large finite loss, not Infinity.
 */
import { logLoss, multiclassLogLoss, type CellValue } from "../engine";
import { spill } from "../shared/cellOutput";
import { readMetricInputs, withSheetRows } from "./metricInputs";
import { LOGLOSS_OPTIONS } from "./metricOptions";
import { parseOptions } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { required } from "./required";

/**
 * The ODDS.LOGLOSS adapter.
 * @returns a 1x1 result holding the log-loss (natural log)
 */
export function logLossCell(labels: CellValue[][] | null, probabilities: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const l = required(labels, "labels");
  const p = required(probabilities, "probabilities");
  checkPayload([{ argument: "labels", cells: l }, { argument: "probabilities", cells: p }], 1);
  const opts = parseOptions("ODDS.LOGLOSS", LOGLOSS_OPTIONS, options);
  const inputs = readMetricInputs(l, p, { fn: "ODDS.LOGLOSS", positive: opts.positive, headers: opts.headers });
  const result = withSheetRows(inputs, () =>
    inputs.kind === "binary" ? logLoss(inputs.y, inputs.p) : multiclassLogLoss(inputs.classIndex, inputs.probabilities),
  );
  return spill([[result.value]]);
}
