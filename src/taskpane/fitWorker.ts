/**
 * The background fit (built as dist/fitworker.js): receives a FitJob, trains and scores the model
 * with the same engine calls as the inline runner, and posts the phases and the outcome (the trained
 * model included, which the pane stores in the shared fit cache) back. The protocol lives in
 * fitRunner.ts (answerFitRequest) so tests can run it without a worker.
 */
import { answerFitRequest, type WorkerReply, type WorkerRequest } from "./fitRunner";

const scope = self as unknown as {
  onmessage: ((event: MessageEvent<WorkerRequest>) => void) | null;
  postMessage(message: WorkerReply): void;
};

scope.onmessage = (event) => answerFitRequest(event.data, (reply) => scope.postMessage(reply));
