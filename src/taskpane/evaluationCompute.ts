/**
 * The engine computations behind the evaluation section: the cross-validation path and the
 * threshold choice by goal. Both come from the engine's public surface, so the pane's path equals
 * ODDS.FOLDS's on the same rows, options, folds and seed, and its threshold equals ODDS.CUTOFF's.
 *
 * - pathCompute: the engine's crossValidationSteps over the job's penalties (every penalty on the
 *   same stratified folds), with the pane's work budget; it yields { done, total } fits between
 *   fits and returns the entries (mean and SE across folds of out-of-fold log-loss per penalty; a
 *   penalty without a usable fit in some fold has NaN and is left out of the chart and the choice),
 *   the engine's lowest and one-standard-error indices (choosePenalty), and the out-of-fold
 *   probabilities of the positive class at the one-SE penalty, one per data row of the table (NaN
 *   where a row has none). It runs both inline and in dist/evalworker.js.
 * - thresholdChooser: the engine's threshold for a cost ratio FP : FN, a target sensitivity or a
 *   review budget (top N rows), from the labels and probabilities the section shows.
 */
import { chooseThreshold, crossValidationSteps, PANE_BUDGET, type CrossValidationResult, type ThresholdRule } from "../engine";
import type { ThresholdChooser } from "./evaluationController";
import { shortestThreshold } from "./evaluationGeometry";
import type { CvCompute, CvJob, CvProgress, CvResult } from "./evaluationRunner";

/** The path's steps: the engine's cross-validation of every penalty, yielding progress between fits. */
function* pathSteps(job: CvJob): Generator<CvProgress, CvResult, void> {
  const steps = crossValidationSteps({
    labels: job.labels,
    predictors: job.predictors,
    options: job.options,
    folds: job.folds,
    seed: job.seed,
    penalties: job.penalties,
    outOfFold: true,
    pick: "one-se",
    budget: PANE_BUDGET,
  });
  for (;;) {
    const step = steps.next();
    if (step.done) return pathResult(step.value);
    yield { done: step.value.done, total: step.value.total };
  }
}

/** The pane's view of a finished cross-validation path. */
export function pathResult(cv: CrossValidationResult): CvResult {
  const entries = cv.entries.map((e) => ({ penalty: e.penalty, mean: e.scores.logLoss.mean, standardError: e.scores.logLoss.standardError }));
  // Two classes: the positive class is class index 1 (as in the engine's scores); several: no single column.
  const outOfFold = cv.kind === "binary" && cv.outOfFold ? Float64Array.from(cv.outOfFold.probabilities[1]) : null;
  return { entries, best: cv.lowest, oneSe: cv.oneSe, folds: cv.folds, rows: cv.rowsInFolds, outOfFold };
}

/** The path computation (see CvCompute). */
export const pathCompute: CvCompute | null = pathSteps;

/** The engine's threshold choice (chooseThreshold), with a note of what it found. */
export const thresholdChooser: ThresholdChooser | null = (labels, probabilities, goal, value) => {
  const rule: ThresholdRule =
    goal === "cost" ? { rule: "cost", costRatio: value } : goal === "sensitivity" ? { rule: "sensitivity", target: value } : { rule: "budget", budget: value };
  const found = chooseThreshold(labels, probabilities, rule);
  const c = found.counts;
  // Shown and used as the shortest decimal that flags exactly the same rows (p >= threshold).
  let below = 0;
  for (const q of probabilities) if (q < found.threshold && q > below) below = q;
  const threshold = found.threshold >= 1 ? found.threshold : shortestThreshold(found.threshold, below);
  const why =
    goal === "cost"
      ? `least expected cost ${found.expectedCost.toPrecision(4)} per row at a cost ratio FP : FN of ${value}`
      : goal === "sensitivity"
        ? `highest threshold reaching sensitivity ${value}`
        : `lowest threshold flagging at most ${value} rows`;
  return {
    threshold,
    note: `Threshold ${threshold}: ${why}; ${found.flaggedRows} rows flagged (TP ${c.truePositives}, FP ${c.falsePositives}, TN ${c.trueNegatives}, FN ${c.falseNegatives}).`,
  };
};
