/**
 * A held-out check: the model fitted on the training rows only, judged on the rows it was not
 * fitted on, beside the same scores on its own training rows.
 *
 * Policy (one line each):
 * - The split is the caller's marks (1 training, 0 held out, -1 left out, one per data row) or a
 *   seeded split stratified by class: each class's rows are shuffled by the seed (shuffledByClass,
 *   as for the folds) and the first round(share x rows of the class) of them are held out. The same
 *   cells and seed give the same split; sorting the table gives another one.
 * - Only rows that can enter a fit (a label and every predictor value) are split; other rows keep
 *   their place in the aligned outputs with role -1.
 * - Nothing leaks from the held-out rows: levels, pooling, standardization and a recipe's knots,
 *   centres and scales come from the training rows (fitOnRows).
 * - A held-out row the trained model cannot score (a level unseen in training) has no probability,
 *   is counted and named by example, and is left out of the held-out scores.
 * - Every class with held-out rows needs training rows (HOLDOUT_CLASS_UNTRAINED); both sides need
 *   rows (HOLDOUT_EMPTY_SIDE); a fit without usable estimates is refused (HOLDOUT_FIT_FAILED).
 */
import { problem } from "../messages";
import { confusionCounts, type ConfusionCounts } from "../metrics/confusionCounts";
import { calibrationSlope } from "../metrics/calibrationSlope";
import type { ModelOptions } from "../model";
import type { CellValue, Diagnostic } from "../types";
import { CELL_BUDGET, checkCvWork, type WorkBudget } from "./cvWork";
import { prepareEvaluationData, type EvaluationData } from "./evaluationData";
import { fitOnRows, type RowReason } from "./fitOnRows";
import { heldOutScores, type HeldOutScores } from "./heldOutScores";
import { shuffledByClass } from "./stratifiedFolds";

/** Share held out by a seeded split when none is given. */
export const DEFAULT_HOLDOUT_SHARE = 0.3;

/** What to check. */
export interface HoldOutRequest {
  labels: CellValue[][];
  predictors: CellValue[][];
  /** The model spec (trainModel's options). */
  options?: ModelOptions;
  /** Role per data row: 1 training, 0 held out, -1 left out; null for a seeded split or marks. */
  roles?: Int8Array | null;
  /** The caller's split column as cells, aligned with the labels range (its header row too); read by readMarks. */
  marks?: CellValue[][] | null;
  /** Share held out by a seeded split [DEFAULT_HOLDOUT_SHARE]. */
  share?: number;
  /** Seed of the split [1]. */
  seed?: number;
  /** A basis recipe built from the training rows. */
  recipe?: string | null;
  /** Work limit [CELL_BUDGET]. */
  budget?: WorkBudget;
}

/** Calibration of one side (two classes): logistic recalibration slope and intercept, NaN when undefined. */
export interface SideCalibration {
  slope: number;
  /** Intercept of the model with the slope. */
  intercept: number;
  /** Calibration-in-the-large: the intercept with slope fixed at 1 (offset). */
  inTheLarge: number;
}

/** The scores of one side of the split. */
export interface SideScores {
  scores: HeldOutScores;
  /** Two classes: counts at the threshold; several: null. */
  counts: ConfusionCounts | null;
  calibration: SideCalibration | null;
}

/** A finished held-out check. */
export interface HoldOutResult {
  kind: "binary" | "multiclass";
  classes: string[];
  positiveClass: string | null;
  referenceClass: string | null;
  /** Data rows of the ranges, and the 1-based range row of data row 0. */
  rows: number;
  firstRow: number;
  /** Role per data row: 1 training, 0 held out, -1 left out. */
  roles: Int8Array;
  /** How the split was made: the seed and share of a seeded split, or null for given marks. */
  seeded: { share: number; seed: number } | null;
  training: SideScores;
  heldOut: SideScores;
  /** Probability of each class per data row from the training fit (NaN where none). */
  probabilities: Float64Array[];
  /** Held-out rows without a probability, and the first of them (1-based range row). */
  unscored: { count: number; first: { row: number; reason: RowReason } | null };
  converged: boolean;
  threshold: number;
  notes: Diagnostic[];
}

