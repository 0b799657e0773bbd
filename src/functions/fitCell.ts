/**
 * ODDS.FIT(labels, predictors, [options]): the coefficient table of a logistic (two classes) or
 * softmax (several classes) fit, as a spilled range.
 *
 * Layout (ODDS.SCORE reads it back, by header names):
 *   class (positive: yes) | term | coefficient | std. error | z | p | lower 95% | upper 95% | odds ratio | OR lower 95% | OR upper 95%
 * - The first header cell names the modelled class: "class (positive: yes)" for two classes (each
 *   row's class cell is the positive class), "class (reference: A)" for the reference-class form
 *   (each row is the equation of its class against A), "class (symmetric)" for the penalized
 *   symmetric form. Several classes show relative-risk ratios (RRR) instead of odds ratios.
 * - Profile-likelihood intervals are labelled "(profile)".
 * - Blank cells: numbers that do not exist (aliased terms; SE, z, p and intervals of penalized fits).
 * - Below the table, after one blank row: every warning and note of the fit, in words.
 * - A fit without usable estimates (separation without a remedy, divergence) is #N/A with the reason.
 */
import type { CoefficientRow, ModelFit, CellValue } from "../engine";
import { levelLabel, spill } from "../shared/cellOutput";
import { readModelOptions } from "../shared/fitService";
import { fittedModel, requireUsableFit } from "./modelCell";

/** Header row of the coefficient table of `fit`. */
export function coefficientHeader(fit: ModelFit): string[] {
  const pct = levelLabel(fit.level);
  const how = fit.intervalMethod === "profile" ? " (profile)" : "";
  const multi = fit.kind === "multiclass";
  const first = !multi
    ? `class (positive: ${fit.positiveClass})`
    : fit.form === "symmetric"
      ? "class (symmetric)"
      : `class (reference: ${fit.referenceClass})`;
  const ratio = multi ? "RRR" : "OR";
  return [
    first,
    "term",
    "coefficient",
    "std. error",
    "z",
    "p",
    `lower ${pct}${how}`,
    `upper ${pct}${how}`,
    multi ? "relative-risk ratio" : "odds ratio",
    `${ratio} lower ${pct}${how}`,
    `${ratio} upper ${pct}${how}`,
  ];
}

function tableRow(r: CoefficientRow): unknown[] {
  // An aliased term's numbers are NaN: shown blank.
  return [r.outcome, r.term, r.estimate, r.standardError, r.z, r.p, r.lower, r.upper, r.ratio, r.ratioLower, r.ratioUpper];
}

/**
 * The ODDS.FIT adapter.
 * @returns header row, one row per (class and) term, then the fit's warnings and notes
 */
export function fitCell(labels: CellValue[][] | null, predictors: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const opts = readModelOptions("ODDS.FIT", options);
  const model = fittedModel(labels, predictors, opts, 2000);
  requireUsableFit(model);
  const fit = model.fit;
  const rows: unknown[][] = [coefficientHeader(fit), ...fit.table.map(tableRow)];
  if (fit.diagnostics.length > 0) rows.push([], ...fit.diagnostics.map((d) => [d.message]));
  return spill(rows);
}
