/**
 * restoreModel: a checked model description (readDescription) turned back into a model that
 * scoreRows scores exactly as the fitted model did, with no refit and no data rows.
 *
 * Policy (one line each):
 * - Coefficients, aliased flags, covariance, classes, encodings and the threshold are taken as
 *   stored; an unavailable number (null) becomes NaN, which scoring meets only where the fitted
 *   model had NaN too (aliased terms, a covariance entry of a dropped term).
 * - The restored model holds no training rows: it scores the rows it is given (DESCRIPTION_NEEDS_ROWS otherwise).
 * - With a basis recipe state, rows to score are raw data columns under a header row: the recipe
 *   makes its columns from them exactly as at fit time, and every other predictor column is taken
 *   from the column of the same name (predictorsFromData).
 * Reference: docs/model-description.md (our own format); scoring as in predictBinary / predictMulticlass.
 */
import { tableBasisColumns } from "../evaluation/foldPredictors";
import { applyRecipe } from "../basis/recipe";
import type { DesignEncoding } from "../data/design";
import { readTable } from "../data/table";
import { listNames, problem } from "../messages";
import { scoreRows } from "../model";
import type { RowScores, ScoringModel } from "../model/types";
import type { CellValue, ScoringFit } from "../types";
import type { ModelDescription } from "./modelDescription";

/** A model read back from its description: scores like the fitted model, holds no data rows. */
export interface RestoredModel extends ScoringModel {
  description: ModelDescription;
}

const numbers = (values: readonly (number | null)[]): Float64Array => Float64Array.from(values, (v) => (v === null ? NaN : v));

/**
 * Turn a description from readDescription into a model scoreRows accepts.
 * @example scoreRows(restoreModel(readDescription(text)), newRows).prediction.probabilities
 */
export function restoreModel(desc: ModelDescription): RestoredModel {
  const fit: ScoringFit = {
    kind: desc.kind,
    classes: [...desc.label.classes],
    positiveClass: desc.label.positiveClass ?? undefined,
    referenceClass: desc.label.referenceClass ?? undefined,
    form: desc.form,
    terms: [...desc.terms],
    intercept: desc.intercept,
    coefficients: desc.equations.map((e) => numbers(e.coefficients)),
    equationClasses: desc.equations.map((e) => e.class),
    covariance: desc.covariance ? numbers(desc.covariance) : null,
    aliased: [...desc.aliased],
    level: desc.options.level,
  };
  const encoding: DesignEncoding = {
    version: 1,
    columns: desc.predictors.columns,
    terms: desc.predictors.columns.flatMap((c) => c.terms),
    header: desc.predictors.header,
  };
  return {
    kind: desc.kind,
    fit,
    encoding,
    trainingRows: null,
    trainingOffset: null,
    usesOffset: desc.offset !== null,
    offsetColumn: desc.offset?.column ?? null,
    threshold: desc.options.threshold,
    description: desc,
  };
}

/**
 * The predictor cells of a model with a basis recipe, made from raw data rows: a header row of the
 * model's predictor names, then per row the recipe's columns (blank where the recipe cannot compute
 * the row) and the other predictor columns copied from the data column of the same name.
 * @param rows - raw data with a header row naming its columns
 * @throws OddsmithError DESCRIPTION_COLUMN_MISSING for a predictor column neither made nor given;
 *   RECIPE_UNKNOWN_COLUMN when a column the recipe reads is missing
 */
export function predictorsFromData(desc: ModelDescription, rows: CellValue[][], argument = "rows"): CellValue[][] {
  const state = desc.basis;
  if (state === null) return rows;
  const table = readTable(rows, { argument, headers: "yes" });
  const block = applyRecipe(state, tableBasisColumns(table), argument);
  const header = rows[0].map((v) => (typeof v === "string" ? v.trim() : String(v ?? "")));
  const names = desc.predictors.columns.map((c) => c.name);
  const sources = names.map((name) => {
    const k = block.names.indexOf(name);
    if (k >= 0) return { made: block.columns[k], at: -1 };
    const at = header.indexOf(name);
    if (at < 0) throw problem("DESCRIPTION_COLUMN_MISSING", { column: name, argument, columns: listNames(header, 12) });
    return { made: null, at };
  });
  const out: CellValue[][] = [names];
  for (let i = 0; i < table.rows; i++) {
    out.push(sources.map((s) => (s.made ? (Number.isFinite(s.made[i]) ? s.made[i] : null) : rows[i + 1][s.at])));
  }
  return out;
}

/**
 * Score rows with a restored model: raw data rows when the description holds a basis recipe,
 * predictor rows otherwise (as ODDS.PROB's new_rows).
 * @example scoreRestored(restoreModel(readDescription(text)), rows).predictedClass
 */
export function scoreRestored(
  model: RestoredModel,
  rows: CellValue[][],
  options: { threshold?: number; offset?: CellValue[][] | null; argument?: string } = {},
): RowScores {
  const basis = model.description.basis !== null;
  const predictors = predictorsFromData(model.description, rows, options.argument ?? "rows");
  return scoreRows(model, predictors, { threshold: options.threshold, offset: options.offset, headers: basis ? "yes" : "auto" });
}
