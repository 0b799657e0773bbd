/**
 * K-fold cross-validation of a model spec through the model facade, for one penalty or a path of
 * penalties, written as a generator of steps (one fit per step) so a caller can show progress and
 * stop between steps; `crossValidate` runs it to the end.
 *
 * Policy (one line each):
 * - Rows and classes: those a fit on all rows uses (evaluationData.ts); folds are stratified and
 *   fixed by the seed, following the data rows' order (stratifiedFolds.ts), or given by the caller.
 * - Every penalty of a path uses the same folds, so the penalties are compared on the same rows.
 * - Each fold's fit sees its training rows only, including its category levels and, with a recipe,
 *   its basis transforms (fitOnRows.ts, foldPredictors.ts).
 * - Scores per fold on its held-out rows: log-loss, Brier score, AUC (two classes), accuracy; the
 *   path and the choice use the log-loss. Mean and SE across folds (foldSummary.ts), and the pooled
 *   scores of all out-of-fold probabilities.
 * - A held-out row the fold's model cannot score (a level unseen in its training rows) has no
 *   out-of-fold value; such rows are counted and named by example in a note, never a failure,
 *   unless no held-out row of a fold can be scored.
 * - A fold without a usable fit fails its penalty: a single penalty throws CV_FOLD_FAILED; in a path
 *   the penalty is left out of the choice with a note (all failing: CV_FOLD_FAILED).
 * - Out-of-fold probabilities, on request, are those of the single penalty, or of the path's chosen
 *   penalty (one-SE by default), refitted on the same folds at the end of the path.
 * - Work is bounded before the first fold (cvWork.ts); the penalty scale is trainModel's (the sum of
 *   the log-likelihood over the fitted rows plus lambda/2 times the sum of squared coefficients, so
 *   a fold's fit on (k-1)/k of the rows is slightly more penalized per row than a fit on all rows).
 */
import { problem } from "../messages";
import { scoreRows, type ModelOptions } from "../model";
import type { CellValue, Diagnostic } from "../types";
import { checkCvWork, CELL_BUDGET, type WorkBudget } from "./cvWork";
import { prepareEvaluationData, type EvaluationData } from "./evaluationData";
import { fitOnRows, type RowReason } from "./fitOnRows";
import { acrossFolds, type FoldSummary } from "./foldSummary";
import { heldOutScores, SCORE_NAMES, type HeldOutScores, type ScoreName } from "./heldOutScores";
import { choosePenalty } from "./penaltyChoice";
import { givenPenalties } from "./penaltyGrid";
import { checkFoldAssignment, stratifiedFolds } from "./stratifiedFolds";

/** Default number of folds and seed. */
export const DEFAULT_FOLDS = 5;
export const DEFAULT_SEED = 1;

/** What to cross-validate. */
export interface CrossValidationRequest {
  labels: CellValue[][];
  predictors: CellValue[][];
  /** The model spec (trainModel's options); a path replaces its penalty by each penalty tried. */
  options?: ModelOptions;
  /** Number of folds [DEFAULT_FOLDS]. */
  folds?: number;
  /** Seed of the fold assignment [DEFAULT_SEED]. */
  seed?: number;
  /** A fold per data row given by the caller (0-based, -1 = left out); replaces folds and seed. */
  assignment?: Int32Array | null;
  /** Penalties of a path; null or absent: the spec's penalty alone. */
  penalties?: readonly number[] | null;
  /** A basis recipe built inside each fold from its training rows. */
  recipe?: string | null;
  /** Keep the out-of-fold probabilities [false]. */
  outOfFold?: boolean;
  /** Which penalty of a path the out-of-fold probabilities are at ["one-se"]. */
  pick?: "one-se" | "lowest";
  /** Work limit [CELL_BUDGET]. */
  budget?: WorkBudget;
}

/** Progress between steps: fits done of the total. */
export interface CvStep {
  done: number;
  total: number;
}

/** The cross-validated scores of one penalty. */
export interface PenaltyScores {
  penalty: number;
  /** Mean and SE across folds of each score (NaN when a fold failed). */
  scores: Record<ScoreName, FoldSummary>;
  /** The scores of all out-of-fold probabilities pooled. */
  pooled: HeldOutScores | null;
  /** The first fold without a usable fit, or null. */
  failure: { fold: number; message: string } | null;
  /** Folds (0-based) whose fit did not converge. */
  notConverged: number[];
}

