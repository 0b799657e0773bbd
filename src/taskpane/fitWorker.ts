/**
 * The background fit (built as dist/fitworker.js): receives a FitJob, trains and scores the model
 * with the same engine calls as the inline runner, and posts the phases and the outcome back.
 * Failures travel as their catalogue message (OddsmithError) or a generic one, never raw internals.
 */
import { OddsmithError } from "../engine/messages";
import { scoreRows } from "../engine/model";
import { fittedModel } from "../functions/modelCell";
import type { WorkerReply, WorkerRequest } from "./fitRunner";

const scope = self as unknown as {
  onmessage: ((event: MessageEvent<WorkerRequest>) => void) | null;
  postMessage(message: WorkerReply): void;
};

scope.onmessage = (event) => {
  const { id, job } = event.data;
  const start = performance.now();
  try {
    const model = fittedModel(job.labels, job.predictors, job.options, 0);
    scope.postMessage({ id, phase: "scoring" });
    const scores = scoreRows(model, null, { threshold: job.threshold });
    scope.postMessage({ id, outcome: { model, scores, elapsedMs: performance.now() - start } });
  } catch (e) {
    const failure =
      e instanceof OddsmithError
        ? { name: e.name, message: e.message, code: e.code }
        : { name: "Error", message: "The fit stopped on an unexpected problem. Your data is unchanged." };
    scope.postMessage({ id, failure });
  }
};
