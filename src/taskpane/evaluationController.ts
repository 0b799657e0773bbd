/**
 * The evaluation view's logic, free of the DOM: from the pane's current fit it takes the fitted
 * rows' labels and probabilities and computes the ROC curve with the AUC and its DeLong interval,
 * the calibration table by groups with the calibration slope and intercept, and the confusion
 * counts at the threshold the boundary review uses. The threshold chooser moves that threshold
 * (PaneController.setReview), so the borderline list, the plot and these counts follow. The
 * cross-validation path runs through an EvaluationRunner (cancellable, with progress).
 *
 * Two classes only: ROC and calibration are defined for a positive class; a multi-class fit gets a
 * plain message instead. Nothing is only logged: every failure becomes the view's status line.
 */
import { calibrationSlope, calibrationTable, confusionCounts, readLabels, rocAuc, rocCurve, type CalibrationSlopeResult, type CalibrationTable, type ConfusionCounts, type RocAucResult, type RocCurve } from "../engine";
import { OddsmithError, problem } from "../shared/messages";
import { fitFailure } from "../shared/fitService";
import { modelInputs } from "./modelSetup";
import type { PaneController } from "./paneController";
import { CvCancelled, type CvJob, type CvOutcome, type CvProgress, type EvaluationRunner } from "./evaluationRunner";

/** Groups of the calibration chart (deciles of predicted probability, the common practice). */
export const CALIBRATION_GROUPS = 10;

/** Groups of each split value's calibration line (fewer rows per value: quintiles). */
export const SPLIT_CALIBRATION_GROUPS = 5;
/** Most values a split column may have (one line each; more would not be readable). */
export const MAX_SPLIT_VALUES = 6;
/** Values with fewer evaluated rows than this get no line (too few for five groups); the caption says so. */
export const MIN_SPLIT_ROWS = 10;

/** Calibration per value of a split column. */
export interface CalibrationSplit {
  column: string;
  series: { name: string; rows: number; table: CalibrationTable }[];
  /** Values left out for having fewer than MIN_SPLIT_ROWS rows. */
  tooSmall: string[];
}

/** The evaluation of a two-class fit on the rows it was fitted on. */
export interface BinaryEvaluation {
  kind: "binary";
  /** Where the probabilities come from. */
  source: "fitted rows" | "out-of-fold";
  positiveClass: string;
  /** Rows evaluated, and their data-row indices (0-based, table order). */
  rows: number;
  dataRows: Int32Array;
  labels: Float64Array;
  probabilities: Float64Array;
  curve: RocCurve;
  auc: RocAucResult;
  calibration: CalibrationTable;
  slope: CalibrationSlopeResult;
  threshold: number;
  counts: ConfusionCounts;
  /** Calibration per value of the chosen split column, or null. */
  split: CalibrationSplit | null;
}

export type Evaluation = BinaryEvaluation | { kind: "unavailable"; message: string };

export type EvaluationChange = "evaluation" | "threshold" | "path" | "status";

export interface EvaluationStatus {
  phase: "idle" | "running" | "done" | "cancelled" | "failed";
  message: string;
  /** 0..1 when known, null for an indeterminate bar. */
  progress: number | null;
  busy: boolean;
}

/** How the threshold chooser picks a threshold: a cost ratio FP : FN, a target sensitivity, a review budget (rows), or directly. */
export interface ThresholdGoal {
  kind: "cost" | "sensitivity" | "budget" | "direct";
  value: number;
}

/** The threshold for a goal from labels and probabilities (the engine's threshold choice), with a note on how it was found. */
export type ThresholdChooser = (labels: Float64Array, probabilities: Float64Array, goal: Exclude<ThresholdGoal["kind"], "direct">, value: number) => { threshold: number; note: string };

/** Settings of a cross-validation run chosen in the view. */
export interface PathSettings {
  folds: number;
  seed: number;
  /** Penalties to try, ascending, all > 0. */
  penalties: number[];
}

/** Log-spaced penalties from `lo` to `hi` (both > 0), `count` of them, rounded to 4 significant digits. */
export function logSpacedPenalties(lo: number, hi: number, count: number): number[] {
  if (!(lo > 0 && hi > lo && Number.isInteger(count) && count >= 2)) {
    throw problem("BAD_OPTION_VALUE", { name: "penalty range", value: `${lo} to ${hi}, ${count} values`, expected: "Give 0 < from < to and at least 2 values." });
  }
  const a = Math.log10(lo);
  const b = Math.log10(hi);
  return Array.from({ length: count }, (_, i) => Number((10 ** (a + ((b - a) * i) / (count - 1))).toPrecision(4)));
}

/**
 * The evaluation inputs of a fit: positive-class labels (1/0) and probabilities of the rows the fit
 * used (rows skipped by the fit, e.g. with a blank, are left out).
 */
