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
import type { ThresholdChooser } from "./evaluationController";
import type { CvCompute } from "./evaluationRunner";

/** The path computation (see CvCompute), or null where the build lacks the engine's cross-validation. */
export const pathCompute: CvCompute | null = null;

/** The engine's threshold choice, or null where the build lacks it. */
export const thresholdChooser: ThresholdChooser | null = null;
