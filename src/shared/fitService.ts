/**
 * The fit service: the one way the cell functions (FIT, PROB, CLASS, MARGIN, REPORT) and the task
 * pane get a trained model. It reads the fit options (the same reader for both), keys the model by
 * the content of its inputs, keeps it in the shared fit cache, and, for a cell, guards the call's
 * payload first.
 *
 * Cache policy: the key is the content of the labels and predictors cells plus every option that
 * changes the fit (the threshold does not: it only changes scoring), so every fitting function and
 * the pane over the same ranges share one fit, and any edited, appended or deleted cell refits. The
 * cache is src/shared/fitCache.ts, one instance per runtime (cell functions and pane share it).
 *
 * Payload policy: a cell call is refused with RANGE_TOO_LARGE above about 5 MB (payload.ts); the
 * pane's fits skip that guard, because the pane reads large tables in chunks, not through one call.
 */
import { trainModel, type CellValue, type Diagnostic, type ModelOptions, type TrainedModel } from "../engine";
import { cellCount, contentKey, contentKeyAndSizes, sharedFitCache } from "./fitCache";
import { FIT_OPTIONS, OPT_INTERVAL, OPT_LEVEL, parseBaselines, parseOptions, type ParsedOptions } from "./options";
import { PAYLOAD_SIZER, checkPayload, surelyTooLarge, type PayloadPart } from "./payload";

export type FitCellOptions = ParsedOptions<typeof FIT_OPTIONS>;

/** Parsed options of a fitting function, split into what the fit needs and what scoring needs. */
export interface ModelCallOptions {
  model: ModelOptions;
  threshold: number;
  headers: "auto" | "yes" | "no";
  parsed: FitCellOptions;
}

/** What a fit is made from: the labels and predictors cells (header rows included) and the fit options. */
export interface FitRequest {
  labels: CellValue[][];
  predictors: CellValue[][];
  options: Pick<ModelCallOptions, "model">;
}

/**
 * The fit options of parsed fitting-function options: one builder, so every function over the same
 * ranges and settings computes the same cache key (ODDS.EFFECTS, ODDS.FOLDS and ODDS.GROUPS parse
 * schemas of their own; those without the interval options, which use only probabilities, get the
 * defaults).
 */
export function modelOptionsOf(
  o: Omit<FitCellOptions, "threshold" | "level" | "interval"> & Partial<Pick<FitCellOptions, "level" | "interval">>,
): ModelOptions {
  return {
    headers: o.headers,
    positive: o.positive,
    reference: o.reference,
    intercept: o.intercept,
    penalty: o.penalty,
    penaltyScale: o.scale,
    firth: o.firth,
    level: o.level ?? OPT_LEVEL.default,
    intervalMethod: o.interval ?? OPT_INTERVAL.default,
    referenceLevels: o.baseline.length > 0 ? parseBaselines(o.baseline) : null,
    minLevelCount: o.pool,
    form: o.form,
  };
}

/**
 * Parse the options argument of a fitting function (`fn` as the user sees it, e.g. "ODDS.FIT"; the
 * pane passes its own name). The pane writes the same options text into its formulas, so both parse
 * to the same fit options and the same cache key.
 */
export function readModelOptions(fn: string, options: CellValue[][] | null): ModelCallOptions {
  return modelCallOptions(parseOptions(fn, FIT_OPTIONS, options));
}

/** The fit and scoring options of parsed fitting options (also for schemas that extend FIT_OPTIONS). */
export function modelCallOptions(o: FitCellOptions): ModelCallOptions {
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
 * it only changes scoring). fitForCell computes the very same key in the pass that also sizes the
 * cells, so a model the pane fitted (on its own thread or in its worker) is the one its formulas find.
 * @example modelCacheKey([["y"], ["a"]], [["x"], [1]], { penalty: 0 }) === modelCacheKey([["y"], ["a"]], [["x"], [1]], { penalty: 0 })
 */
export function modelCacheKey(labels: CellValue[][], predictors: CellValue[][], model: ModelOptions): string {
  return contentKey(MODEL_KEY_VERSION, labels, predictors, model as unknown as Record<string, unknown>);
}

/** The cache key of a request's model (modelCacheKey of its cells and fit options). */
export function fitKey(request: FitRequest): string {
  return modelCacheKey(request.labels, request.predictors, request.options.model);
}

/**
 * A cell function's model: trained, or fetched from the cache, after the payload guard.
 * @param extraOutputCells - cells the calling function will return, for the payload estimate
 * @param extraInputs - the call's other range arguments (new rows), for the payload estimate
 * @throws OddsmithError RANGE_TOO_LARGE, and input problems of the fit (never cached: the next call re-checks)
 */
export function fitForCell(request: FitRequest, extraOutputCells: number, extraInputs: { argument: string; cells: unknown }[] = []): TrainedModel {
  const { labels, predictors, options } = request;
  const parts: PayloadPart[] = [{ argument: "labels", cells: labels }, { argument: "predictors", cells: predictors }, ...extraInputs];
  // A call the cheapest bound rejects is refused before its cells are hashed.
  if (surelyTooLarge(parts, extraOutputCells)) checkPayload(parts, extraOutputCells);
  // The pass that hashes the cells for the cache key (modelCacheKey's key) also sizes them by the
  // estimate rule: the cells are read once for both. (Always sized, so that this one loop is compiled
  // for one kind of call.)
  const { key, sizes } = contentKeyAndSizes([MODEL_KEY_VERSION, labels, predictors, options.model], PAYLOAD_SIZER);
  parts[0].bytes = sizes[1];
  parts[1].bytes = sizes[2];
  checkPayload(parts, extraOutputCells);
  return modelCache().getOrCreate(key, cellCount(labels, predictors), () => trainModel(labels, predictors, options.model));
}

/** The pane's model: trained on the pane's thread, or taken from the cache where a formula or an earlier fit left it. */
export function fitForPane(request: FitRequest): TrainedModel {
  return modelCache().getOrCreate(fitKey(request), cellCount(request.labels, request.predictors), () =>
    trainModel(request.labels, request.predictors, request.options.model),
  );
}

/** Keep a model trained elsewhere (the pane's worker) in the cache under its request's key, for the cells. */
export function shareFit(request: FitRequest, model: TrainedModel): void {
  modelCache().set(fitKey(request), model, cellCount(request.labels, request.predictors));
}

/** The first diagnostic of severity "error" (the fit has no usable estimates), or null. */
export function fitFailure(model: TrainedModel): Diagnostic | null {
  return model.fit.diagnostics.find((d) => d.severity === "error") ?? null;
}