export function fittedRowsEvaluation(pane: PaneController): { labels: Float64Array; probabilities: Float64Array; dataRows: Int32Array; positiveClass: string } | string {
  const { data, choice, outcome } = pane;
  if (!data || !choice || !outcome) return "Fit a model (section 1) to see its ROC curve, calibration and threshold choice here.";
  if (fitFailure(outcome.model)) return "The last fit gave no usable model, so there is nothing to evaluate.";
  if (outcome.model.kind !== "binary") {
    return "The ROC curve, calibration plot and threshold choice are for two classes; this label column has more.";
  }
  const positiveClass = outcome.model.labels.positiveClass ?? outcome.scores.classes[1];
  const info = readLabels(data.table.columns[choice.label], { positive: positiveClass });
  const p = outcome.scores.prediction.probabilities[1];
  const rowMap = outcome.model.rowMap;
  const picked: number[] = [];
  for (let i = 0; i < data.table.rows; i++) if (rowMap[i] >= 0 && info.codes[i] >= 0 && Number.isFinite(p[i])) picked.push(i);
  const labels = new Float64Array(picked.length);
  const probabilities = new Float64Array(picked.length);
  picked.forEach((row, k) => {
    labels[k] = info.codes[row] === 1 ? 1 : 0;
    probabilities[k] = p[row];
  });
  return { labels, probabilities, dataRows: Int32Array.from(picked), positiveClass };
}

/** ROC, AUC, calibration and counts of labels and probabilities at a threshold. */
export function evaluateBinary(
  input: { labels: Float64Array; probabilities: Float64Array; dataRows: Int32Array; positiveClass: string },
  threshold: number,
  level: number,
  source: BinaryEvaluation["source"],
): BinaryEvaluation {
  const { labels, probabilities } = input;
  return {
    kind: "binary",
    source,
    positiveClass: input.positiveClass,
    rows: labels.length,
    dataRows: input.dataRows,
    labels,
    probabilities,
    curve: rocCurve(labels, probabilities),
    auc: rocAuc(labels, probabilities, { level }),
    calibration: calibrationTable(labels, probabilities, { groups: CALIBRATION_GROUPS }),
    slope: calibrationSlope(labels, probabilities, { level }),
    threshold,
    counts: confusionCounts(labels, probabilities, { threshold }),
    split: null,
  };
}

/**
 * Calibration tables per value of a column over the evaluated rows (a blank is its own value,
 * "(blank)"). Values with fewer than MIN_SPLIT_ROWS rows are listed in `tooSmall`.
 */
export function calibrationSplit(
  ev: Pick<BinaryEvaluation, "labels" | "probabilities" | "dataRows">,
  name: string,
  valueOf: (dataRow: number) => string,
): CalibrationSplit {
  const byValue = new Map<string, number[]>();
  ev.dataRows.forEach((row, k) => {
    const v = valueOf(row);
    const list = byValue.get(v);
    if (list) list.push(k);
    else byValue.set(v, [k]);
  });
  const series: CalibrationSplit["series"] = [];
  const tooSmall: string[] = [];
  for (const [value, ks] of [...byValue].sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0))) {
    if (ks.length < MIN_SPLIT_ROWS) {
      tooSmall.push(value);
      continue;
    }
    const labels = Float64Array.from(ks, (k) => ev.labels[k]);
    const probabilities = Float64Array.from(ks, (k) => ev.probabilities[k]);
    series.push({ name: value, rows: ks.length, table: calibrationTable(labels, probabilities, { groups: SPLIT_CALIBRATION_GROUPS }) });
  }
  return { column: name, series, tooSmall };
}

export class EvaluationController {
  evaluation: Evaluation = { kind: "unavailable", message: "Fit a model (section 1) to see its ROC curve, calibration and threshold choice here." };
  /** The last cross-validation path, or null. */
  path: CvOutcome | null = null;
  status: EvaluationStatus = { phase: "idle", message: "", progress: null, busy: false };
  /** Use the out-of-fold probabilities of the last path (at its one-SE penalty) instead of the fitted rows'. */
  useOutOfFold = false;

  /** The model and path the current evaluation was computed from (see recompute). */
  private evaluatedModel: object | null = null;
  private evaluatedPath: CvOutcome | null = null;
  /** Column (0-based table index) whose values split the calibration plot, or null. */
  splitColumn: number | null = null;
  /** What the last threshold choice found (how, and what it means), for the view. */
  chooserNote = "";

  private readonly listeners = new Set<(change: EvaluationChange) => void>();
  private abort: AbortController | null = null;
  private readonly unsubscribe: () => void;

