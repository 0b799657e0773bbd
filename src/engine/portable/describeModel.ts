/**
 * describeModel: a trained model as a model description (modelDescription.ts), the plain JSON
 * document that scores new rows exactly as the model does.
 *
 * Policy (one line each):
 * - Coefficients, covariance and statistics are copied as they are; numbers that are not finite
 *   become null (JSON has no NaN).
 * - The data summary counts the fitted rows only: numbers give count, minimum, maximum and mean;
 *   categories give each level's count (the reference level's count is the rows without an indicator).
 * - A basis recipe state is stored only when the caller knows which recipe built predictor columns
 *   (the task pane's generated columns, or the recipe given to ODDS.FORMULAS), and only when at
 *   least one of its output names is a predictor column of the model (else it describes nothing
 *   the model uses).
 * Reference: the description format in docs/model-description.md (our own).
 */
import type { RecipeState } from "../basis/recipe";
import type { ColumnEncoding } from "../data/design";
import type { TrainedModel } from "../model/types";
import { DESCRIPTION_FORMAT, DESCRIPTION_VERSION, type DescribedColumnSummary, type MaybeNumber, type ModelDescription } from "./modelDescription";

/** What the caller adds to a trained model to describe it. */
export interface DescribeOptions {
  /** Name of the model in the workbook. */
  name: string;
  /** Program version writing the description (the add-in's). */
  producerVersion: string;
  /** The recipe state that built some of the model's predictor columns from raw data columns. */
  basis?: RecipeState | null;
  /** Time of writing (ISO 8601); null leaves it out. */
  created?: string | null;
}

/** A number for JSON: finite numbers as they are, anything else null. */
export function jsonNumber(x: number): MaybeNumber {
  return Number.isFinite(x) ? x : null;
}

/** The training summary of each predictor column from the fitted design. */
function summarizeColumns(model: TrainedModel): DescribedColumnSummary[] {
  const design = model.design;
  const out: DescribedColumnSummary[] = [];
  let t = 0;
  for (const c of model.encoding.columns as ColumnEncoding[]) {
    if (c.kind === "ignored") continue;
    if (c.kind === "number") {
      const x = design.columns[t];
      let min = Infinity;
      let max = -Infinity;
      let sum = 0;
      for (let i = 0; i < x.length; i++) {
        if (x[i] < min) min = x[i];
        if (x[i] > max) max = x[i];
        sum += x[i];
      }
      out.push({ name: c.name, kind: "number", count: x.length, min, max, mean: sum / x.length });
      t += 1;
      continue;
    }
    const counts = c.terms.map((_, k) => design.columns[t + k].reduce((s, v) => s + v, 0));
    const withTerm = c.levels.filter((l) => l !== c.reference);
    const inTerms = counts.reduce((s, v) => s + v, 0);
    const levels = c.levels.map((l) => ({ level: l, count: l === c.reference ? design.rows - inTerms : counts[withTerm.indexOf(l)] }));
    out.push({ name: c.name, kind: "category", count: design.rows, levels });
    t += c.terms.length;
  }
  return out;
}

/**
 * Describe a trained model as a model description (format version DESCRIPTION_VERSION).
 * @param model - a model from trainModel whose fit has usable estimates
 * @example describeModel(trainModel(labels, predictors), { name: "crates", producerVersion: "0.1.0" }).terms
 */
export function describeModel(model: TrainedModel, options: DescribeOptions): ModelDescription {
  const fit = model.fit;
  const columns = summarizeColumns(model);
  const predictorNames = new Set(model.encoding.columns.map((c) => c.name));
  const basis = options.basis && options.basis.names.some((n) => predictorNames.has(n)) ? options.basis : null;
  return {
    format: DESCRIPTION_FORMAT,
    formatVersion: DESCRIPTION_VERSION,
    producer: { name: "Oddsmith", version: options.producerVersion },
    created: options.created ?? null,
    name: options.name,
    kind: fit.kind,
    form: fit.form,
    label: {
      name: model.labels.name,
      classes: [...fit.classes],
      positiveClass: fit.positiveClass ?? null,
      referenceClass: fit.referenceClass ?? null,
    },
    terms: [...fit.terms],
    intercept: fit.intercept,
    equations: fit.coefficients.map((b, e) => ({ class: fit.equationClasses[e], coefficients: Array.from(b, jsonNumber) })),
    aliased: [...fit.aliased],
    covariance: fit.covariance ? Array.from(fit.covariance, jsonNumber) : null,
    predictors: { header: model.encoding.header, columns: JSON.parse(JSON.stringify(model.encoding.columns)) as ColumnEncoding[] },
    basis: basis ? (JSON.parse(JSON.stringify(basis)) as RecipeState) : null,
    offset: model.usesOffset ? { column: model.offsetColumn ?? "offset" } : null,
    options: {
      threshold: model.threshold,
      penalty: fit.penalty,
      penalized: fit.penalized,
      biasReduced: fit.biasReduced,
      level: fit.level,
      intervalMethod: fit.intervalMethod,
    },
    data: {
      rowsUsed: fit.rowsUsed,
      observations: fit.observations,
      rowsSkipped: model.skipped.total,
      classCounts: [...model.labels.counts],
      columns,
    },
    fit: {
      converged: fit.converged,
      iterations: fit.iterations,
      logLikelihood: jsonNumber(fit.logLikelihood),
      nullLogLikelihood: jsonNumber(fit.nullLogLikelihood),
      deviance: jsonNumber(fit.deviance),
      aic: jsonNumber(fit.aic),
      bic: jsonNumber(fit.bic),
      parameters: fit.parameters,
      diagnostics: fit.diagnostics.map((d) => ({ code: d.code, severity: d.severity, message: d.message })),
    },
  };
}
