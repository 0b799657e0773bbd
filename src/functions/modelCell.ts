/**
 * What the fitting cell functions (FIT, PROB, CLASS, MARGIN, REPORT) share: reading their options,
 * the payload guard, and one cached fit per distinct input.
 *
 * Cache policy: the key is the content of the labels and predictors cells plus every option that
 * changes the fit (the threshold does not: it only changes scoring), so FIT, PROB, CLASS, MARGIN and
 * REPORT over the same ranges share one fit, and any edited, appended or deleted cell refits. The
 * cache is src/shared/fitCache.ts, shared with the task pane in the shared runtime.
 */
import { trainModel, type ModelOptions, type TrainedModel, type CellValue, type Diagnostic } from "../engine";
import { isMessageCode, problem } from "../shared/messages";
import { cellCount, contentKey, contentKeyAndSizes, sharedFitCache } from "../shared/fitCache";
import { FIT_OPTIONS, OPT_THRESHOLD, parseBaselines, parseOptions, type ParsedOptions } from "./options";
import { PAYLOAD_SIZER, checkPayload, surelyTooLarge, type PayloadPart } from "./payload";
import { required } from "./required";

export type FitCellOptions = ParsedOptions<typeof FIT_OPTIONS>;

/** Parsed options of a fitting function, split into what the fit needs and what scoring needs. */
export interface ModelCallOptions {
  model: ModelOptions;
  threshold: number;
  headers: "auto" | "yes" | "no";
  parsed: FitCellOptions;
}

/**
 * The fit options of parsed fitting-function options: one builder, so every function over the same
 * ranges and settings computes the same cache key (ODDS.EFFECTS parses a schema of its own).
 */
export function modelOptionsOf(o: Omit<FitCellOptions, "threshold">): ModelOptions {
  return {
    headers: o.headers,
    positive: o.positive,
    reference: o.reference,
    intercept: o.intercept,
    penalty: o.penalty,
    penaltyScale: o.scale,
    firth: o.firth,
    level: o.level,
    intervalMethod: o.interval,
    referenceLevels: o.baseline.length > 0 ? parseBaselines(o.baseline) : null,
    minLevelCount: o.pool,
    form: o.form,
  };
}

/** Parse the options argument of a fitting function (`fn` as the user sees it, e.g. "ODDS.FIT"). */
export function readModelOptions(fn: string, options: CellValue[][] | null): ModelCallOptions {
  const o = parseOptions(fn, FIT_OPTIONS, options);
  return { model: modelOptionsOf(o), threshold: o.threshold, headers: o.headers, parsed: o };
}

/** The cache shared by every fitting function and the task pane. */
export function modelCache() {
  return sharedFitCache<TrainedModel>();
}

/** Version tag in every model key: change it when trainModel gives other results for the same inputs. */
export const MODEL_KEY_VERSION = "trainModel/1";

/**
 * The shared-cache key of the model of labels x predictors under the fit options `model`: a hash of
 * every cell (value and type, header row included) and of every fit option (the threshold is not one:
 * it only changes scoring). The task pane keys fits with this function and the cell functions compute
 * the very same key (fittedModel, in the pass that also sizes the cells), so a model the pane fitted
 * (on its own thread or in its worker) is the one its formulas find.
 * @example modelCacheKey([["y"], ["a"]], [["x"], [1]], { penalty: 0 }) === modelCacheKey([["y"], ["a"]], [["x"], [1]], { penalty: 0 })
 */
export function modelCacheKey(labels: CellValue[][], predictors: CellValue[][], model: ModelOptions): string {
  return contentKey(MODEL_KEY_VERSION, labels, predictors, model as unknown as Record<string, unknown>);
}


/**
 * Train (or fetch from the cache) the model of labels x predictors under `options`.
 * @param extraOutputCells - cells the calling function will return, for the payload estimate
 * @throws OddsmithError for input problems (never cached: the next call re-checks)
 */
export function fittedModel(
  labels: CellValue[][] | null,
  predictors: CellValue[][] | null,
  options: Pick<ModelCallOptions, "model">,
  extraOutputCells: number,
  extraInputs: { argument: string; cells: unknown }[] = [],
): TrainedModel {
  const l = required(labels, "labels");
  const p = required(predictors, "predictors");
  const parts: PayloadPart[] = [{ argument: "labels", cells: l }, { argument: "predictors", cells: p }, ...extraInputs];
  // A call the cheapest bound rejects is refused before its cells are hashed.
  if (surelyTooLarge(parts, extraOutputCells)) checkPayload(parts, extraOutputCells);
  // The pass that hashes the cells for the cache key (modelCacheKey's key) also sizes them by the
  // estimate rule: the cells are read once for both. (Always sized, so that this one loop is compiled
  // for one kind of call.)
  const { key, sizes } = contentKeyAndSizes([MODEL_KEY_VERSION, l, p, options.model], PAYLOAD_SIZER);
  parts[0].bytes = sizes[1];
  parts[1].bytes = sizes[2];
  checkPayload(parts, extraOutputCells);
  const cache = modelCache();
  return cache.getOrCreate(key, cellCount(l, p), () => trainModel(l, p, options.model));
}

/** The first diagnostic of severity "error" (the fit has no usable estimates), or null. */
export function fitFailure(model: TrainedModel): Diagnostic | null {
  return model.fit.diagnostics.find((d) => d.severity === "error") ?? null;
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
