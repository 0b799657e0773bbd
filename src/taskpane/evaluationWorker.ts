/**
 * The background cross-validation (built as dist/evalworker.js): receives a CvJob, steps through the
 * path with the same computation as the inline runner, and posts each progress report and the result.
 * The protocol lives in evaluationRunner.ts (answerCvRequest) so tests can run it without a worker.
 */
import { pathCompute } from "./evaluationCompute";
import { answerCvRequest, type CvReply, type CvRequest } from "./evaluationRunner";

const scope = self as unknown as {
  onmessage: ((event: MessageEvent<CvRequest>) => void) | null;
  postMessage(message: CvReply): void;
};

scope.onmessage = (event) => {
  if (pathCompute) answerCvRequest(event.data, pathCompute, (reply) => scope.postMessage(reply));
  else scope.postMessage({ id: event.data.id, failure: { message: "This build has no cross-validation." } });
};
