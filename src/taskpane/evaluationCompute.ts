/**
 * The engine computations behind the evaluation section: the cross-validation path (stepped, so the
 * runners can report progress and stop between steps) and the threshold choice. They come from the
 * engine's cross-validation and threshold-choice functions; until those are part of the engine's
 * public surface the path cannot run and the chooser takes a typed threshold only.
 */
import { problem } from "../engine";
import type { ThresholdChooser } from "./evaluationController";
import type { CvCompute } from "./evaluationRunner";

/** The path computation (see CvCompute). */
export const pathCompute: CvCompute = function* () {
  throw problem("INTERNAL", { doing: "cross-validating (the engine's cross-validation is not in this build)" });
};

/** The engine's threshold choice, or null where the build lacks it. */
export const thresholdChooser: ThresholdChooser | null = null;