/** A finished cross-validation. */
export interface CrossValidationResult {
  kind: "binary" | "multiclass";
  classes: string[];
  positiveClass: string | null;
  referenceClass: string | null;
  folds: number;
  /** The seed of the assignment, or null when the caller gave the folds. */
  seed: number | null;
  /** Fold per data row (0-based), -1 outside the folds. */
  assignment: Int32Array;
  /** Held-out rows per fold. */
  foldRows: number[];
  /** Data rows of the ranges, and the 1-based range row of data row 0. */
  rows: number;
  firstRow: number;
  /** Rows that entered the folds. */
  rowsInFolds: number;
  /** One entry per penalty, ascending. */
  entries: PenaltyScores[];
  /** True when a path of penalties was asked for. */
  path: boolean;
  /** Indices into `entries`: lowest mean log-loss and the one-standard-error choice. */
  lowest: number;
  oneSe: number;
  /** Out-of-fold probabilities (per class, per data row; NaN where none), on request. */
  outOfFold: { penalty: number; probabilities: Float64Array[] } | null;
  /** Held-out rows without an out-of-fold value (the same at every penalty). */
  unscored: { count: number; first: { row: number; reason: RowReason } | null };
  /** Scores of the fit on all rows on its own rows (at the spec's penalty), or null when it failed. */
  inSample: HeldOutScores | null;
  threshold: number;
  notes: Diagnostic[];
}

/** The folds of a request: the caller's assignment, or stratified folds from folds and seed. */
function foldsOf(req: CrossValidationRequest, data: EvaluationData): { assignment: Int32Array; folds: number; seed: number | null } {
  if (req.assignment) {
    const folds = checkFoldAssignment(req.assignment, data.classOfRow, data.classes);
    return { assignment: Int32Array.from(req.assignment), folds, seed: null };
  }
  const folds = req.folds ?? DEFAULT_FOLDS;
  const seed = req.seed ?? DEFAULT_SEED;
  return { assignment: stratifiedFolds(data.classOfRow, data.classes, folds, seed), folds, seed };
}

/** State of one penalty while its folds are fitted. */
interface PenaltyRun {
  perFold: HeldOutScores[];
  probabilities: Float64Array[];
  failure: { fold: number; message: string } | null;
  notConverged: number[];
}

/** Everything the steps share. */
interface CvContext {
  data: EvaluationData;
  assignment: Int32Array;
  folds: number;
  heldOut: number[][];
  training: Uint8Array[];
  threshold: number;
  unscored: Map<number, RowReason>;
}

/** Fit fold `f` at `penalty` and record its held-out rows' probabilities and scores into `run`. */
function runFold(ctx: CvContext, run: PenaltyRun, f: number, penalty: number): void {
  const fit = fitOnRows(ctx.data, ctx.training[f], penalty);
  if (fit.failure) {
    run.failure = { fold: f, message: fit.failure.message };
    return;
  }
  if (!fit.converged) run.notConverged.push(f);
  const scored: number[] = [];
  for (const i of ctx.heldOut[f]) {
    const reason = fit.reasons.get(i);
    if (reason || !Number.isFinite(fit.probabilities[0][i])) {
      if (!ctx.unscored.has(i)) ctx.unscored.set(i, reason ?? { code: "MISSING_FOR_SCORING", message: "" });
      continue;
    }
    scored.push(i);
    for (let c = 0; c < fit.probabilities.length; c++) run.probabilities[c][i] = fit.probabilities[c][i];
  }
  if (scored.length === 0) {
    const first = ctx.heldOut[f][0];
    const reason = ctx.unscored.get(first);
    run.failure = {
      fold: f,
      message: problem("CV_FOLD_UNSCORED", { fold: f + 1, folds: ctx.folds, row: ctx.data.firstRow + first, reason: reason?.message ?? "" }).message,
    };
    return;
  }
  run.perFold[f] = heldOutScores(ctx.data.classOfRow, fit.probabilities, scored, ctx.data.weights, ctx.threshold);
}

/** The steps of every fold at one penalty. */
function* penaltySteps(ctx: CvContext, penalty: number, progress: CvStep): Generator<CvStep, PenaltyRun, void> {
  const run: PenaltyRun = {
    perFold: [],
    probabilities: ctx.data.classes.map(() => new Float64Array(ctx.data.rows).fill(NaN)),
    failure: null,
    notConverged: [],
  };
  for (let f = 0; f < ctx.folds; f++) {
    // After a failed fold the penalty has no score: its remaining folds are passed over.
    if (!run.failure) runFold(ctx, run, f, penalty);
    progress.done++;
    yield { ...progress };
  }
  return run;
}