/** The roles of a seeded split stratified by class (see the policy above). */
export function seededRoles(classOfRow: Int32Array, classCount: number, share: number, seed: number): Int8Array {
  if (!(share > 0 && share < 1)) throw problem("BAD_OPTION_VALUE", { name: "holdout", value: share, expected: "Use a share strictly between 0 and 1, such as 0.3." });
  if (!Number.isInteger(seed)) throw problem("BAD_OPTION_VALUE", { name: "seed", value: seed, expected: "Enter a whole number." });
  const roles = new Int8Array(classOfRow.length).fill(-1);
  for (const rows of shuffledByClass(classOfRow, classCount, seed)) {
    const held = Math.round(share * rows.length);
    rows.forEach((i, k) => {
      roles[i] = k < held ? 0 : 1;
    });
  }
  return roles;
}

/**
 * The roles of a split column (cells aligned with the labels range, a header row skipped when the
 * fit has one): TRUE or 1 for training, FALSE or 0 held out, blank left out (as text too: "TRUE",
 * "false", "1", "0", any case).
 * @throws OddsmithError SINGLE_COLUMN_NEEDED, RANGE_SHAPE_MISMATCH, HOLDOUT_BAD_MARK
 */
export function readMarks(marks: CellValue[][], header: boolean, rows: number, argument = "split"): Int8Array {
  const start = header ? 1 : 0;
  const columns = Math.max(0, ...marks.map((r) => r.length));
  if (columns !== 1) throw problem("SINGLE_COLUMN_NEEDED", { argument, columns });
  if (marks.length !== rows + start) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument, got: marks.length, expectedArgument: "labels", expected: rows + start });
  }
  const roles = new Int8Array(rows);
  for (let i = 0; i < rows; i++) {
    const v = marks[i + start][0];
    const t = typeof v === "string" ? v.trim().toLowerCase() : v;
    if (t === null || t === undefined || t === "") roles[i] = -1;
    else if (t === true || t === 1 || t === "true" || t === "1") roles[i] = 1;
    else if (t === false || t === 0 || t === "false" || t === "0") roles[i] = 0;
    else throw problem("HOLDOUT_BAD_MARK", { argument, row: i + start + 1, value: String(v) });
  }
  return roles;
}

/** The caller's roles restricted to rows that can enter a fit. */
function usableRoles(data: EvaluationData, given: Int8Array): Int8Array {
  const roles = new Int8Array(data.rows).fill(-1);
  for (let i = 0; i < data.rows; i++) if (data.classOfRow[i] >= 0 && i < given.length) roles[i] = given[i];
  return roles;
}

/** Refuse a split with an empty side or a held-out class without training rows. */
function checkSides(data: EvaluationData, roles: Int8Array): number {
  let train = 0;
  let held = 0;
  const trainedClass = new Uint8Array(data.classes.length);
  for (let i = 0; i < data.rows; i++) {
    if (roles[i] === 1) {
      train++;
      trainedClass[data.classOfRow[i]] = 1;
    } else if (roles[i] === 0) held++;
  }
  if (train === 0 || held === 0) {
    const side = train === 0 ? "No usable row is marked for training." : "No usable row is held out.";
    throw problem("HOLDOUT_EMPTY_SIDE", { side, note: `(${train} training, ${held} held-out rows with a label and every predictor value.) ` });
  }
  for (let c = 0; c < data.classes.length; c++) {
    if (trainedClass[c]) continue;
    const rows: number[] = [];
    for (let i = 0; i < data.rows; i++) if (roles[i] === 0 && data.classOfRow[i] === c) rows.push(i);
    if (rows.length > 0) throw problem("HOLDOUT_CLASS_UNTRAINED", { label: data.classes[c], count: rows.length, row: data.firstRow + rows[0] });
  }
  return train;
}

/** A metric's value, or NaN when the rows cannot define it. */
function orNaN<T>(f: () => T): T | null {
  try {
    return f();
  } catch {
    return null;
  }
}

/** Scores, counts and calibration of the rows `rows`. */
function sideScores(data: EvaluationData, probabilities: Float64Array[], rows: number[], threshold: number): SideScores {
  const scores = heldOutScores(data.classOfRow, probabilities, rows, data.weights, threshold);
  if (data.kind !== "binary") return { scores, counts: null, calibration: null };
  const y = Float64Array.from(rows, (i) => (data.classOfRow[i] === 1 ? 1 : 0));
  const p = Float64Array.from(rows, (i) => probabilities[1][i]);
  const weights = data.weights ? Float64Array.from(rows, (i) => (data.weights as Float64Array)[i]) : null;
  const counts = orNaN(() => confusionCounts(y, p, { threshold, weights }));
  const slope = orNaN(() => calibrationSlope(y, p, { weights }));
  const calibration = {
    slope: slope ? slope.slope.estimate : NaN,
    intercept: slope ? slope.interceptWithSlope.estimate : NaN,
    inTheLarge: slope ? slope.intercept.estimate : NaN,
  };
  return { scores, counts, calibration };
}

