/**
 * The data of a cross-validation or held-out check, prepared once: the ranges as the user gave
 * them, the header decision, which rows can enter a fit and their classes, the case weights, and a
 * fit on every usable row (the reference for in-sample scores).
 *
 * Policy (one line each):
 * - The rows that can enter the folds or the split are the rows a fit of the same model on all rows
 *   uses: a label and every value the model needs (predictors, or with a recipe its basis values,
 *   weights, offset). Other rows get no held-out value and keep their place in every output.
 * - The header decision of the whole ranges is kept for every later fit (forced "yes" or "no"), so a
 *   fit on part of the rows can never read the ranges differently.
 * - The classes, the positive class (two classes) and the reference class (several) are those of the
 *   fit on all rows, passed to every later fit by name, so every fit models the same classes.
 * - Grouped counts (trials) are refused: holding out a row would hold out many cases at once.
 * - Profile intervals are never computed in these fits (only probabilities are used): Wald.
 */
import { agreeHeaders, type RangeArg } from "../data/alignRanges";
import { readTable, padTable } from "../data/table";
import { problem } from "../messages";
import { trainModel, type ModelOptions, type TrainedModel } from "../model";
import { parseRecipe } from "../basis/recipe";
import type { CellValue } from "../types";
import { FoldPredictors } from "./foldPredictors";

/** The prepared data of an evaluation. */
export interface EvaluationData {
  /** The labels cells as given (a header row when `header`). */
  labels: CellValue[][];
  predictors: FoldPredictors;
  /** Options for every later fit: headers forced, classes fixed by name, Wald intervals. */
  options: ModelOptions;
  header: boolean;
  /** Data rows of the aligned ranges. */
  rows: number;
  /** 1-based range row of data row 0. */
  firstRow: number;
  kind: "binary" | "multiclass";
  classes: string[];
  positiveClass: string | null;
  referenceClass: string | null;
  /** Class index per data row for rows that can enter a fit, -1 otherwise. */
  classOfRow: Int32Array;
  /** Case weight per data row (NaN where blank), or null without weights. */
  weights: Float64Array | null;
  /** The fit on every usable row. */
  full: TrainedModel;
  /** Predictor terms of the fit on all rows plus the intercept, times its equations. */
  parameters: number;
}

/** The case weights per data row, read with the fit's header decision. */
function readWeights(cells: CellValue[][] | null | undefined, header: boolean, rows: number): Float64Array | null {
  if (cells == null) return null;
  const t = padTable(readTable(cells, { argument: "weights", headers: header ? "yes" : "no" }), rows);
  return Float64Array.from(t.columns[0].values as Float64Array);
}

/** The ranges of a fit in reading order, for the header decision (as trainModel reads them). */
function fitRanges(labels: CellValue[][], predictors: CellValue[][], options: ModelOptions): RangeArg[] {
  const ranges: RangeArg[] = [
    { argument: "labels", cells: labels },
    { argument: "predictors", cells: predictors },
  ];
  for (const key of ["weights", "offset"] as const) if (options[key] != null) ranges.push({ argument: key, cells: options[key] as CellValue[][] });
  return ranges;
}

/**
 * Prepare the data of an evaluation (see the policy above): one fit on all usable rows.
 *
 * @param recipe a basis recipe to build inside every fit from its training rows, or null
 * @throws OddsmithError CV_GROUPED_COUNTS, and trainModel's and the recipe's input problems
 */
export function prepareEvaluationData(labels: CellValue[][], predictors: CellValue[][], options: ModelOptions, recipe: string | null): EvaluationData {
  if (options.trials != null) throw problem("CV_GROUPED_COUNTS");
  const plan = recipe !== null && recipe.trim() !== "" ? parseRecipe(recipe) : null;
  const header = agreeHeaders(fitRanges(labels, predictors, options), options.headers ?? "auto").header;
  const fixed: ModelOptions = { ...options, intervalMethod: "wald", headers: header ? "yes" : "no" };
  const source = new FoldPredictors(predictors, plan, header);
  const full = trainModel(labels, source.forTraining(null).cells, fixed);
  const codes = full.labels.codes as Int32Array;
  const classOfRow = new Int32Array(full.rows).fill(-1);
  for (let i = 0; i < full.rows; i++) if (full.rowMap[i] >= 0 && codes[i] >= 0) classOfRow[i] = codes[i];
  const equations = full.kind === "binary" ? 1 : full.labels.classes.length - 1;
  return {
    labels,
    predictors: source,
    options: {
      ...fixed,
      positive: full.labels.positiveClass ?? null,
      reference: full.kind === "multiclass" ? (full.labels.referenceClass ?? null) : null,
    },
    header,
    rows: full.rows,
    firstRow: full.firstRow,
    kind: full.kind,
    classes: full.labels.classes.slice(),
    positiveClass: full.labels.positiveClass ?? null,
    referenceClass: full.labels.referenceClass ?? null,
    classOfRow,
    weights: readWeights(options.weights, header, full.rows),
    full,
    parameters: (full.design.columns.length + ((options.intercept ?? true) ? 1 : 0)) * equations,
  };
}