/** The scores of a finished penalty run. */
function penaltyScores(ctx: CvContext, penalty: number, run: PenaltyRun): PenaltyScores {
  const scores = {} as Record<ScoreName, FoldSummary>;
  for (const name of SCORE_NAMES) {
    scores[name] = run.failure ? acrossFolds([NaN]) : acrossFolds(run.perFold.map((s) => s[name]));
  }
  let pooled: HeldOutScores | null = null;
  if (!run.failure) {
    const rows: number[] = [];
    for (let i = 0; i < ctx.data.rows; i++) if (ctx.assignment[i] >= 0 && Number.isFinite(run.probabilities[0][i])) rows.push(i);
    pooled = heldOutScores(ctx.data.classOfRow, run.probabilities, rows, ctx.data.weights, ctx.threshold);
  }
  return { penalty, scores, pooled, failure: run.failure, notConverged: run.notConverged };
}

/** The scores of the fit on all rows on its own usable rows, or null when it has no usable estimates. */
function inSampleScores(data: EvaluationData, threshold: number): HeldOutScores | null {
  if (data.full.fit.diagnostics.some((d) => d.severity === "error")) return null;
  const scores = scoreRows(data.full, null);
  const rows: number[] = [];
  for (let i = 0; i < data.rows; i++) if (data.classOfRow[i] >= 0 && Number.isFinite(scores.prediction.probabilities[0][i])) rows.push(i);
  return heldOutScores(data.classOfRow, scores.prediction.probabilities, rows, data.weights, threshold);
}

/** The shared state of the steps: data, folds, training masks and held-out rows per fold. */
function context(req: CrossValidationRequest, data: EvaluationData): CvContext {
  const { assignment, folds } = foldsOf(req, data);
  const heldOut: number[][] = Array.from({ length: folds }, () => []);
  const training = Array.from({ length: folds }, () => new Uint8Array(data.rows));
  for (let i = 0; i < data.rows; i++) {
    const f = assignment[i];
    if (f < 0) continue;
    heldOut[f].push(i);
    for (let g = 0; g < folds; g++) if (g !== f) training[g][i] = 1;
  }
  return { data, assignment, folds, heldOut, training, threshold: req.options?.threshold ?? 0.5, unscored: new Map() };
}

/**
 * Cross-validate a model spec, step by step (see the policy above). Each `next()` fits one fold
 * (the first also prepares the data with a fit on all rows) and yields the progress; the return
 * value is the finished result.
 *
 * Method: k-fold cross-validation (Stone 1974, "Cross-validatory choice and assessment of
 * statistical predictions", JRSS B 36:111-147; Hastie, Tibshirani & Friedman, The Elements of
 * Statistical Learning, 2nd ed., 2009, section 7.10), stratified by class (Kohavi 1995), with the
 * penalty chosen by the lowest mean out-of-fold log-loss and by the one-standard-error rule.
 *
 * @throws OddsmithError for input problems (trainModel's, the options', CV_CLASS_TOO_SMALL,
 *   CV_GROUPED_COUNTS), CV_TOO_COSTLY before any fold, CV_FOLD_FAILED / CV_FOLD_UNSCORED when no
 *   penalty has a usable fit in every fold
 * @example
 * const steps = crossValidationSteps({ labels, predictors, folds: 5, seed: 1 });
 * let s = steps.next(); while (!s.done) s = steps.next(); s.value.entries[0].scores.logLoss.mean
 */
