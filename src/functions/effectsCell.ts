/**
 * ODDS.EFFECTS(labels, predictors, [options]): average marginal effects of the two-class fit of
 * labels x predictors on the positive-class probability (engine averageMarginalEffects), with
 * delta-method standard errors, z, p and interval.
 *
 * Layout:
 *   term | effect | average marginal effect on P(yes) | std. error | z | p | lower 95% | upper 95%
 * - "effect" says how each term is read: "slope (dP/dx)" for number columns, "change 0 -> 1" for
 *   0/1 columns, "change from <reference>" for a level of a text predictor.
 * - Blank cells: numbers that do not exist (aliased terms; SE, z, p and intervals of penalized fits).
 * - Below the table, after one blank row: what the effects cannot show (EFFECTS_NOT_CAUSAL), then
 *   the effects' and the fit's warnings and notes, in words.
 * - Same options as ODDS.FIT (the same cached fit; the threshold is accepted and changes nothing),
 *   plus `indicators`.
 * - A fit without usable estimates is #N/A with the reason; several classes are refused.
 */
import { averageMarginalEffects, type CellValue, type MarginalEffect } from "../engine";
import { formatMessage, problem } from "../shared/messages";
import { levelLabel, spill } from "../shared/cellOutput";
import { EFFECTS_OPTIONS } from "./metricOptions";
import { modelOptionsOf } from "../shared/fitService";
import { parseOptions } from "../shared/options";
import { fittedModel, requireUsableFit } from "./modelCell";

/** How a term's effect reads, for the "effect" column. */
function effectLabel(e: MarginalEffect): string {
  if (e.kind === "slope") return "slope (dP/dx)";
  return e.from === "0" && e.to === "1" ? "change 0 -> 1" : `change from ${e.from}`;
}

/**
 * The ODDS.EFFECTS adapter.
 * @returns header row, one row per term (design column), then the caution and the notes
 */
export function effectsCell(labels: CellValue[][] | null, predictors: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const o = parseOptions("ODDS.EFFECTS", EFFECTS_OPTIONS, options);
  const model = fittedModel(labels, predictors, { model: modelOptionsOf(o) }, 4000);
  // Several classes are refused first: that, not a fit problem, is what the user must change.
  if (model.kind !== "binary") throw problem("EFFECTS_TWO_CLASSES_ONLY", { count: model.fit.classes.length });
  requireUsableFit(model);
  const r = averageMarginalEffects(model, { indicators: o.indicators });
  const pct = levelLabel(r.level);
  const positive = model.fit.positiveClass as string;
  const rows: unknown[][] = [
    ["term", "effect", `average marginal effect on P(${positive})`, "std. error", "z", "p", `lower ${pct}`, `upper ${pct}`],
    ...r.effects.map((e) => [e.term, effectLabel(e), e.estimate, e.standardError, e.z, e.p, e.lower, e.upper]),
    [],
    [formatMessage("EFFECTS_NOT_CAUSAL", { positive, rows: r.rows })],
  ];
  for (const d of [...r.diagnostics, ...model.fit.diagnostics]) rows.push([d.message]);
  return spill(rows);
}
