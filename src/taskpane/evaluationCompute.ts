/**
 * The engine computations behind the evaluation section: the cross-validation path (stepped, so the
 * runners can report progress and stop between steps) and the threshold choice. They come from the
 * engine's cross-validation and threshold-choice functions; until those are part of the engine's
 * public surface the path cannot run and the chooser takes a typed threshold only.
 */
import type { ThresholdChooser } from "./evaluationController";
import type { CvCompute } from "./evaluationRunner";

/** The path computation (see CvCompute), or null where the build lacks the engine's cross-validation. */
export const pathCompute: CvCompute | null = null;

/** The engine's threshold choice, or null where the build lacks it. */
export const thresholdChooser: ThresholdChooser | null = null;
