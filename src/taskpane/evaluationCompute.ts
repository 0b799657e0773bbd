/**
 * The engine computations behind the evaluation section: the cross-validation path and the
 * threshold choice by goal. Both come from the engine's cross-validation and threshold-choice
 * functions (the engine's public surface); while the build lacks them they are null, and the
 * section hides what needs them (the path's run controls, the out-of-fold view, the cost /
 * sensitivity / budget choices) and keeps what the existing metrics give (ROC with AUC and DeLong
 * interval, calibration, counts at a typed or clicked threshold).
 *
 * Hooking them up:
 * - pathCompute: a generator over the job's penalties, one engine cross-validation per penalty
 *   (same folds: same seed and rows) yielding { done, total } after each, then returning the
 *   entries (mean and SE of out-of-fold log-loss per penalty), the engine's minimizing and
 *   one-standard-error indices, and the out-of-fold probabilities at the one-SE penalty aligned
 *   with the table's data rows. It runs both inline and in dist/evalworker.js.
 * - thresholdChooser: the engine's threshold for a cost ratio FP : FN, a target sensitivity or a
 *   review budget (top N rows), from the labels and probabilities the section shows.
 */
import { chooseThreshold, type ThresholdRule } from "../engine";
import type { ThresholdChooser } from "./evaluationController";
import { shortestThreshold } from "./evaluationGeometry";
import type { CvCompute } from "./evaluationRunner";

/** The path computation (see CvCompute), or null where the build lacks the engine's cross-validation. */
export const pathCompute: CvCompute | null = null;

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