  constructor(
    private readonly pane: PaneController,
    private readonly runner: EvaluationRunner | null,
    private readonly chooser: ThresholdChooser | null = null,
  ) {
    this.unsubscribe = pane.subscribe((change) => {
      if (change === "fit") {
        this.path = null;
        this.useOutOfFold = false;
        this.recompute();
        this.emit("path");
      } else if (change === "review") this.recompute();
    });
    this.recompute();
  }

  subscribe(listener: (change: EvaluationChange) => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  private emit(change: EvaluationChange): void {
    for (const l of [...this.listeners]) l(change);
  }

  private setStatus(status: Partial<EvaluationStatus> & { phase: EvaluationStatus["phase"]; message: string }): void {
    this.status = { progress: null, busy: false, ...status };
    this.emit("status");
  }

  /** True when this build can run a cross-validation path (the engine's computation is present). */
  get canRunPath(): boolean {
    return this.runner !== null;
  }

  /** True when the threshold can be chosen by cost, sensitivity or budget (else typed or clicked only). */
  get canChooseByGoal(): boolean {
    return this.chooser !== null;
  }

  /** The threshold the boundary review uses now. */
  get threshold(): number {
    return this.pane.reviewSettings.threshold;
  }

  /** Recompute the evaluation from the pane's fit (or the last path's out-of-fold probabilities). */
  recompute(): void {
    try {
      const level = this.pane.choice?.level ?? 0.95;
      const prior = this.evaluation;
      const model = this.pane.outcome?.model ?? null;
      const source = this.useOutOfFold && this.path?.outOfFold ? "out-of-fold" : "fitted rows";
      if (prior.kind === "binary" && model === this.evaluatedModel && source === prior.source && level === prior.auc.level && this.evaluatedPath === this.path) {
        // Same model and probabilities: only the threshold moved (the review re-scored the classes).
        // The curve, AUC, calibration and slope stand; the counts are taken again.
        this.evaluation = { ...prior, threshold: this.threshold, counts: confusionCounts(prior.labels, prior.probabilities, { threshold: this.threshold }), split: null };
      } else {
        const oof = this.useOutOfFold ? this.outOfFoldInput() : null;
        const input = oof ?? fittedRowsEvaluation(this.pane);
        this.evaluation = typeof input === "string" ? { kind: "unavailable", message: input } : evaluateBinary(input, this.threshold, level, oof ? "out-of-fold" : "fitted rows");
        this.evaluatedModel = model;
        this.evaluatedPath = this.path;
      }
      const data = this.pane.data;
      if (this.evaluation.kind === "binary" && data && this.splitColumn !== null && this.splitCandidates().includes(this.splitColumn)) {
        const col = data.table.columns[this.splitColumn];
        this.evaluation.split = calibrationSplit(this.evaluation, data.columns[this.splitColumn].name, (row) => (col.missing[row] ? "(blank)" : String(col.values[row])));
      }
    } catch (e) {
      const message = e instanceof OddsmithError ? e.message : problem("INTERNAL", { doing: "evaluating the model" }).message;
      this.evaluation = { kind: "unavailable", message };
    }
    this.emit("evaluation");
  }

  /** Out-of-fold labels and probabilities of the last path, aligned to the fitted rows, or null. */
  private outOfFoldInput(): ReturnType<typeof fittedRowsEvaluation> | null {
    const oof = this.path?.outOfFold;
    const fitted = fittedRowsEvaluation(this.pane);
    if (!oof || typeof fitted === "string") return null;
    const keep: number[] = [];
    fitted.dataRows.forEach((row, k) => {
      if (Number.isFinite(oof[row])) keep.push(k);
    });
    return {
      positiveClass: fitted.positiveClass,
      dataRows: Int32Array.from(keep, (k) => fitted.dataRows[k]),
      labels: Float64Array.from(keep, (k) => fitted.labels[k]),
      probabilities: Float64Array.from(keep, (k) => oof[fitted.dataRows[k]]),
    };
  }

  /** The pane's table (for column names), or null. */
  paneData(): PaneController["data"] {
    return this.pane.data;
  }

  /** Columns that can split the calibration plot: 2 to MAX_SPLIT_VALUES distinct values, not the label. */
  splitCandidates(): number[] {
    const { data, choice } = this.pane;
    if (!data || !choice) return [];
    return data.columns.filter((c) => c.index !== choice.label && !c.allDistinct && c.levels.length >= 2 && c.levels.length <= MAX_SPLIT_VALUES).map((c) => c.index);
  }

  /** Split the calibration plot by a column's values (null: one line over all rows). */
  setSplit(column: number | null): void {
    this.splitColumn = column;
    this.recompute();
  }

  /** Switch the charts between the fitted rows and the last path's out-of-fold probabilities. */
  setSource(outOfFold: boolean): void {
    this.useOutOfFold = outOfFold && !!this.path?.outOfFold;
    this.recompute();
  }

  /** Move the boundary review's threshold (the list, plot and counts follow). */
  async moveThreshold(threshold: number): Promise<void> {
    if (!(threshold > 0 && threshold < 1)) {
      this.setStatus({
        phase: "failed",
        message: problem("BAD_OPTION_VALUE", { name: "threshold", value: threshold, expected: "Use a probability strictly between 0 and 1." }).message,
      });
      return;
    }
    await this.pane.setReview({ threshold });
    this.emit("threshold");
  }

  /**
   * Choose the threshold for a goal on the labels and probabilities shown (fitted rows or
   * out-of-fold) and move the review's threshold there.
   */
  async chooseThreshold(goal: ThresholdGoal): Promise<void> {
    const ev = this.evaluation;
    if (goal.kind === "direct") {
      this.chooserNote = "";
      await this.moveThreshold(goal.value);
      return;
    }
    if (ev.kind !== "binary") return;
    if (!this.chooser) return;
    try {
      const found = this.chooser(ev.labels, ev.probabilities, goal.kind, goal.value);
      this.chooserNote = found.note;
      await this.moveThreshold(found.threshold);
    } catch (e) {
      this.chooserNote = e instanceof OddsmithError ? e.message : problem("INTERNAL", { doing: "choosing the threshold" }).message;
      this.emit("evaluation");
    }
  }

  /** Put the last path's one-SE penalty into the set-up (the person then refits). */
  adoptPathPenalty(): void {
    if (!this.path) return;
    const penalty = this.path.entries[this.path.oneSe].penalty;
    this.pane.setChoice({ penalty });
    this.setStatus({ phase: "done", message: `Penalty ${penalty} is now in the set-up (section 1); press Fit to refit with it.` });
  }

  // ---- cross-validation -------------------------------------------------------------------------

  /** The job of a path over the pane's current set-up. */
  pathJob(settings: PathSettings): CvJob {
    const { data, choice } = this.pane;
    if (!data || !choice) throw problem("BAD_OPTION_VALUE", { name: "table", value: "none", expected: "Use a table and set up a model first (section 1)." });
    const classCount = Math.max(2, this.pane.labelClasses().length);
    const inputs = modelInputs(data, choice, classCount);
    return { labels: inputs.labels, predictors: inputs.predictors, options: inputs.options.model, folds: settings.folds, seed: settings.seed, penalties: settings.penalties };
  }

  /** Run the cross-validation path; progress and the outcome land in `status` and `path`. */
  async runPath(settings: PathSettings): Promise<void> {
    this.cancelPath();
    const abort = new AbortController();
    this.abort = abort;
    try {
      const job = this.pathJob(settings);
      this.setStatus({ phase: "running", message: `Cross-validating ${settings.penalties.length} penalties over ${settings.folds} folds...`, progress: 0, busy: true });
      const onProgress = (p: CvProgress) => {
        if (abort.signal.aborted) return;
        this.setStatus({
          phase: "running",
          message: `Cross-validation: ${p.done} of ${p.total} fits (${Math.round((100 * p.done) / p.total)}%)...`,
          progress: p.done / p.total,
          busy: true,
        });
      };
      if (!this.runner) throw problem("INTERNAL", { doing: "cross-validating" });
      const outcome = await this.runner.run(job, onProgress, abort.signal);
      if (abort.signal.aborted) throw new CvCancelled();
      this.setPath(outcome);
      const best = outcome.entries[outcome.best];
      const oneSe = outcome.entries[outcome.oneSe];
      this.setStatus({
        phase: "done",
        message: `Done in ${(outcome.elapsedMs / 1000).toFixed(1)} s: lowest out-of-fold log-loss at penalty ${best.penalty}; the one-standard-error choice is ${oneSe.penalty}.`,
      });
      if (this.useOutOfFold) this.recompute();
    } catch (e) {
      if (e instanceof CvCancelled) {
        this.setStatus({ phase: "cancelled", message: "Cross-validation cancelled; the previous path (if any) is kept." });
        return;
      }
      const message = e instanceof OddsmithError || (e instanceof Error && e.name === "CvFailed") ? e.message : problem("INTERNAL", { doing: "cross-validating" }).message;
      this.setStatus({ phase: "failed", message });
    } finally {
      if (this.abort === abort) this.abort = null;
    }
  }

  /** Show a path (the outcome of a run); null clears it and leaves the out-of-fold view. */
  setPath(path: CvOutcome | null): void {
    this.path = path;
    if (!path?.outOfFold && this.useOutOfFold) {
      this.useOutOfFold = false;
      this.recompute();
    }
    this.emit("path");
  }

  /** Stop a running path. */
  cancelPath(): void {
    if (this.abort) {
      this.abort.abort();
      this.abort = null;
    }
  }

  dispose(): void {
    this.cancelPath();
    this.unsubscribe();
    this.listeners.clear();
  }
}
