/**
 * Running a cross-validation path without freezing the pane, with progress and Cancel.
 *
 * A path is many fits (folds x penalties). The computation is a generator (`CvCompute`) that yields
 * a progress report between steps and returns the path, so both runners can report and stop between
 * steps:
 * - InlineEvaluationRunner: steps on the pane's thread, yielding to the page between steps and
 *   checking the AbortSignal there (small tables, or where workers cannot run).
 * - WorkerEvaluationRunner: the steps run in a Web Worker (dist/evalworker.js) that posts each
 *   progress report; Cancel ends the worker at once.
 * `chooseEvaluationRunner` picks the worker above INLINE_PATH_CELL_LIMIT input cells x fits.
 */
import { type CellValue, type ModelOptions } from "../engine";
import { OddsmithError } from "../shared/messages";
import { yieldToPage } from "./fitRunner";
import { callWorker } from "./workerCall";
import type { PathEntry } from "./evaluationGeometry";

/** Above this many input cells times fits the path runs in a worker (when the page can start one). */
export const INLINE_PATH_CELL_LIMIT = 400_000;

export interface CvJob {
  labels: CellValue[][];
  predictors: CellValue[][];
  /** Model options of the pane's set-up (its penalty is replaced by each penalty tried). */
  options: ModelOptions;
  folds: number;
  seed: number;
  penalties: number[];
}

export interface CvProgress {
  done: number;
  total: number;
}

/** The computed path. */
export interface CvResult {
  entries: PathEntry[];
  /** Indices into `entries`: the minimizing penalty and the one-standard-error choice. */
  best: number;
  oneSe: number;
  folds: number;
  /** Rows that entered the folds. */
  rows: number;
  /** Out-of-fold probability of the positive class per data row at the one-SE penalty (NaN where not scored), two classes only. */
  outOfFold: Float64Array | null;
}

export interface CvOutcome extends CvResult {
  elapsedMs: number;
  runner: "inline" | "worker";
}

/** The path computation: yields progress between steps, returns the path. */
export type CvCompute = (job: CvJob) => Generator<CvProgress, CvResult, void>;

export interface EvaluationRunner {
  run(job: CvJob, onProgress: (p: CvProgress) => void, signal: AbortSignal): Promise<CvOutcome>;
}

export class CvCancelled extends Error {
  constructor() {
    super("The cross-validation was cancelled.");
    this.name = "CvCancelled";
  }
}

/** A failure inside the worker, carried as its catalogue message. */
export class CvFailed extends Error {
  constructor(
    message: string,
    readonly code?: string,
  ) {
    super(message);
    this.name = "CvFailed";
  }
}

/** Steps on the page's thread, yielding between steps. */
export class InlineEvaluationRunner implements EvaluationRunner {
  constructor(private readonly compute: CvCompute) {}

  async run(job: CvJob, onProgress: (p: CvProgress) => void, signal: AbortSignal): Promise<CvOutcome> {
    const start = performance.now();
    const steps = this.compute(job);
    for (;;) {
      await yieldToPage();
      if (signal.aborted) {
        steps.return(undefined as never);
        throw new CvCancelled();
      }
      const next = steps.next();
      if (next.done) return { ...next.value, elapsedMs: performance.now() - start, runner: "inline" };
      onProgress(next.value);
    }
  }
}

/** Messages between the pane and the evaluation worker. */
export type CvRequest = { id: number; job: CvJob };
export type CvReply =
  | { id: number; progress: CvProgress }
  | { id: number; result: CvResult; elapsedMs: number }
  | { id: number; failure: { message: string; code?: string } };

/**
 * The worker's side, apart from its wiring so tests can run it in-process: step through the path,
 * posting each progress report, then the result or the failure (a catalogue message, never internals).
 */
export function answerCvRequest(request: CvRequest, compute: CvCompute, post: (reply: CvReply) => void): void {
  const { id, job } = request;
  const start = performance.now();
  try {
    const steps = compute(job);
    for (;;) {
      const next = steps.next();
      if (next.done) {
        post({ id, result: next.value, elapsedMs: performance.now() - start });
        return;
      }
      post({ id, progress: next.value });
    }
  } catch (e) {
    post({
      id,
      failure: e instanceof OddsmithError ? { message: e.message, code: e.code } : { message: "The cross-validation stopped on an unexpected problem. Your data is unchanged." },
    });
  }
}

/** Runs the path in a Web Worker started from `url`; one worker per run, ended on completion or cancel. */
export class WorkerEvaluationRunner implements EvaluationRunner {
  private nextId = 1;

  constructor(private readonly url: string) {}

  run(job: CvJob, onProgress: (p: CvProgress) => void, signal: AbortSignal): Promise<CvOutcome> {
    const handle = (reply: CvReply) => {
      if ("progress" in reply) {
        onProgress(reply.progress);
        return null;
      }
      if ("result" in reply) return { done: { ...reply.result, elapsedMs: reply.elapsedMs, runner: "worker" as const } };
      return { failed: new CvFailed(reply.failure.message, reply.failure.code) };
    };
    const errors = { cancelled: () => new CvCancelled(), crashed: () => new CvFailed("The background cross-validation stopped unexpectedly.") };
    return callWorker<CvRequest, CvReply, CvOutcome>(this.url, { id: this.nextId++, job }, signal, handle, errors);
  }
}

/** Input cells of a job times the fits it needs. */
export function pathWork(job: CvJob): number {
  let cells = 0;
  for (const r of job.labels) cells += r.length;
  for (const r of job.predictors) cells += r.length;
  return cells * job.folds * job.penalties.length;
}

/**
 * Chooses per job: the worker for large paths when the page can start workers (or always / never
 * when `prefer` says so), else inline.
 */
export class AutoEvaluationRunner implements EvaluationRunner {
  constructor(
    private readonly compute: CvCompute,
    private readonly workerUrl: string | null,
    private readonly prefer: "auto" | "worker" | "inline" = "auto",
  ) {}

  run(job: CvJob, onProgress: (p: CvProgress) => void, signal: AbortSignal): Promise<CvOutcome> {
    const workers = typeof Worker !== "undefined" && this.workerUrl !== null;
    const useWorker = workers && (this.prefer === "worker" || (this.prefer === "auto" && pathWork(job) > INLINE_PATH_CELL_LIMIT));
    const runner = useWorker ? new WorkerEvaluationRunner(this.workerUrl!) : new InlineEvaluationRunner(this.compute);
    return runner.run(job, onProgress, signal);
  }
}
