/**
 * What the fitting cell functions (FIT, PROB, CLASS, MARGIN, REPORT) add to the fit service
 * (src/shared/fitService.ts): their range arguments may be missing, a fit without usable estimates
 * becomes a cell error, and a threshold they cannot use is refused.
 */
import type { CellValue, TrainedModel } from "../engine";
import { fitFailure, fitForCell, type ModelCallOptions } from "../shared/fitService";
import { OPT_THRESHOLD } from "../shared/options";
import { isMessageCode, problem } from "../shared/messages";
import { required } from "./required";

/**
 * The model of a fitting function's labels x predictors under `options`, through the fit service.
 * @param extraOutputCells - cells the calling function will return, for the payload estimate
 * @throws OddsmithError EMPTY_RANGE for a missing range, RANGE_TOO_LARGE, and the fit's input problems
 */
export function fittedModel(
  labels: CellValue[][] | null,
  predictors: CellValue[][] | null,
  options: Pick<ModelCallOptions, "model">,
  extraOutputCells: number,
  extraInputs: { argument: string; cells: unknown }[] = [],
): TrainedModel {
  const request = { labels: required(labels, "labels"), predictors: required(predictors, "predictors"), options };
  return fitForCell(request, extraOutputCells, extraInputs);
}

/**
 * Throw the fit's error diagnostic as a cell error (#N/A with its message): a fit without usable
 * estimates never shows numbers.
 */
export function requireUsableFit(model: TrainedModel): void {
  const failure = fitFailure(model);
  if (!failure) return;
  const error = problem(isMessageCode(failure.code) ? failure.code : "INTERNAL");
  // The diagnostic already carries the filled-in message (with columns and rows).
  error.message = failure.message;
  throw error;
}

/**
 * A threshold set for a multi-class model would be silently ignored (each row gets its most probable
 * class): refuse it with BAD_OPTION_VALUE instead. The default value passes.
 */
export function refuseThresholdForSeveralClasses(model: TrainedModel, threshold: number): void {
  if (model.kind !== "multiclass" || threshold === OPT_THRESHOLD.default) return;
  throw problem("BAD_OPTION_VALUE", {
    name: "threshold",
    value: threshold,
    expected:
      "A threshold applies to two classes only; with several classes each row gets its most probable class. Remove the threshold option.",
  });
}