/**
 * Fit on the training rows and score both sides (see the policy above).
 *
 * Method: the hold-out (split-sample) estimate of prediction error (Hastie, Tibshirani & Friedman,
 * The Elements of Statistical Learning, 2nd ed., 2009, section 7.2; Steyerberg, Clinical
 * Prediction Models, 2nd ed., 2019, ch. 17); scores from heldOutScores, counts from
 * confusionCounts, calibration slope and intercept from calibrationSlope (Cox 1958).
 *
 * @throws OddsmithError for input problems (trainModel's, the options', the recipe's),
 *   HOLDOUT_EMPTY_SIDE, HOLDOUT_CLASS_UNTRAINED, HOLDOUT_FIT_FAILED, CV_TOO_COSTLY
 * @example holdOut({ labels, predictors, share: 0.3, seed: 1 }).heldOut.scores.logLoss
 */
export function holdOut(req: HoldOutRequest): HoldOutResult {
  const options = req.options ?? {};
  const data = prepareEvaluationData(req.labels, req.predictors, options, req.recipe ?? null);
  checkCvWork(1, data.full.design.rows, data.parameters, req.budget ?? CELL_BUDGET);
  const given = req.marks ? readMarks(req.marks, data.header, data.rows) : (req.roles ?? null);
  const seeded = given ? null : { share: req.share ?? DEFAULT_HOLDOUT_SHARE, seed: req.seed ?? 1 };
  const roles = seeded ? seededRoles(data.classOfRow, data.classes.length, seeded.share, seeded.seed) : usableRoles(data, given as Int8Array);
  const trainCount = checkSides(data, roles);

  const training = Uint8Array.from(roles, (r) => (r === 1 ? 1 : 0));
  const fit = fitOnRows(data, training, options.penalty ?? 0);
  if (fit.failure) throw problem("HOLDOUT_FIT_FAILED", { count: trainCount, reason: fit.failure.message });

  const threshold = options.threshold ?? 0.5;
  const trainRows: number[] = [];
  const heldRows: number[] = [];
  const unscored: [number, RowReason][] = [];
  for (let i = 0; i < data.rows; i++) {
    if (roles[i] < 0) continue;
    const scored = !fit.reasons.has(i) && Number.isFinite(fit.probabilities[0][i]);
    if (scored) (roles[i] === 1 ? trainRows : heldRows).push(i);
    else if (roles[i] === 0) unscored.push([i, fit.reasons.get(i) ?? { code: "MISSING_FOR_SCORING", message: "" }]);
  }
  if (heldRows.length === 0) {
    const first = unscored[0];
    throw problem("HOLDOUT_EMPTY_SIDE", { side: "No held-out row could be scored by the training fit.", note: first ? `(Row ${data.firstRow + first[0]}: ${first[1].message}) ` : "" });
  }
  const notes: Diagnostic[] = [];
  if (unscored.length > 0) {
    const params = { count: unscored.length, row: data.firstRow + unscored[0][0], reason: unscored[0][1].message };
    notes.push({ code: "CV_ROWS_UNSCORED", severity: "note", message: problem("CV_ROWS_UNSCORED", params).message, params });
  }
  if (!fit.converged) notes.push(...(fit.model?.fit.diagnostics.filter((d) => d.code === "NOT_CONVERGED") ?? []));
  return {
    kind: data.kind,
    classes: data.classes,
    positiveClass: data.positiveClass,
    referenceClass: data.referenceClass,
    rows: data.rows,
    firstRow: data.firstRow,
    roles,
    seeded,
    training: sideScores(data, fit.probabilities, trainRows, threshold),
    heldOut: sideScores(data, fit.probabilities, heldRows, threshold),
    probabilities: fit.probabilities,
    unscored: { count: unscored.length, first: unscored.length > 0 ? { row: data.firstRow + unscored[0][0], reason: unscored[0][1] } : null },
    converged: fit.converged,
    threshold,
    notes,
  };
}
