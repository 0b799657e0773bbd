/**
 * Running a fit without freezing the pane.
 *
 * A fit is one synchronous computation in the engine, so it cannot be cut into slices from outside.
 * Two runners:
 * - WorkerFitRunner: the fit and the scoring run in a Web Worker (dist/fitworker.js). The pane stays
 *   responsive whatever the size, and Cancel ends the worker at once.
 * - InlineFitRunner: the fit runs on the pane's own thread after yielding to the page, through the
 *   fit service shared with the cell functions (so the formulas the pane writes reuse the fit). Used
 *   for small tables, where a fit takes milliseconds, and where Web Workers are unavailable.
 *
 * One fit for pane and cells: both runners leave the trained model in the shared fit cache through
 * the fit service (src/shared/fitService.ts) under the key the ODDS formulas the pane writes compute
 * over the same ranges. The inline runner fits through the service (fitForPane); the worker (whose
 * own globals are not the pane's) posts the model back, and the runner hands it to the service
 * (shareFit). A trained model is plain data (numbers, strings, typed arrays; no functions or class
 * instances), so the structured clone of postMessage carries it whole.
 * The pane's fits skip the cell functions' payload guard: the pane reads large tables in chunks.
 * `chooseRunner` picks the worker above INLINE_CELL_LIMIT input cells when workers exist.
 *
 * Both report progress in phases and honour an AbortSignal: a cancelled run rejects with FitCancelled
 * and its result is never used.
 */
import { scoreRows, trainModel, type RowScores, type TrainedModel } from "../engine";
import { OddsmithError } from "../shared/messages";
import { fitForPane, shareFit, type FitRequest } from "../shared/fitService";
import { callWorker } from "./workerCall";

/** Above this many input cells the pane fits in a worker (when the page can start one). */
export const INLINE_CELL_LIMIT = 50_000;

/** A fit the pane runs: the fit service's request, and the threshold its rows are scored at. */
export interface FitJob extends FitRequest {
  threshold: number;
}

export interface FitOutcome {
  model: TrainedModel;
  scores: RowScores;
  /** Wall time of the fit and scoring, in milliseconds. */
  elapsedMs: number;
  /** Which runner did the work. */
  runner: "inline" | "worker";
}

export type FitPhase = "fitting" | "scoring" | "done";

export interface FitRunner {
  readonly kind: "inline" | "worker";
  run(job: FitJob, onPhase: (phase: FitPhase) => void, signal: AbortSignal): Promise<FitOutcome>;
}

/** The run was cancelled by the person (or replaced by a newer run). */
export class FitCancelled extends Error {
  constructor() {
    super("The fit was cancelled.");
    this.name = "FitCancelled";
  }
}

/** Let the page paint and handle input before continuing. */
export function yieldToPage(): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, 0));
}

function checkAbort(signal: AbortSignal): void {
  if (signal.aborted) throw new FitCancelled();
}

/** Fits on the page's thread between yields, through the shared fit cache. */
export class InlineFitRunner implements FitRunner {
  readonly kind = "inline" as const;

  async run(job: FitJob, onPhase: (phase: FitPhase) => void, signal: AbortSignal): Promise<FitOutcome> {
    const start = performance.now();
    onPhase("fitting");
    await yieldToPage();
    checkAbort(signal);
    const model = fitForPane(job);
    onPhase("scoring");
    await yieldToPage();
    checkAbort(signal);
    const scores = scoreRows(model, null, { threshold: job.threshold });
    onPhase("done");
    return { model, scores, elapsedMs: performance.now() - start, runner: "inline" };
  }
}

/** Messages between the pane and the worker. */
export type WorkerRequest = { id: number; job: FitJob };
export type WorkerReply =
  | { id: number; phase: FitPhase }
  | { id: number; outcome: { model: TrainedModel; scores: RowScores; elapsedMs: number } }
  | { id: number; failure: { name: string; message: string; code?: string } };

/**
 * The worker's side of the protocol, apart from the worker's wiring so tests can run it in-process:
 * train (without a cache: the worker's globals die with it) and score, posting the phases, then the
 * outcome or the failure. A failure travels as its catalogue message, never as raw internals.
 */
export function answerFitRequest(request: WorkerRequest, post: (reply: WorkerReply) => void): void {
  const { id, job } = request;
  const start = performance.now();
  try {
    const model = trainModel(job.labels, job.predictors, job.options.model);
    post({ id, phase: "scoring" });
    const scores = scoreRows(model, null, { threshold: job.threshold });
    post({ id, outcome: { model, scores, elapsedMs: performance.now() - start } });
  } catch (e) {
    const failure =
      e instanceof OddsmithError
        ? { name: e.name, message: e.message, code: e.code }
        : { name: "Error", message: "The fit stopped on an unexpected problem. Your data is unchanged." };
    post({ id, failure });
  }
}

/** The failure a worker reports: a catalogue problem keeps its message; anything else is generic. */
export class FitFailed extends Error {
  constructor(
    message: string,
    readonly code?: string,
  ) {
    super(message);
    this.name = "FitFailed";
  }
}

/** Fits in a Web Worker started from `url`; one worker per run, ended on completion or cancel. */
export class WorkerFitRunner implements FitRunner {
  readonly kind = "worker" as const;
  private nextId = 1;

  constructor(private readonly url: string) {}

  run(job: FitJob, onPhase: (phase: FitPhase) => void, signal: AbortSignal): Promise<FitOutcome> {
    const handle = (reply: WorkerReply) => {
      if ("phase" in reply) {
        onPhase(reply.phase);
        return null;
      }
      if ("outcome" in reply) {
        // The formulas the pane writes next compute this same key: they find the model, not refit.
        shareFit(job, reply.outcome.model);
        return { done: { ...reply.outcome, runner: "worker" as const } };
      }
      return { failed: new FitFailed(reply.failure.message, reply.failure.code) };
    };
    const errors = { cancelled: () => new FitCancelled(), crashed: () => new FitFailed("The background fit stopped unexpectedly.") };
    return callWorker<WorkerRequest, WorkerReply, FitOutcome>(this.url, { id: this.nextId++, job }, signal, handle, errors, () => onPhase("fitting"));
  }
}

/** Input cells of a job. */
export function jobCells(job: FitJob): number {
  let n = 0;
  for (const r of job.labels) n += r.length;
  for (const r of job.predictors) n += r.length;
  return n;
}

/**
 * The runner for a job: the worker for large inputs when the page can start workers (or always /
 * never when `prefer` says so), else inline.
 */
export function chooseRunner(job: FitJob, workerUrl: string | null, prefer: "auto" | "worker" | "inline" = "auto"): FitRunner {
  const workersAvailable = typeof Worker !== "undefined" && workerUrl !== null;
  if (workersAvailable && (prefer === "worker" || (prefer === "auto" && jobCells(job) > INLINE_CELL_LIMIT))) {
    return new WorkerFitRunner(workerUrl!);
  }
  return new InlineFitRunner();
}