export function* crossValidationSteps(req: CrossValidationRequest): Generator<CvStep, CrossValidationResult, void> {
  const options = req.options ?? {};
  const data = prepareEvaluationData(req.labels, req.predictors, options, req.recipe ?? null);
  const ctx = context(req, data);
  const path = req.penalties != null;
  const penalties = path ? givenPenalties(req.penalties as number[]) : [options.penalty ?? 0];
  const refit = (req.outOfFold ?? false) && penalties.length > 1;
  const fits = ctx.folds * (penalties.length + (refit ? 1 : 0));
  checkCvWork(fits, data.full.design.rows, data.parameters, req.budget ?? CELL_BUDGET);
  const progress: CvStep = { done: 1, total: fits + 1 };
  yield { ...progress };

  const entries: PenaltyScores[] = [];
  let lastRun: PenaltyRun | null = null;
  for (const penalty of penalties) {
    lastRun = yield* penaltySteps(ctx, penalty, progress);
    const entry = penaltyScores(ctx, penalty, lastRun);
    if (entry.failure && !path) throw failureOf(ctx, entry, false);
    entries.push(entry);
  }
  const usable = entries.filter((e) => !e.failure);
  if (usable.length === 0) throw failureOf(ctx, entries[0], true);
  const points = entries.map((e) => ({ penalty: e.penalty, mean: e.scores.logLoss.mean, standardError: e.scores.logLoss.standardError }));
  const { lowest, oneSe } = choosePenalty(points);

  let outOfFold: CrossValidationResult["outOfFold"] = null;
  if (req.outOfFold) {
    const at = (req.pick ?? "one-se") === "lowest" ? lowest : oneSe;
    const run = refit ? yield* penaltySteps(ctx, penalties[at], progress) : (lastRun as PenaltyRun);
    outOfFold = { penalty: penalties[at], probabilities: run.probabilities };
  }
  return finish(ctx, { entries, path, lowest, oneSe, outOfFold, seed: foldsSeed(req) });
}

/** The seed the folds came from, or null for folds given by the caller. */
function foldsSeed(req: CrossValidationRequest): number | null {
  return req.assignment ? null : (req.seed ?? DEFAULT_SEED);
}

/** The thrown problem of a penalty whose fold failed. */
function failureOf(ctx: CvContext, entry: PenaltyScores, withPenalty: boolean) {
  const failure = entry.failure as { fold: number; message: string };
  return problem("CV_FOLD_FAILED", {
    fold: failure.fold + 1,
    folds: ctx.folds,
    penalty: withPenalty ? ` (penalty ${entry.penalty})` : "",
    reason: failure.message,
  });
}

/** The result with its notes. */
function finish(
  ctx: CvContext,
  part: Pick<CrossValidationResult, "entries" | "path" | "lowest" | "oneSe" | "outOfFold" | "seed">,
): CrossValidationResult {
  const { data } = ctx;
  const unscored = [...ctx.unscored].sort((a, b) => a[0] - b[0]);
  const first = unscored.length > 0 ? { row: data.firstRow + unscored[0][0], reason: unscored[0][1] } : null;
  const notes: Diagnostic[] = [];
  if (first) notes.push(note("CV_ROWS_UNSCORED", { count: unscored.length, row: first.row, reason: first.reason.message }));
  const failed = part.entries.filter((e) => e.failure);
  if (failed.length > 0) {
    const f = failed[0].failure as { fold: number; message: string };
    notes.push(note("CV_PENALTY_FAILED", { count: failed.length, penalty: failed[0].penalty, reason: `fold ${f.fold + 1}: ${f.message}` }));
  }
  const slow = part.entries.flatMap((e) => e.notConverged.map((fold) => ({ fold, penalty: e.penalty })));
  if (slow.length > 0) {
    const penalty = part.path ? ` at penalty ${slow[0].penalty}` : "";
    notes.push(note("CV_NOT_CONVERGED", { count: slow.length, fits: ctx.folds * part.entries.length, fold: slow[0].fold + 1, penalty }, "warning"));
  }
  return {
    kind: data.kind,
    classes: data.classes,
    positiveClass: data.positiveClass,
    referenceClass: data.referenceClass,
    folds: ctx.folds,
    assignment: ctx.assignment,
    foldRows: ctx.heldOut.map((r) => r.length),
    rows: data.rows,
    firstRow: data.firstRow,
    rowsInFolds: ctx.heldOut.reduce((a, r) => a + r.length, 0),
    unscored: { count: unscored.length, first },
    inSample: inSampleScores(data, ctx.threshold),
    threshold: ctx.threshold,
    notes,
    ...part,
  };
}

/** A note of the result, its message from the catalogue. */
function note(code: "CV_ROWS_UNSCORED" | "CV_PENALTY_FAILED" | "CV_NOT_CONVERGED", params: Record<string, unknown>, severity: Diagnostic["severity"] = "note"): Diagnostic {
  return { code, severity, message: problem(code, params).message, params };
}

/**
 * Run a cross-validation to the end (for cell functions, which cannot pause).
 * Method and policy: crossValidationSteps.
 * @throws OddsmithError as crossValidationSteps
 */
export function crossValidate(req: CrossValidationRequest): CrossValidationResult {
  const steps = crossValidationSteps(req);
  for (;;) {
    const s = steps.next();
    if (s.done) return s.value;
  }
}
