/**
 * Multi-class (softmax, multinomial logistic) model: P(class k | x) = exp(eta_k) / sum_l exp(eta_l),
 * eta_k = x' b_k.
 *
 * Two parameterizations:
 * - "reference" (default): K-1 equations, eta_ref = 0. Maximum likelihood (optionally L2-penalized),
 *   with Wald inference per equation: the classical baseline-category logit model
 *   (A. Agresti, Categorical Data Analysis, 3rd ed., 2013, §8.1).
 * - "symmetric": K equations, identifiable only with a penalty > 0 (the intercepts, never penalized,
 *   are pinned by the side condition sum_k a_k = 0, which the penalized optimum satisfies anyway for
 *   the slopes). Coefficients only: no classical standard errors or p-values.
 *
 * Fitting: Newton-Raphson on the full Hessian (all equations jointly) with step halving and R's glm
 * convergence rule |dev - dev_old| / (0.1 w + |dev|) < tol (w the mean case weight), on internally centred and scaled columns;
 * coefficients and covariance are mapped back to the original scale. The softmax subtracts the row
 * maximum and the log-likelihood uses log-sum-exp, so no exponential overflows.
 * Hessian (information) blocks are I_kl = X' diag(w p_k (delta_kl - p_l)) X (Böhning, "Multinomial
 * logistic regression algorithm", Ann. Inst. Statist. Math. 44 (1992) 197-200): only the E(E+1)/2
 * blocks k <= l, and in each only the upper triangle (each block is symmetric), are accumulated in
 * one pass over the rows, together with the probabilities, the log-likelihood and the score: per
 * chunk of 256 rows (which stays in cache) by the tiled kernels of blockAccumulate.ts; the full
 * matrix is mirrored from them at the end.
 * After convergence one more full Newton step polishes the estimate; the covariance is the inverse
 * information at the last iterate.
 *
 * Large data (speed): with at least 40,000 rows the iterations start from a fit on a systematic
 * subsample of about 5,000 rows, with that subsample's information (scaled up) standing in for the
 * full-data one; while the steps stay full-length the information is reused (the chord or
 * simplified Newton method, C. T. Kelley, Solving Nonlinear Equations with Newton's Method, SIAM
 * 2003, ch. 2) with a secant (BFGS) correction of its inverse after each step (Nocedal & Wright,
 * Numerical Optimization, 2nd ed., 2006, §6.1), each step then costing one pass for the score
 * instead of the O(n E^2 p^2) information; convergence then also asks for a Newton decrement below
 * 1e-8, and the final information and polishing Newton step are always computed on all rows.
 * Passes over the rows are not repeated: a trial point at which the information will be needed
 * (a fresh-information step, or the predicted last step, judged from the decrement's contraction)
 * is evaluated with it at once, and the polishing step, whose predicted gain g' H^-1 g / 2 is then
 * below the rounding of the objective, is taken without another pass.
 * Result: the same estimate as plain Newton-Raphson (5e-13 relative in the coefficients, 2e-8 in
 * the standard errors on a 100,000 x 20 x 5-class test) with 1 full information pass instead of 7
 * and 6 score passes (100,000 x 20 x 5 classes).
 * Smaller fits (fewer rows, or n q^2 E(E+1)/2 below 2e7) take plain Newton-Raphson steps.
 *
 * Penalty convention (shared with the binary model): objective = -logLik + (lambda / 2) *
 * sum over equations and non-intercept terms of (s_j b_kj)^2, with s_j the population SD of column j
 * over the fitted rows (weighted by the case weights) for penaltyScale "standardized" (default), or 1
 * for "original". Intercepts are never penalized.
 *
 * Edge-case policy (each rule is repeated above the code that applies it):
 * - A row with a non-finite predictor or a negative class index (missing label) is skipped, and
 *   counted in a ROWS_SKIPPED note; a row with weight 0 is left out silently (that is what 0 means).
 * - Aliased columns (1 - R^2 <= 1e-9 on the columns before them, weighted) are dropped, named, and
 *   reported with estimable = false and NaN numbers.
 * - A failed fit (separation, non-convergence, empty class, too few rows) returns NaN numbers and an
 *   "error" diagnostic: diverged numbers are never presented as results.
 */

import {
  buildCoefficientTable,
  informationCriteria,
  INTERCEPT_TERM,
  likelihoodRatioTest,
  mcFaddenR2,
  penalizedNote,
} from "./inference";
import {
  cholesky,
  choleskyInverse,
  choleskySolve,
  mirrorUpper,
  multiplyVector,
  rankRevealingCholesky,
  RANK_TOLERANCE,
  subsampleProvesFullRank,
  weightedCrossProduct,
} from "./linalg";
import { accumulateCrossProducts, accumulateWeightedGrams } from "./blockAccumulate";
import { wasmKernels } from "./kernels/wasmKernels";
import { exampleRows, fitDiagnostic, listNames, problem } from "./messages";
import type { Diagnostic, DesignMatrix, ModelFit, MulticlassFitOptions } from "./types";

/** Defaults of {@link fitMulticlassModel}. */
export const MULTICLASS_DEFAULTS = {
  maxIterations: 100,
  tolerance: 1e-10,
  level: 0.95,
} as const;

/**
 * A column whose population SD is at most this share of its largest absolute value is constant
 * (aliased with the intercept): centring leaves only rounding noise, which must not count as signal.
 */
const CONSTANT_COLUMN_SHARE = 1e-12;

/** Step halving gives up after this many halvings (step 2^-30 of the Newton step). */
const MAX_HALVINGS = 30;

/**
 * Separation certificate thresholds on the margins (d_c - d_k)' z_i of a candidate direction d (see
 * {@link findSeparation}). A Newton step taken where the likelihood is still climbing towards an
 * infinite optimum moves the linear predictors of the separated rows by about one unit, while a
 * step at a finite optimum moves them by far less than that at the convergence tolerance: a
 * direction is only examined when its largest margin is at least MIN_DIVERGING_MARGIN.
 */
const MIN_DIVERGING_MARGIN = 0.1;
/** Margins below -MARGIN_SHARE * (largest margin) refute a candidate; above +MARGIN_SHARE * it are strict. */
const MARGIN_SHARE = 1e-3;
/** A column belongs to the separating direction when its standardized component exceeds this share of the largest. */
const DIRECTION_COLUMN_SHARE = 1e-2;

/** Data prepared for the Newton loop: used rows only, internal (centred, scaled) kept columns. */
interface Prepared {
  /** Number of used rows. */
  n: number;
  /** Caller's row index of each used row. */
  rowIndex: Int32Array;
  w: Float64Array;
  /** Class index of each used row. */
  y: Int32Array;
  /** Internal columns of the kept terms, intercept (ones) first when present. */
  z: Float64Array[];
  /** Term index (into the full term list) of each internal column. */
  termOfColumn: number[];
  /** Centre and scale of each internal column (intercept: 0 and 1). */
  centre: Float64Array;
  scale: Float64Array;
  /** Penalty weight d_j of each internal column: objective gets (1/2) sum_k d_j theta_kj^2. */
  penaltyWeight: Float64Array;
}

/** Newton-Raphson outcome, on the internal scale. */
interface NewtonResult {
  theta: Float64Array;
  /** Information of the likelihood alone (no penalty) at the final theta, or null. */
  likelihoodInformation: Float64Array | null;
  logLik: number;
  objective: number;
  iterations: number;
  converged: boolean;
  lastChange: number;
  /** Inverse of the (penalized) information at theta, or null when it is not positive definite. */
  inverseInformation: Float64Array | null;
  /** Newton step from the final theta (null when the information was singular there). */
  finalStep: Float64Array | null;
  /** The last step actually taken. */
  lastStep: Float64Array | null;
}

/**
 * Fit a multi-class softmax (multinomial logistic) model by Newton-Raphson.
 *
 * @param X - design matrix without the intercept column (columnar Float64Array)
 * @param classIndex - class of each row as an index into `classes`; a negative value marks a missing label
 * @param classes - class labels (at least two)
 * @param options - {@link MulticlassFitOptions}: intercept [true], weights (case/frequency) [1],
 *   penalty lambda [0], penaltyScale ["standardized"], form ["reference"], reference [0],
 *   level [0.95], maxIterations [100], tolerance [1e-10]
 * @returns a {@link ModelFit} of kind "multiclass"; every problem found is in `diagnostics`:
 *   ALIASED_COLUMNS (warning), ROWS_SKIPPED and PENALIZED_NO_P_VALUES (notes), and as errors with
 *   NaN estimates EMPTY_CLASS, TOO_FEW_ROWS, NOT_CONVERGED and CLASSES_SEPARATED (unpenalized fits;
 *   the method, a certified diverging Newton direction, is described at findSeparation below)
 * @throws OddsmithError for input the caller must correct: RANGE_SHAPE_MISMATCH, BAD_WEIGHT,
 *   BAD_OPTION_VALUE, CLASS_INDEX_OUT_OF_RANGE, SYMMETRIC_NEEDS_PENALTY, ONE_CLASS_ONLY, NO_USABLE_ROWS
 *
 * Reference: Agresti (2013) §8.1 (baseline-category logits, Wald inference); Böhning (1992) for the
 * Hessian; McFadden (1974) pseudo-R2; R's glm.fit for the convergence rule and step halving.
 *
 * @example
 * const fit = fitMulticlassModel({ rows: 6, columns: [x], names: ["x"] }, Int32Array.from([0,0,1,1,2,2]), ["a","b","c"]);
 * fit.coefficients[0]; // [intercept, slope] of class "b" against reference "a"
 */
export function fitMulticlassModel(
  X: DesignMatrix,
  classIndex: Int32Array,
  classes: string[],
  options: MulticlassFitOptions = {},
): ModelFit {
  const K = classes.length;
  const opts = readOptions(options, K);
  const n0 = X.rows;
  // ---- shapes ----------------------------------------------------------------------------------
  if (classIndex.length !== n0) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument: "labels", got: classIndex.length, expectedArgument: "predictors", expected: n0 });
  }
  for (let j = 0; j < X.columns.length; j++) {
    if (X.columns[j].length !== n0) {
      throw problem("RANGE_SHAPE_MISMATCH", { argument: `predictor "${X.names[j]}"`, got: X.columns[j].length, expectedArgument: "labels", expected: n0 });
    }
  }
  const weights = options.weights ?? null;
  if (weights && weights.length !== n0) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument: "weights", got: weights.length, expectedArgument: "labels", expected: n0 });
  }
  if (K < 2) throw problem("ONE_CLASS_ONLY", { label: classes[0] ?? "" });

  // ---- rows ------------------------------------------------------------------------------------
  // Policy: non-finite predictor or negative class index = missing -> skipped and counted; weight 0
  // = left out silently; a class index >= K or a bad weight is the caller's error.
  const p0 = X.columns.length;
  const missingPerColumn = new Int32Array(p0);
  let missingLabels = 0;
  let skipped = 0;
  // Non-finite predictors, column by column (contiguous reads); x - x is NaN exactly for NaN and +-Infinity.
  const incomplete = new Uint8Array(n0);
  for (let j = 0; j < p0; j++) {
    const x = X.columns[j];
    let missing = 0;
    for (let i = 0; i < n0; i++) {
      if (x[i] - x[i] !== 0) {
        missing++;
        incomplete[i] = 1;
      }
    }
    missingPerColumn[j] = missing;
  }
  const used: number[] = [];
  for (let i = 0; i < n0; i++) {
    const c = classIndex[i];
    if (c >= K) {
      throw problem("CLASS_INDEX_OUT_OF_RANGE", { row: i + 1, value: c, count: K, classes: listNames(classes), last: K - 1 });
    }
    const wi = weights ? weights[i] : 1;
    if (!(wi >= 0) || !Number.isFinite(wi)) throw problem("BAD_WEIGHT", { row: i + 1, value: wi });
    const complete = c >= 0 && incomplete[i] === 0;
    if (c < 0) missingLabels++;
    if (!complete) {
      skipped++;
      continue;
    }
    if (wi > 0) used.push(i);
  }
  const missingDetail = describeMissing(X.names, missingPerColumn, missingLabels);
  if (used.length === 0) throw problem("NO_USABLE_ROWS", { missing: missingDetail || "none" });

  const diagnostics: Diagnostic[] = [];
  if (skipped > 0) {
    diagnostics.push(fitDiagnostic("ROWS_SKIPPED", { count: skipped, detail: missingDetail }));
  }

  // ---- classes present -------------------------------------------------------------------------
  const classWeight = new Float64Array(K);
  for (const i of used) classWeight[classIndex[i]] += weights ? weights[i] : 1;
  const present = Array.from(classWeight).filter((v) => v > 0).length;
  if (present < 2) {
    const only = classWeight.findIndex((v) => v > 0);
    throw problem("ONE_CLASS_ONLY", { label: classes[only] });
  }

  const intercept = opts.intercept;
  const terms = intercept ? [INTERCEPT_TERM, ...X.names] : [...X.names];
  const pFull = terms.length;
  const symmetric = opts.form === "symmetric";
  const equationClassIdx: number[] = [];
  for (let k = 0; k < K; k++) if (symmetric || k !== opts.reference) equationClassIdx.push(k);
  const E = equationClassIdx.length;
  const observations = used.reduce((s, i) => s + (weights ? weights[i] : 1), 0);
  const penalized = opts.penalty > 0;

  const shell: FitShell = {
    classes,
    referenceClass: symmetric ? "" : classes[opts.reference],
    form: opts.form,
    terms,
    intercept,
    equationClasses: equationClassIdx.map((k) => classes[k]),
    level: opts.level,
    penalized,
    penalty: opts.penalty,
    rowsUsed: used.length,
    observations,
    nullLogLikelihood: nullLogLikelihood(classWeight, observations, intercept),
  };
  if (penalized) diagnostics.push(penalizedNote(opts.penalty));

  // Policy: a class without usable rows has no finite estimate (its probability would be 0).
  const empty = classes.filter((_, k) => classWeight[k] === 0);
  if (empty.length > 0) {
    for (const label of empty) {
      diagnostics.push(fitDiagnostic("EMPTY_CLASS", { label }));
    }
    return failedFit(shell, new Array(pFull).fill(false), diagnostics, 0, false);
  }

  // Policy: without a penalty, fewer usable rows than coefficients per equation cannot be estimated.
  if (!penalized && used.length < pFull) {
    diagnostics.push(fitDiagnostic("TOO_FEW_ROWS", { rows: used.length, parameters: pFull }));
    return failedFit(shell, new Array(pFull).fill(false), diagnostics, 0, false);
  }

  // ---- internal design and aliasing ------------------------------------------------------------
  const prep = prepare(X, used, classIndex, weights, intercept, opts.penalty, opts.penaltyScale);
  const aliased = new Array<boolean>(pFull).fill(false);
  for (let t = 0; t < pFull; t++) if (!prep.termOfColumn.includes(t)) aliased[t] = true;
  const q = prep.z.length;
  // Large data: a subsample may already prove that no column is aliased (subsampleProvesFullRank;
  // every internal column has weighted sum of squares `total`: centred and scaled to unit SD, or
  // to unit root mean square without an intercept, and the intercept column is all ones).
  if (q > 0 && !rankProvedOnSubsample(prep)) {
    const gram = weightedCrossProduct(prep.z, prep.w, prep.n, new Float64Array(q * q));
    const rr = rankRevealingCholesky(gram, q, RANK_TOLERANCE);
    if (rr.dependent.length > 0) {
      for (const c of rr.dependent) aliased[prep.termOfColumn[c]] = true;
      keepColumns(prep, rr.independent);
    }
  }
  const aliasedNames = terms.filter((_, t) => aliased[t]);
  if (aliasedNames.length > 0) {
    diagnostics.push(fitDiagnostic("ALIASED_COLUMNS", { columns: listNames(aliasedNames) }, { columns: aliasedNames }));
  }
  if (prep.z.length === 0) {
    // Nothing to estimate (no intercept and every column aliased): the model is p_k = 1/K.
    diagnostics.push(fitDiagnostic("TOO_FEW_ROWS", { rows: used.length, parameters: 0 }));
    return failedFit(shell, aliased, diagnostics, 0, false);
  }

  // ---- Newton-Raphson ----------------------------------------------------------------------------
  const newton = newtonRaphson(prep, K, equationClassIdx, symmetric, classWeight, observations, opts);

  // ---- separation (unpenalized fits only: a penalty keeps every estimate finite) -----------------
  if (!penalized) {
    const candidates = [newton.finalStep, newton.lastStep].filter((d): d is Float64Array => d !== null);
    for (const d of candidates) {
      const sep = findSeparation(prep, K, equationClassIdx, d, classes, terms);
      if (sep) {
        diagnostics.push(sep);
        // As in the binary engine, the log-likelihood keeps the supremum the iterations approached.
        return failedFit(shell, aliased, diagnostics, newton.iterations, false, newton.logLik);
      }
    }
  }
  // An estimate whose likelihood is not finite is no estimate; one stopped at the iteration cap is
  // kept with a warning (the severity policy in messages.ts, as in the binary fit).
  if (!Number.isFinite(newton.logLik)) {
    diagnostics.push(fitDiagnostic("LIKELIHOOD_NOT_FINITE", {}));
    return failedFit(shell, aliased, diagnostics, newton.iterations, false);
  }
  if (!newton.converged) {
    const change = Number.isFinite(newton.lastChange) ? newton.lastChange.toPrecision(3) : "not available";
    diagnostics.push(fitDiagnostic("NOT_CONVERGED", { iterations: newton.iterations, change }));
  }

  // ---- back to the original scale ------------------------------------------------------------------
  const { coefficients, covariance, standardErrors } = toOriginalScale(prep, newton, E, pFull, intercept, penalized);
  const table = buildCoefficientTable({
    terms,
    equationClasses: shell.equationClasses,
    coefficients,
    covariance,
    aliased,
    level: opts.level,
    penalized,
    standardErrors,
  });
  const parameters = E * prep.z.length;
  const nullParameters = intercept ? E : 0;
  const logLik = newton.logLik;
  const ic = informationCriteria(logLik, parameters, observations);
  const lrTest = likelihoodRatioTest(logLik, shell.nullLogLikelihood, parameters - nullParameters);
  return {
    kind: "multiclass",
    classes: [...classes],
    referenceClass: shell.referenceClass,
    form: opts.form,
    terms,
    intercept,
    coefficients,
    equationClasses: shell.equationClasses,
    covariance,
    table,
    level: opts.level,
    intervalMethod: "wald",
    aliased,
    penalized,
    penalty: opts.penalty,
    biasReduced: false,
    logLikelihood: logLik,
    nullLogLikelihood: shell.nullLogLikelihood,
    deviance: -2 * logLik,
    nullDeviance: -2 * shell.nullLogLikelihood,
    // Penalized fits (as in the binary engine): AIC/BIC with the coefficient count and the LR
    // statistic are descriptive only; the LR p-value is NaN (no chi-square reference distribution).
    aic: ic.aic,
    bic: ic.bic,
    pseudoR2: mcFaddenR2(logLik, shell.nullLogLikelihood),
    lrTest: penalized ? { ...lrTest, p: NaN } : lrTest,
    parameters,
    rowsUsed: used.length,
    observations,
    iterations: newton.iterations,
    converged: newton.converged,
    diagnostics,
  };
}

// ================================================================================================
// Options
// ================================================================================================

interface ResolvedOptions {
  intercept: boolean;
  penalty: number;
  penaltyScale: "standardized" | "original";
  form: "reference" | "symmetric";
  reference: number;
  level: number;
  maxIterations: number;
  tolerance: number;
}

function readOptions(o: MulticlassFitOptions, K: number): ResolvedOptions {
  const bad = (name: string, value: unknown, expected: string) => problem("BAD_OPTION_VALUE", { name, value: String(value), expected });
  const penalty = o.penalty ?? 0;
  if (!(penalty >= 0) || !Number.isFinite(penalty)) throw bad("penalty", penalty, "Use a number of 0 or more (0 = no penalty).");
  const penaltyScale = o.penaltyScale ?? "standardized";
  if (penaltyScale !== "standardized" && penaltyScale !== "original") {
    throw bad("penaltyScale", penaltyScale, 'Use "standardized" or "original".');
  }
  const form = o.form ?? "reference";
  if (form !== "reference" && form !== "symmetric") throw bad("form", form, 'Use "reference" or "symmetric".');
  if (form === "symmetric" && !(penalty > 0)) throw problem("SYMMETRIC_NEEDS_PENALTY", { penalty });
  const reference = o.reference ?? 0;
  if (!Number.isInteger(reference) || reference < 0 || reference >= Math.max(K, 1)) {
    throw bad("reference", reference, `Use a class number from 0 to ${K - 1}.`);
  }
  const level = o.level ?? MULTICLASS_DEFAULTS.level;
  if (!(level > 0 && level < 1)) throw bad("level", level, "Use a confidence level between 0 and 1, e.g. 0.95.");
  const maxIterations = o.maxIterations ?? MULTICLASS_DEFAULTS.maxIterations;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) throw bad("maxIterations", maxIterations, "Use a whole number of 1 or more.");
  const tolerance = o.tolerance ?? MULTICLASS_DEFAULTS.tolerance;
  if (!(tolerance > 0) || !Number.isFinite(tolerance)) throw bad("tolerance", tolerance, "Use a small positive number, e.g. 1e-10.");
  if (o.offset) throw bad("offset", "a column", "An offset is available for two-class fits only; leave it out of a multi-class fit.");
  if (o.biasReduction) throw bad("biasReduction", true, "Bias reduction is available for two-class fits only; use a penalty for a multi-class fit.");
  if (o.intervalMethod && o.intervalMethod !== "wald") {
    throw bad("intervalMethod", o.intervalMethod, 'Multi-class fits give Wald intervals: use "wald".');
  }
  return { intercept: o.intercept ?? true, penalty, penaltyScale, form, reference, level, maxIterations, tolerance };
}

function describeMissing(names: readonly string[], perColumn: Int32Array, labels: number): string {
  const parts: string[] = [];
  if (labels > 0) parts.push(`labels: ${labels}`);
  for (let j = 0; j < names.length; j++) if (perColumn[j] > 0) parts.push(`${names[j]}: ${perColumn[j]}`);
  return parts.join(", ");
}

function nullLogLikelihood(classWeight: Float64Array, total: number, intercept: boolean): number {
  // With an intercept the null model is the class proportions; without one it is p_k = 1/K.
  if (!intercept) return total * Math.log(1 / classWeight.length);
  let s = 0;
  for (const wk of classWeight) if (wk > 0) s += wk * Math.log(wk / total);
  return s;
}

// ================================================================================================
// Design preparation
// ================================================================================================

/**
 * Weighted moments of a column divided by its largest magnitude m (so that squares of values near
 * 1e300 or 1e-300 neither overflow nor underflow; mean, SD and RMS are m times these): maxAbs = m
 * (0 for an all-zero column), meanU = weighted mean of x / m, ss and sq = weighted sums of squares
 * of x / m about meanU and about 0. In the ordinary range of m the sums are taken on x itself and
 * divided at the end (no division per value).
 */
function scaledMoments(col: Float64Array, w: Float64Array, total: number, n: number): { maxAbs: number; meanU: number; ss: number; sq: number } {
  let maxAbs = 0;
  let sum = 0;
  for (let r = 0; r < n; r++) {
    const a = Math.abs(col[r]);
    if (a > maxAbs) maxAbs = a;
    sum += w[r] * col[r];
  }
  const m = maxAbs > 0 ? maxAbs : 1;
  if (m >= MOMENT_SAFE_MIN && m <= MOMENT_SAFE_MAX) {
    const mean = sum / total;
    let ss = 0;
    let sq = 0;
    for (let r = 0; r < n; r++) {
      const d = col[r] - mean;
      ss += w[r] * d * d;
      sq += w[r] * col[r] * col[r];
    }
    return { maxAbs, meanU: mean / m, ss: ss / (m * m), sq: sq / (m * m) };
  }
  let meanU = 0;
  for (let r = 0; r < n; r++) meanU += w[r] * (col[r] / m);
  meanU /= total;
  let ss = 0;
  let sq = 0;
  for (let r = 0; r < n; r++) {
    const u = col[r] / m;
    ss += w[r] * (u - meanU) * (u - meanU);
    sq += w[r] * u * u;
  }
  return { maxAbs, meanU, ss, sq };
}

/** Range of the largest magnitude in which scaledMoments sums x and x^2 directly (squares near 1e+-200). */
const MOMENT_SAFE_MIN = 1e-100;
const MOMENT_SAFE_MAX = 1e100;

function prepare(
  X: DesignMatrix,
  used: number[],
  classIndex: Int32Array,
  weights: Float64Array | null,
  intercept: boolean,
  penalty: number,
  penaltyScale: "standardized" | "original",
): Prepared {
  const n = used.length;
  const rowIndex = Int32Array.from(used);
  const w = new Float64Array(n);
  const y = new Int32Array(n);
  let total = 0;
  for (let r = 0; r < n; r++) {
    const i = used[r];
    w[r] = weights ? weights[i] : 1;
    y[r] = classIndex[i];
    total += w[r];
  }
  const z: Float64Array[] = [];
  const termOfColumn: number[] = [];
  const centre: number[] = [];
  const scale: number[] = [];
  const penaltyWeight: number[] = [];
  if (intercept) {
    z.push(new Float64Array(n).fill(1));
    termOfColumn.push(0);
    centre.push(0);
    scale.push(1);
    penaltyWeight.push(0);
  }
  const offset = intercept ? 1 : 0;
  const allRows = n === X.rows;
  for (let j = 0; j < X.columns.length; j++) {
    const x = X.columns[j];
    // The used rows of the column, contiguous (a plain copy when every row is used); centred and
    // scaled in place below.
    const col = new Float64Array(n);
    if (allRows) col.set(x);
    else for (let r = 0; r < n; r++) col[r] = x[used[r]];
    const { maxAbs, meanU, ss, sq } = scaledMoments(col, w, total, n);
    const m = maxAbs > 0 ? maxAbs : 1;
    const sdU = Math.sqrt(ss / total); // population SD (over m), weighted by the case weights
    // Policy: with an intercept a constant column is aliased with it; an all-zero column always is.
    if (intercept ? !(sdU > CONSTANT_COLUMN_SHARE) : maxAbs === 0) continue;
    const cU = intercept ? meanU : 0;
    const sU = intercept ? sdU : Math.sqrt(sq / total);
    if (m >= MOMENT_SAFE_MIN && m <= MOMENT_SAFE_MAX) {
      // (x / m - cU) / sU = (x - m cU) / (m sU), with one multiplication per value.
      const c0 = m * cU;
      const inv = 1 / (m * sU);
      for (let r = 0; r < n; r++) col[r] = (col[r] - c0) * inv;
    } else {
      for (let r = 0; r < n; r++) col[r] = (col[r] / m - cU) / sU;
    }
    const sd = m * sdU;
    const c = m * cU;
    const s = m * sU;
    z.push(col);
    termOfColumn.push(j + offset);
    centre.push(c);
    scale.push(s);
    // The internal coefficient is gamma = s * b, so (lambda/2)(s_pen b)^2 = (lambda/2)(s_pen/s)^2 gamma^2.
    const sPen = penaltyScale === "standardized" ? sd : 1;
    penaltyWeight.push(penalty * (sPen / s) * (sPen / s));
  }
  return {
    n,
    rowIndex,
    w,
    y,
    z,
    termOfColumn,
    centre: Float64Array.from(centre),
    scale: Float64Array.from(scale),
    penaltyWeight: Float64Array.from(penaltyWeight),
  };
}

function keepColumns(prep: Prepared, keep: readonly number[]): void {
  prep.z = keep.map((c) => prep.z[c]);
  prep.termOfColumn = keep.map((c) => prep.termOfColumn[c]);
  prep.centre = Float64Array.from(keep, (c) => prep.centre[c]);
  prep.scale = Float64Array.from(keep, (c) => prep.scale[c]);
  prep.penaltyWeight = Float64Array.from(keep, (c) => prep.penaltyWeight[c]);
}

// ================================================================================================
// Newton-Raphson
// ================================================================================================

/** Below this linear predictor exp() cannot overflow (exp(709.78) is the largest finite double). */
const EXP_SAFE = 700;

/** Rows per chunk of the kernel: the chunk's columns and weights (CHUNK * (q + E + pairs) doubles) stay in cache. */
const CHUNK = 256;

/**
 * The likelihood kernel: for parameters theta (equation-major, q per equation, internal scale),
 * returns the weighted log-likelihood; when `derivs` is set also fills the score X'(w(y - p)) and
 * the packed information blocks. Rows are processed in chunks of {@link CHUNK}: per chunk the
 * probabilities and the block weights v_ef = w p_e (delta_ef - p_f) are computed once, then the score and every
 * block entry (a <= b) are accumulated over the chunk by the tiled kernels of blockAccumulate.ts.
 * Allocates nothing per row.
 */
class SoftmaxKernel {
  readonly q: number;
  readonly E: number;
  readonly pairs: number;
  /** Equation of each class (-1 for the reference class). */
  private readonly eqOfClass: Int32Array;
  private readonly refForm: boolean;
  private readonly etaBuf: Float64Array;
  /** Chunk buffers: probabilities [e * CHUNK + i], row shift and sum of exponentials, equation of each row's class. */
  private readonly prob: Float64Array;
  private readonly shift: Float64Array;
  private readonly sum: Float64Array;
  private readonly yEq: Int32Array;
  /** Chunk buffers: residuals r_e = w (y_e - p_e) [e * CHUNK + i], block weights [pair * CHUNK + i]. */
  private readonly resid: Float64Array;
  private readonly v: Float64Array;
  readonly score: Float64Array;
  /** Information blocks: [(a * q + b) * pairs + pair(e,f)] for a <= b and e <= f (see accumulateWeightedGrams). */
  readonly blocks: Float64Array;

  constructor(
    private readonly prep: Prepared,
    K: number,
    equationClassIdx: readonly number[],
    symmetric: boolean,
  ) {
    this.q = prep.z.length;
    this.E = equationClassIdx.length;
    this.pairs = (this.E * (this.E + 1)) / 2;
    this.refForm = !symmetric;
    this.eqOfClass = new Int32Array(K).fill(-1);
    equationClassIdx.forEach((k, e) => (this.eqOfClass[k] = e));
    this.etaBuf = new Float64Array(this.E * CHUNK);
    this.prob = new Float64Array(this.E * CHUNK);
    this.shift = new Float64Array(CHUNK);
    this.sum = new Float64Array(CHUNK);
    this.yEq = new Int32Array(CHUNK);
    this.resid = new Float64Array(this.E * CHUNK);
    this.v = new Float64Array(this.pairs * CHUNK);
    this.score = new Float64Array(this.E * this.q);
    this.blocks = new Float64Array(this.q * this.q * this.pairs);
  }

  /**
   * @param mode - what to compute besides the log-likelihood: "value" nothing, "score" the score,
   *   "information" the score and the information blocks
   */
  evaluate(theta: Float64Array, mode: "value" | "score" | "information"): number {
    const { q, E, pairs, prob, shift, sum, yEq, v, score, blocks, refForm, eqOfClass } = this;
    const { n, z, w, y } = this.prep;
    const derivs = mode !== "value";
    const info = mode === "information";
    if (derivs) score.fill(0);
    if (info) blocks.fill(0);
    // With the WebAssembly kernels (wasmKernels.ts) the chunk's sums run there: its memory holds the
    // chunk's columns [0, q CHUNK), the block weights [vAt, + pairs CHUNK), the information sums
    // [outAt, + q q pairs), theta [thetaAt, + E q), the linear predictors [etaAt, + E CHUNK), the
    // residuals [residAt, + E CHUNK) and the score sums [scoreAt, + E q); etaBuf and resid are then
    // views of that memory. Without them, linearPredictors and the kernels of blockAccumulate.ts.
    const vAt = q * CHUNK;
    const outAt = vAt + pairs * CHUNK;
    const thetaAt = outAt + q * q * pairs;
    const etaAt = thetaAt + E * q;
    const residAt = etaAt + E * CHUNK;
    const scoreAt = residAt + E * CHUNK;
    const wasm = wasmKernels();
    const mem = wasm ? wasm.reserve(scoreAt + E * q) : null;
    let etaBuf = this.etaBuf;
    let resid = this.resid;
    if (mem) {
      mem.fill(0, outAt, outAt + q * q * pairs);
      mem.set(theta.subarray(0, E * q), thetaAt);
      mem.fill(0, scoreAt, scoreAt + E * q);
      etaBuf = mem.subarray(etaAt, etaAt + E * CHUNK);
      resid = mem.subarray(residAt, residAt + E * CHUNK);
    }
    let logLik = 0;
    for (let r0 = 0; r0 < n; r0 += CHUNK) {
      const L = Math.min(CHUNK, n - r0);
      // Rows in pairs for the WebAssembly kernels: an odd chunk gets a zero row (weight and residual 0).
      const even = L + (L & 1);
      if (wasm && mem) {
        for (let j = 0; j < q; j++) {
          mem.set(z[j].subarray(r0, r0 + L), j * CHUNK);
          if (even > L) mem[j * CHUNK + L] = 0;
        }
        wasm.predictors(0, q, even, CHUNK, thetaAt, E, etaAt);
      } else {
        // Linear predictors of the chunk, column by column (contiguous); eta_ref = 0 (reference form).
        linearPredictors(z, theta, r0, L, q, E, etaBuf);
      }
      // The rest also runs over the chunk one equation at a time (long loops over rows rather than
      // short loops over equations). Stable softmax: subtract the row maximum; log-sum-exp for the
      // log-likelihood. In the reference form no exponential can overflow while every eta is below
      // EXP_SAFE, so the shift is 0 then (the reference term is exp(0) = 1: one exponential fewer
      // per row).
      for (let i = 0; i < L; i++) shift[i] = refForm ? 0 : -Infinity;
      for (let e = 0; e < E; e++) {
        const o = e * CHUNK;
        for (let i = 0; i < L; i++) {
          const x = etaBuf[o + i];
          if (x > shift[i]) shift[i] = x;
        }
      }
      if (refForm) for (let i = 0; i < L; i++) if (shift[i] <= EXP_SAFE) shift[i] = 0;
      for (let i = 0; i < L; i++) sum[i] = refForm ? (shift[i] === 0 ? 1 : Math.exp(-shift[i])) : 0;
      for (let e = 0; e < E; e++) {
        const o = e * CHUNK;
        for (let i = 0; i < L; i++) {
          const t = Math.exp(etaBuf[o + i] - shift[i]);
          prob[o + i] = t;
          sum[i] += t;
        }
      }
      for (let i = 0; i < L; i++) {
        const row = r0 + i;
        const ye = eqOfClass[y[row]];
        yEq[i] = ye;
        logLik += w[row] * ((ye >= 0 ? etaBuf[ye * CHUNK + i] : 0) - shift[i] - Math.log(sum[i]));
      }
      if (!derivs) continue;
      for (let i = 0; i < L; i++) sum[i] = 1 / sum[i];
      for (let e = 0; e < E; e++) {
        const o = e * CHUNK;
        for (let i = 0; i < L; i++) {
          const p = prob[o + i] * sum[i];
          prob[o + i] = p;
          resid[o + i] = w[r0 + i] * ((yEq[i] === e ? 1 : 0) - p);
        }
      }
      if (info) {
        let pr = 0;
        for (let e = 0; e < E; e++) {
          const oe = e * CHUNK;
          for (let f = e; f < E; f++) {
            const of = f * CHUNK;
            const ov = pr++ * CHUNK;
            if (f === e) {
              for (let i = 0; i < L; i++) {
                const pe = prob[oe + i];
                v[ov + i] = w[r0 + i] * pe * (1 - pe);
              }
            } else {
              for (let i = 0; i < L; i++) v[ov + i] = -(w[r0 + i] * prob[oe + i]) * prob[of + i];
            }
          }
        }
      }
      if (!derivs) continue;
      // Score: X' r_e over the chunk; information: X' diag(v_ef) X, upper triangles, over the chunk.
      if (wasm && mem) {
        if (even > L) for (let e = 0; e < E; e++) resid[e * CHUNK + L] = 0;
        wasm.crossSums(0, q, even, CHUNK, residAt, E, scoreAt);
      } else {
        accumulateCrossProducts(z, r0, L, resid, CHUNK, E, score);
      }
      if (info && wasm && mem) {
        for (let pr = 0; pr < pairs; pr++) {
          mem.set(v.subarray(pr * CHUNK, pr * CHUNK + L), vAt + pr * CHUNK);
          if (even > L) mem[vAt + pr * CHUNK + L] = 0;
        }
        wasm.weightedGrams(0, q, even, vAt, CHUNK, pairs, outAt);
      } else if (info) {
        accumulateWeightedGrams(z, r0, L, v, CHUNK, pairs, blocks);
      }
    }
    if (info && wasm && mem) blocks.set(mem.subarray(outAt, outAt + q * q * pairs));
    if (derivs && wasm && mem) score.set(mem.subarray(scoreAt, scoreAt + E * q));
    return logLik;
  }

  /** Assemble the full information matrix (M*M, M = E*q) from the packed blocks. */
  information(out: Float64Array): Float64Array {
    const { q, E, pairs, blocks } = this;
    const M = E * q;
    out.fill(0);
    let pr = 0;
    for (let e = 0; e < E; e++) {
      for (let f = e; f < E; f++) {
        for (let a = 0; a < q; a++) {
          for (let b = a; b < q; b++) {
            const val = blocks[(a * q + b) * pairs + pr];
            out[(e * q + a) * M + f * q + b] = val;
            out[(e * q + b) * M + f * q + a] = val;
          }
        }
        pr++;
      }
    }
    return mirrorUpper(out, M);
  }
}

/**
 * eta[e * CHUNK + i] = sum_j theta[e * q + j] z_j[r0 + i] for the rows of one chunk: two equations
 * and four columns per pass (each column value is loaded once for two equations, each eta loaded
 * and stored once per four columns).
 */
function linearPredictors(
  z: readonly Float64Array[],
  theta: Float64Array,
  r0: number,
  L: number,
  q: number,
  E: number,
  etaBuf: Float64Array,
): void {
  etaBuf.fill(0, 0, E * CHUNK);
  let e = 0;
  for (; e + 2 <= E; e += 2) {
    const oa = e * CHUNK;
    const ob = oa + CHUNK;
    const ta = e * q;
    const tb = ta + q;
    let j = 0;
    for (; j + 4 <= q; j += 4) {
      const a0 = theta[ta + j];
      const a1 = theta[ta + j + 1];
      const a2 = theta[ta + j + 2];
      const a3 = theta[ta + j + 3];
      const b0 = theta[tb + j];
      const b1 = theta[tb + j + 1];
      const b2 = theta[tb + j + 2];
      const b3 = theta[tb + j + 3];
      const z0 = z[j];
      const z1 = z[j + 1];
      const z2 = z[j + 2];
      const z3 = z[j + 3];
      for (let i = 0; i < L; i++) {
        const r = r0 + i;
        const x0 = z0[r];
        const x1 = z1[r];
        const x2 = z2[r];
        const x3 = z3[r];
        etaBuf[oa + i] += a0 * x0 + a1 * x1 + a2 * x2 + a3 * x3;
        etaBuf[ob + i] += b0 * x0 + b1 * x1 + b2 * x2 + b3 * x3;
      }
    }
    for (; j < q; j++) {
      const ca = theta[ta + j];
      const cb = theta[tb + j];
      const zj = z[j];
      for (let i = 0; i < L; i++) {
        const x = zj[r0 + i];
        etaBuf[oa + i] += ca * x;
        etaBuf[ob + i] += cb * x;
      }
    }
  }
  for (; e < E; e++) {
    const off = e * CHUNK;
    const t0 = e * q;
    for (let j = 0; j < q; j++) {
      const c = theta[t0 + j];
      const zj = z[j];
      for (let i = 0; i < L; i++) etaBuf[off + i] += c * zj[r0 + i];
    }
  }
}

function newtonRaphson(
  prep: Prepared,
  K: number,
  equationClassIdx: readonly number[],
  symmetric: boolean,
  classWeight: Float64Array,
  total: number,
  opts: ResolvedOptions,
): NewtonResult {
  const q = prep.z.length;
  const E = equationClassIdx.length;
  // Start at the null model: intercepts = log class proportions (centred columns make that exact).
  const start = new Float64Array(E * q);
  if (opts.intercept) {
    const logRef = symmetric ? mean(Array.from(classWeight, (v) => Math.log(v / total))) : Math.log(classWeight[opts.reference] / total);
    equationClassIdx.forEach((k, e) => (start[e * q] = Math.log(classWeight[k] / total) - logRef));
  }
  // Large data: warm start from a fit on a systematic subsample (every stride-th row), so the
  // full-data iterations start close to the optimum. Any trouble there: start from the null model.
  if (prep.n >= WARM_START_MIN_ROWS) {
    const stride = Math.floor(prep.n / WARM_START_SUBSAMPLE_ROWS);
    const sub = subsample(prep, stride);
    const subTotal = sub.w.reduce((a, b) => a + b, 0);
    // A class the subsample misses (a rare class) would send the subsample fit off to infinity.
    const subClassWeight = new Float64Array(K);
    for (let r = 0; r < sub.n; r++) subClassWeight[sub.y[r]] += sub.w[r];
    const everyClass = classWeight.every((v, k) => !(v > 0) || subClassWeight[k] >= WARM_START_MIN_CLASS_ROWS);
    const subOpts = {
      ...opts,
      tolerance: Math.max(opts.tolerance, WARM_START_TOLERANCE),
      maxIterations: Math.min(opts.maxIterations, WARM_START_MAX_ITERATIONS),
    };
    const warm = everyClass ? runNewton(sub, K, equationClassIdx, symmetric, subTotal, subOpts, start, null, false) : null;
    if (warm && warm.converged && warm.likelihoodInformation && warm.theta.every(Number.isFinite) && !(warm.finalStep && maxAbs(warm.finalStep) > 1)) {
      // The subsample's information, scaled up to the full weight, stands in for the full-data
      // information at the warm start (they differ by about 1/sqrt(subsample size)).
      const scaled = warm.likelihoodInformation.map((v) => (v * total) / subTotal);
      return runNewton(prep, K, equationClassIdx, symmetric, total, opts, warm.theta, scaled);
    }
  }
  return runNewton(prep, K, equationClassIdx, symmetric, total, opts, start, null);
}

/** See the aliasing check in fitMulticlassModel: every WARM_START_SUBSAMPLE_ROWS-th row of a large fit. */
function rankProvedOnSubsample(prep: Prepared): boolean {
  if (prep.n < WARM_START_MIN_ROWS) return false;
  let total = 0;
  for (let r = 0; r < prep.n; r++) total += prep.w[r];
  const sub = subsample(prep, Math.floor(prep.n / WARM_START_SUBSAMPLE_ROWS));
  const q = sub.z.length;
  const gram = weightedCrossProduct(sub.z, sub.w, sub.n, new Float64Array(q * q));
  return subsampleProvesFullRank(gram, q, new Float64Array(q).fill(total), RANK_TOLERANCE);
}

/** Rows at which the warm start from a subsample begins to pay (below it a full fit is quick). */
const WARM_START_MIN_ROWS = 40000;
/** Target size of the warm-start subsample. */
const WARM_START_SUBSAMPLE_ROWS = 5000;
/** The warm start is skipped when the subsample has fewer rows (weight) than this of some class. */
const WARM_START_MIN_CLASS_ROWS = 10;
/** Iteration cap of the warm-start fit (a well-posed fit needs well under 10). */
const WARM_START_MAX_ITERATIONS = 25;
/**
 * Convergence tolerance of the warm-start fit. Its estimate only needs to be close: it differs
 * from the full-data estimate by the subsample's sampling error (about sqrt(n / subsample size)
 * full-data standard errors per coefficient), far more than what a tighter tolerance would remove.
 */
const WARM_START_TOLERANCE = 1e-4;
/**
 * Once an iteration changes the deviance by less than this (relative), the parameters are close
 * enough that the information barely changes from step to step: later steps reuse the last
 * information matrix (chord / simplified Newton, Kelley 2003, ch. 2; with the secant correction
 * described in the file header), which costs one pass for the score instead of the O(n E^2 p^2)
 * information. The covariance and the separation check always use the information at the estimate.
 */
const REUSE_INFORMATION_BELOW = 1e-6;
/**
 * Reuse is only worth it (and only used) when one information pass is expensive: n q^2 E^2 / 2 above
 * this many multiply-adds. Smaller fits take plain Newton-Raphson steps throughout.
 */
const REUSE_MIN_WORK = 2e7;
/** Newton decrement required, besides the deviance rule, when the information is being reused. */
const REUSE_DECREMENT = 1e-8;
/**
 * Relative rounding allowance of the objective (a sum over all rows) when accepting the final
 * polishing step, whose true effect on the objective is far below rounding.
 */
const POLISH_SLACK = 1e-11;
/** At most this many steps in a row reuse one information matrix before it is recomputed. */
const MAX_REUSED_STEPS = 8;

/**
 * BFGS update of an inverse-Hessian approximation B in place (Nocedal & Wright 2006, eq. 6.17):
 * B <- B + ((s'y + y'By) / (s'y)^2) s s' - (B y s' + s y' B) / (s'y). Skipped when the curvature
 * s'y is not clearly positive (B then stays positive definite).
 */
function bfgsInverseUpdate(B: Float64Array, M: number, s: Float64Array, y: Float64Array): void {
  let sy = 0;
  let ss = 0;
  let yy = 0;
  for (let r = 0; r < M; r++) {
    sy += s[r] * y[r];
    ss += s[r] * s[r];
    yy += y[r] * y[r];
  }
  if (!(sy > 1e-12 * Math.sqrt(ss * yy))) return;
  const By = multiplyVector(B, M, y);
  let yBy = 0;
  for (let r = 0; r < M; r++) yBy += y[r] * By[r];
  const a = (sy + yBy) / (sy * sy);
  for (let i = 0; i < M; i++) {
    for (let j = i; j < M; j++) {
      const v = B[i * M + j] + a * s[i] * s[j] - (By[i] * s[j] + s[i] * By[j]) / sy;
      B[i * M + j] = v;
      B[j * M + i] = v;
    }
  }
}

function maxAbs(a: Float64Array): number {
  let m = 0;
  for (const v of a) m = Math.max(m, Math.abs(v));
  return m;
}

/** Every stride-th entry of a column. */
function pickEvery(a: Float64Array, stride: number): Float64Array {
  const m = Math.floor((a.length - 1) / stride) + 1;
  const out = new Float64Array(m);
  for (let r = 0; r < m; r++) out[r] = a[r * stride];
  return out;
}

/**
 * Every stride-th row. The result is written out field by field in the shape of prepare's (not
 * spread and overridden): V8 may collect the map of a spread-and-overridden object between fits,
 * which discards the optimized code of the kernels that saw it (a "weak objects" deoptimization).
 */
function subsample(prep: Prepared, stride: number): Prepared {
  const m = Math.floor((prep.n - 1) / stride) + 1;
  const y = new Int32Array(m);
  const rowIndex = new Int32Array(m);
  for (let r = 0; r < m; r++) {
    y[r] = prep.y[r * stride];
    rowIndex[r] = prep.rowIndex[r * stride];
  }
  const z: Float64Array[] = [];
  for (let j = 0; j < prep.z.length; j++) z.push(pickEvery(prep.z[j], stride));
  return {
    n: m,
    rowIndex,
    w: pickEvery(prep.w, stride),
    y,
    z,
    termOfColumn: prep.termOfColumn,
    centre: prep.centre,
    scale: prep.scale,
    penaltyWeight: prep.penaltyWeight,
  };
}

function runNewton(
  prep: Prepared,
  K: number,
  equationClassIdx: readonly number[],
  symmetric: boolean,
  total: number,
  opts: ResolvedOptions,
  start: Float64Array,
  startInformation: Float64Array | null,
  requireDecrement = true,
): NewtonResult {
  const warmStarted = startInformation !== null;
  const kernel = new SoftmaxKernel(prep, K, equationClassIdx, symmetric);
  const { q, E } = kernel;
  // Simplified Newton (reuse of the information) only for expensive passes; after a warm start the
  // information at the start is already close to the one at the optimum.
  const reuseAllowed = prep.n * q * q * kernel.pairs >= REUSE_MIN_WORK;
  const M = E * q;
  const d = prep.penaltyWeight;
  // Convergence floor (0.1 in glm.fit) in units of the mean case weight, so that rescaling every
  // weight changes nothing (the binary fit's rule, glm/newton.ts).
  let weightSum = 0;
  for (let i = 0; i < prep.n; i++) weightSum += prep.w[i];
  const floor = 0.1 * (prep.n > 0 && weightSum > 0 ? weightSum / prep.n : 1);
  // Symmetric form: the likelihood is flat along "add c to every intercept"; the side condition
  // sum_k a_k = 0 is imposed through (coupling / 2) (sum_k a_k)^2, zero at the solution.
  const coupling = symmetric && opts.intercept ? total / K : 0;

  const penaltyOf = (theta: Float64Array): number => {
    let s = 0;
    let sumA = 0;
    for (let e = 0; e < E; e++) {
      for (let j = 0; j < q; j++) s += d[j] * theta[e * q + j] * theta[e * q + j];
      if (coupling) sumA += theta[e * q];
    }
    return 0.5 * s + 0.5 * coupling * sumA * sumA;
  };
  const objectiveOf = (ll: number, theta: Float64Array) => -ll + penaltyOf(theta);

  const info = new Float64Array(M * M);
  const scoreP = new Float64Array(M);
  const trial = new Float64Array(M);
  const theta = Float64Array.from(start);

  /**
   * Penalized score at th (from the kernel's last score); the information too when `withInfo`
   * (from the kernel's blocks, or from `given`, a likelihood information computed elsewhere).
   */
  const penalizedSystem = (th: Float64Array, withInfo: boolean, given: Float64Array | null = null): void => {
    if (withInfo) {
      if (given) info.set(given);
      else kernel.information(info);
    }
    let sumA = 0;
    if (coupling) for (let e = 0; e < E; e++) sumA += th[e * q];
    for (let e = 0; e < E; e++) {
      for (let j = 0; j < q; j++) {
        const r = e * q + j;
        if (withInfo) info[r * M + r] += d[j];
        scoreP[r] = kernel.score[r] - d[j] * th[r];
      }
      if (coupling) {
        scoreP[e * q] -= coupling * sumA;
        if (withInfo) for (let f = 0; f < E; f++) info[e * q * M + f * q] += coupling;
      }
    }
  };

  let logLik = kernel.evaluate(theta, startInformation ? "score" : "information");
  // True while the kernel's information blocks are the ones at theta (so that pass can be skipped).
  let informationAtTheta = !startInformation;
  let objective = objectiveOf(logLik, theta);
  penalizedSystem(theta, true, startInformation);
  let chol = cholesky(info, M);
  let chordSteps = 0;
  let iterations = 0;
  let converged = false;
  let lastChange = NaN;
  let lastStep: Float64Array | null = null;

  // While the information is reused, its inverse gets a secant (BFGS) correction after every step
  // (Nocedal & Wright, Numerical Optimization, 2nd ed., 2006, §6.1), which turns the linear
  // convergence of the simplified Newton steps superlinear; null while the information is fresh.
  let inverseApprox: Float64Array | null = null;
  const solveStep = (): Float64Array =>
    inverseApprox ? multiplyVector(inverseApprox, M, scoreP) : choleskySolve(chol.factor, M, scoreP);
  const scoreBefore = new Float64Array(M);
  // Newton decrement g' H^-1 g at the previous iterate (for the prediction below).
  let previousDecrement = NaN;

  while (iterations < opts.maxIterations && chol.ok) {
    const delta = solveStep();
    scoreBefore.set(scoreP);
    let decrementNow = 0;
    for (let r = 0; r < M; r++) decrementNow += delta[r] * scoreP[r];
    // The full step is nearly always accepted. When the information will be needed at the trial
    // point anyway (a fresh-information step, or the last step of an information-reusing run, after
    // which the final information is computed there), the trial is evaluated with it at once: one
    // pass over the rows instead of two. The prediction only chooses what the pass computes; the
    // iterates are those of the plain method.
    const contraction = previousDecrement > 0 ? decrementNow / previousDecrement : 1;
    const predictedLast =
      requireDecrement &&
      decrementNow * contraction < REUSE_DECREMENT / 4 &&
      decrementNow < (opts.tolerance / 4) * (floor + 2 * Math.abs(objective));
    const predictedFresh =
      !reuseAllowed || chordSteps >= MAX_REUSED_STEPS || (!warmStarted && !(lastChange < REUSE_INFORMATION_BELOW));
    const wantInformation = predictedFresh || predictedLast;
    previousDecrement = decrementNow;
    // Step halving: shrink the step until the penalized deviance does not increase.
    let step = 1;
    let newLl = NaN;
    let newObj = NaN;
    const slack = 1e-12 * (1 + Math.abs(objective));
    for (let h = 0; h <= MAX_HALVINGS; h++) {
      for (let r = 0; r < M; r++) trial[r] = theta[r] + step * delta[r];
      // The score comes along cheaply; it is the one needed next when the information is reused.
      const mode = h === 0 && wantInformation ? "information" : reuseAllowed ? "score" : "value";
      newLl = kernel.evaluate(trial, mode);
      informationAtTheta = mode === "information";
      newObj = objectiveOf(newLl, trial);
      if (Number.isFinite(newObj) && newObj <= objective + slack) break;
      step /= 2;
    }
    if (!Number.isFinite(newObj) || newObj > objective + slack) {
      informationAtTheta = false;
      break;
    }
    iterations++;
    lastStep = new Float64Array(M);
    for (let r = 0; r < M; r++) lastStep[r] = step * delta[r];
    theta.set(trial);
    // Convergence rule of R's glm.fit on the (penalized) deviance.
    lastChange = Math.abs(2 * newObj - 2 * objective) / (floor + Math.abs(2 * newObj));
    logLik = newLl;
    objective = newObj;
    if (lastChange < opts.tolerance) {
      if (!reuseAllowed) {
        converged = true;
        break;
      }
      // Reusing the information converges only linearly, so the deviance rule can stop a few
      // thousandths of a standard error short; also ask for a Newton decrement g' H^-1 g (about
      // the squared distance to the maximum in standard-error units) below REUSE_DECREMENT.
      // kernel.score is the score at theta here (the accepted trial was evaluated with it).
      // A warm-start fit (requireDecrement false) only needs to be close: the deviance rule is enough.
      if (!requireDecrement) {
        converged = true;
        break;
      }
      penalizedSystem(theta, false);
      const next = solveStep();
      let decrement = 0;
      for (let r = 0; r < M; r++) decrement += next[r] * scoreP[r];
      if (decrement < REUSE_DECREMENT) {
        converged = true;
        break;
      }
    }
    // A halved step means the quadratic model was poor: always refresh the information then.
    // A long run of reused-information steps means the stand-in is poor: refresh it too. When the
    // information at theta is at hand already, it is used (an exact Newton step costs no more then).
    const fresh =
      informationAtTheta ||
      !reuseAllowed ||
      step < 1 ||
      chordSteps >= MAX_REUSED_STEPS ||
      (!warmStarted && lastChange >= REUSE_INFORMATION_BELOW);
    chordSteps = fresh ? 0 : chordSteps + 1;
    // Not fresh: the kernel's score is the one of the accepted trial point (evaluated last).
    if (fresh) {
      if (!informationAtTheta) kernel.evaluate(theta, "information");
      informationAtTheta = true;
      penalizedSystem(theta, true);
      chol = cholesky(info, M);
      inverseApprox = null;
    } else {
      penalizedSystem(theta, false);
      if (!inverseApprox) inverseApprox = choleskyInverse(chol.factor, M);
      // Secant pair: the information maps the step s onto the fall of the score, y = g_old - g_new.
      for (let r = 0; r < M; r++) scoreBefore[r] -= scoreP[r];
      bfgsInverseUpdate(inverseApprox, M, lastStep, scoreBefore);
    }
  }
  // Information, its inverse and one more Newton step at the final theta (the last pass computed
  // them already when informationAtTheta: the same numbers).
  if (!informationAtTheta) {
    logLik = kernel.evaluate(theta, "information");
    objective = objectiveOf(logLik, theta);
  }
  const likelihoodInformation = kernel.information(new Float64Array(M * M));
  penalizedSystem(theta, true, likelihoodInformation);
  chol = cholesky(info, M);
  let inverseInformation: Float64Array | null = null;
  let finalStep: Float64Array | null = null;
  if (chol.ok) {
    inverseInformation = choleskyInverse(chol.factor, M);
    finalStep = choleskySolve(chol.factor, M, scoreP);
    // Polish a converged estimate with this last full Newton step: the deviance rule can stop a
    // linearly converging (information-reusing) run a little short of the maximum; one Newton step
    // from there lands on it to rounding. The covariance stays the inverse information just computed
    // (the step is tiny, as in R's glm, whose covariance uses the weights of its previous iterate).
    if (converged) {
      for (let r = 0; r < M; r++) trial[r] = theta[r] + finalStep[r];
      // Predicted gain of the step, g' H^-1 g / 2 (exact for the quadratic model; the cubic term is
      // negligible this close to the maximum). When a pass over the rows is expensive and the gain
      // is below what the check below can resolve (the rounding allowance), the step is taken
      // without that pass, and the objective is the model's.
      let gain = 0;
      for (let r = 0; r < M; r++) gain += 0.5 * finalStep[r] * scoreP[r];
      const allowance = POLISH_SLACK * (1 + Math.abs(objective));
      if (reuseAllowed && gain >= 0 && gain <= allowance) {
        theta.set(trial);
        objective -= gain;
        logLik = penaltyOf(theta) - objective;
        return { theta, likelihoodInformation, logLik, objective, iterations, converged, lastChange, inverseInformation, finalStep, lastStep };
      }
      const ll = kernel.evaluate(trial, "value");
      const obj = objectiveOf(ll, trial);
      // Near the maximum the change is below the rounding of a sum over all rows: allow for it.
      if (Number.isFinite(obj) && obj <= objective + allowance) {
        theta.set(trial);
        logLik = ll;
        objective = obj;
      }
    }
  }
  return { theta, likelihoodInformation, logLik, objective, iterations, converged, lastChange, inverseInformation, finalStep, lastStep };
}

function mean(values: number[]): number {
  return values.reduce((s, v) => s + v, 0) / values.length;
}

// ================================================================================================
// Separation
// ================================================================================================

/**
 * Certify separation from a diverging Newton direction.
 *
 * Method. The multinomial maximum-likelihood estimate fails to exist exactly when there is a
 * non-zero direction d = (d_1..d_K) of the linear predictors (d_ref = 0 in the reference form) with
 * (d_c - d_k)' x_i >= 0 for every row i of class c and every class k: moving along d never lowers
 * the likelihood and raises it for the rows with a strict inequality (Albert & Anderson, Biometrika
 * 71 (1984) 1-10, complete and quasi-complete separation; Lesaffre & Albert, JRSS B 51 (1989)
 * 109-116 for the multinomial case). When such a direction exists, Newton-Raphson keeps stepping
 * along it: at the last iterate the Newton step (or the last step taken) is a candidate d whose
 * finite components are negligible. We accept the candidate only if (a) it moves some linear
 * predictor by at least {@link MIN_DIVERGING_MARGIN} (a step at a finite optimum is far smaller at
 * convergence) and (b) every margin (d_c - d_k)' x_i is >= -{@link MARGIN_SHARE} of the largest
 * (a certificate up to rounding). Rows whose margins are all strictly positive are the separated
 * rows; a class is separated from another when every row of each is strictly on its own side.
 * Columns named are those whose standardized direction component is at least
 * {@link DIRECTION_COLUMN_SHARE} of the largest.
 * @returns the diagnostic (severity "error"), or null when the candidate is not a certificate
 */
function findSeparation(
  prep: Prepared,
  K: number,
  equationClassIdx: readonly number[],
  direction: Float64Array,
  classes: readonly string[],
  terms: readonly string[],
): Diagnostic | null {
  const q = prep.z.length;
  const { n, z, y } = prep;
  // Direction per class (zero for the reference class in the reference form).
  const dk = Array.from({ length: K }, () => new Float64Array(q));
  equationClassIdx.forEach((k, e) => dk[k].set(direction.subarray(e * q, e * q + q)));
  // Cheap bound first: |d_k' z_i| <= sum_j |d_kj| max_i |z_ij|, and a margin is a difference of two
  // such terms. The step at a finite optimum cannot reach MIN_DIVERGING_MARGIN: skip the row pass.
  const zmax = new Float64Array(q);
  for (let j = 0; j < q; j++) {
    const zj = z[j];
    let m = 0;
    for (let i = 0; i < n; i++) {
      const a = Math.abs(zj[i]);
      if (a > m) m = a;
    }
    zmax[j] = m;
  }
  let bound = 0;
  for (let k = 0; k < K; k++) {
    let b = 0;
    for (let j = 0; j < q; j++) b += Math.abs(dk[k][j]) * zmax[j];
    bound = Math.max(bound, b);
  }
  if (!(2 * bound >= MIN_DIVERGING_MARGIN)) return null;
  const u = new Float64Array(K);
  // Pass 1: largest margin and smallest margin.
  let maxMargin = 0;
  let minMargin = Infinity;
  const margins = new Float64Array(n * K);
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < K; k++) {
      let s = 0;
      for (let j = 0; j < q; j++) s += dk[k][j] * z[j][i];
      u[k] = s;
    }
    const c = y[i];
    for (let k = 0; k < K; k++) {
      if (k === c) continue;
      const m = u[c] - u[k];
      margins[i * K + k] = m;
      if (m > maxMargin) maxMargin = m;
      if (m < minMargin) minMargin = m;
    }
  }
  if (!(maxMargin >= MIN_DIVERGING_MARGIN) || minMargin < -MARGIN_SHARE * maxMargin) return null;
  const strict = MARGIN_SHARE * maxMargin;
  // A row is involved when its probability of some other class k is driven to 0 along d
  // (margin against k strictly positive); pairSide[a*K+b] = every row of a is strictly past b.
  const involvedRows: number[] = [];
  const rowClasses = new Set<number>();
  const fromClasses = new Set<number>();
  const pairSide = new Uint8Array(K * K).fill(1);
  const classSeen = new Uint8Array(K);
  for (let i = 0; i < n; i++) {
    const c = y[i];
    classSeen[c] = 1;
    let any = false;
    for (let k = 0; k < K; k++) {
      if (k === c) continue;
      if (margins[i * K + k] > strict) {
        any = true;
        fromClasses.add(k);
      } else {
        pairSide[c * K + k] = 0;
      }
    }
    if (any) {
      involvedRows.push(prep.rowIndex[i]);
      rowClasses.add(c);
    }
  }
  if (involvedRows.length === 0) return null;
  const pairSeparated = (a: number, b: number) => classSeen[a] && classSeen[b] && pairSide[a * K + b] === 1 && pairSide[b * K + a] === 1;
  const wholeClasses: number[] = [];
  for (let a = 0; a < K; a++) {
    let all = classSeen[a] === 1;
    for (let b = 0; b < K && all; b++) if (b !== a && classSeen[b] && !pairSeparated(a, b)) all = false;
    if (all) wholeClasses.push(a);
  }
  const quoted = (ks: Iterable<number>) => listNames(Array.from(ks).sort((a, b) => a - b).map((k) => classes[k]), K);
  const parts: string[] = [];
  const seenCount = classSeen.reduce((t, v) => t + v, 0);
  if (wholeClasses.length === seenCount) parts.push(`every class (${quoted(wholeClasses)}) from every other`);
  else for (const a of wholeClasses) parts.push(`class "${classes[a]}" (from every other class)`);
  for (let a = 0; a < K; a++) {
    for (let b = a + 1; b < K; b++) {
      if (wholeClasses.includes(a) || wholeClasses.includes(b)) continue;
      if (pairSeparated(a, b)) parts.push(`classes "${classes[a]}" and "${classes[b]}"`);
    }
  }
  // Rows named: those of the separated classes (whole classes and separated pairs); without any,
  // (quasi-complete separation) the rows pushed away from some class.
  const namedClasses = new Set<number>(wholeClasses);
  for (let a = 0; a < K; a++) {
    for (let b = a + 1; b < K; b++) {
      if (!wholeClasses.includes(a) && !wholeClasses.includes(b) && pairSeparated(a, b)) {
        namedClasses.add(a);
        namedClasses.add(b);
      }
    }
  }
  let namedRows = involvedRows;
  if (parts.length === 0) {
    // Quasi-complete separation: some rows (not whole classes) are pushed away from some classes.
    parts.push(`some rows of ${quoted(rowClasses)} (from ${quoted(fromClasses)})`);
  } else {
    namedRows = [];
    for (let i = 0; i < n; i++) if (namedClasses.has(y[i])) namedRows.push(prep.rowIndex[i]);
  }
  // Columns of the direction (standardized scale), intercept excluded.
  let maxComp = 0;
  const comp = new Float64Array(q);
  for (let j = 0; j < q; j++) {
    if (terms[prep.termOfColumn[j]] === INTERCEPT_TERM) continue;
    for (let k = 0; k < K; k++) {
      for (let l = 0; l < K; l++) comp[j] = Math.max(comp[j], Math.abs(dk[k][j] - dk[l][j]));
    }
    maxComp = Math.max(maxComp, comp[j]);
  }
  const columns: string[] = [];
  for (let j = 0; j < q; j++) {
    if (terms[prep.termOfColumn[j]] === INTERCEPT_TERM) continue;
    if (comp[j] >= DIRECTION_COLUMN_SHARE * maxComp && comp[j] > 0) columns.push(terms[prep.termOfColumn[j]]);
  }
  const params = {
    separated: joinParts(parts),
    columns: columns.length > 0 ? listNames(columns) : "the intercept alone",
    count: namedRows.length,
    rows: exampleRows(namedRows),
  };
  return fitDiagnostic("CLASSES_SEPARATED", params, { columns, rows: namedRows });
}

function joinParts(parts: string[]): string {
  const s = parts.length <= 1 ? parts.join("") : `${parts.slice(0, -1).join(", ")} and ${parts[parts.length - 1]}`;
  return s.charAt(0).toUpperCase() + s.slice(1);
}

// ================================================================================================
// Results
// ================================================================================================

function toOriginalScale(
  prep: Prepared,
  newton: NewtonResult,
  E: number,
  pFull: number,
  intercept: boolean,
  penalized: boolean,
): { coefficients: Float64Array[]; covariance: Float64Array | null; standardErrors: Float64Array | null } {
  const q = prep.z.length;
  // b = T gamma per equation: slope_t = gamma_j / s_j; intercept = alpha - sum_j gamma_j c_j / s_j.
  const T = new Float64Array(pFull * q); // row = full term, column = internal column
  for (let j = 0; j < q; j++) {
    const t = prep.termOfColumn[j];
    if (intercept && t === 0) {
      T[0 * q + j] = 1;
      continue;
    }
    T[t * q + j] = 1 / prep.scale[j];
    if (intercept) T[0 * q + j] = -prep.centre[j] / prep.scale[j];
  }
  const estimable = new Array<boolean>(pFull).fill(false);
  for (const t of prep.termOfColumn) estimable[t] = true;
  const coefficients: Float64Array[] = [];
  for (let e = 0; e < E; e++) {
    const b = new Float64Array(pFull);
    for (let t = 0; t < pFull; t++) {
      if (!estimable[t]) {
        b[t] = NaN;
        continue;
      }
      let s = 0;
      for (let j = 0; j < q; j++) s += T[t * q + j] * newton.theta[e * q + j];
      b[t] = s;
    }
    coefficients.push(b);
  }
  if (penalized || !newton.inverseInformation) return { coefficients, covariance: null, standardErrors: null };
  const V = newton.inverseInformation;
  const Mq = E * q;
  const Mf = E * pFull;
  // Standard errors sqrt(T_t V_e T_t') taken as m sqrt(u' V_e u), u = T_t / m, m = max |T_t|: no
  // original-scale variance is formed, so columns scaled by 1e300 or 1e-300 (variances 1e-600 or
  // 1e600, beyond the double range) still get their standard errors and finite z and p.
  const standardErrors = new Float64Array(Mf).fill(NaN);
  const u = new Float64Array(q);
  for (let t = 0; t < pFull; t++) {
    if (!estimable[t]) continue;
    let m = 0;
    for (let j = 0; j < q; j++) m = Math.max(m, Math.abs(T[t * q + j]));
    if (m === 0) continue;
    for (let j = 0; j < q; j++) u[j] = T[t * q + j] / m;
    for (let e = 0; e < E; e++) {
      let quad = 0;
      for (let j = 0; j < q; j++) {
        if (u[j] === 0) continue;
        let acc = 0;
        for (let k = 0; k < q; k++) acc += V[(e * q + j) * Mq + e * q + k] * u[k];
        quad += u[j] * acc;
      }
      standardErrors[e * pFull + t] = quad >= 0 ? m * Math.sqrt(quad) : NaN;
    }
  }
  // cov = (I_E (x) T) V (I_E (x) T)'; rows/columns of aliased terms are NaN.
  const TV = new Float64Array(Mf * Mq);
  for (let e = 0; e < E; e++) {
    for (let t = 0; t < pFull; t++) {
      const row = (e * pFull + t) * Mq;
      for (let j = 0; j < q; j++) {
        const tj = T[t * q + j];
        if (tj === 0) continue;
        const vrow = (e * q + j) * Mq;
        for (let c = 0; c < Mq; c++) TV[row + c] += tj * V[vrow + c];
      }
    }
  }
  const cov = new Float64Array(Mf * Mf);
  for (let r = 0; r < Mf; r++) {
    const tr = r % pFull;
    for (let c = r; c < Mf; c++) {
      const tc = c % pFull;
      if (!estimable[tr] || !estimable[tc]) {
        cov[r * Mf + c] = NaN;
        continue;
      }
      const f = Math.floor(c / pFull);
      let s = 0;
      for (let j = 0; j < q; j++) {
        const tj = T[tc * q + j];
        if (tj !== 0) s += TV[r * Mq + f * q + j] * tj;
      }
      cov[r * Mf + c] = s;
    }
  }
  return { coefficients, covariance: mirrorUpper(cov, Mf), standardErrors };
}

/** What every result carries, failed or not. */
interface FitShell {
  classes: string[];
  referenceClass: string;
  form: "reference" | "symmetric";
  terms: string[];
  intercept: boolean;
  equationClasses: string[];
  level: number;
  penalized: boolean;
  penalty: number;
  rowsUsed: number;
  observations: number;
  nullLogLikelihood: number;
}

/** A result without estimates: every number NaN, the reason in `diagnostics` (severity "error"). */
function failedFit(
  shell: FitShell,
  aliased: boolean[],
  diagnostics: Diagnostic[],
  iterations: number,
  converged: boolean,
  logLikelihood = NaN,
): ModelFit {
  const p = shell.terms.length;
  const E = shell.equationClasses.length;
  const coefficients = Array.from({ length: E }, () => new Float64Array(p).fill(NaN));
  const table = buildCoefficientTable({
    terms: shell.terms,
    equationClasses: shell.equationClasses,
    coefficients,
    covariance: null,
    aliased,
    level: shell.level,
    penalized: shell.penalized,
  });
  return {
    kind: "multiclass",
    classes: [...shell.classes],
    referenceClass: shell.referenceClass,
    form: shell.form,
    terms: shell.terms,
    intercept: shell.intercept,
    coefficients,
    equationClasses: shell.equationClasses,
    covariance: null,
    table,
    level: shell.level,
    intervalMethod: "wald",
    aliased,
    penalized: shell.penalized,
    penalty: shell.penalty,
    biasReduced: false,
    logLikelihood,
    nullLogLikelihood: shell.nullLogLikelihood,
    deviance: -2 * logLikelihood,
    nullDeviance: -2 * shell.nullLogLikelihood,
    aic: NaN,
    bic: NaN,
    pseudoR2: NaN,
    lrTest: { statistic: NaN, df: NaN, p: NaN },
    parameters: 0,
    rowsUsed: shell.rowsUsed,
    observations: shell.observations,
    iterations,
    converged,
    diagnostics,
  };
}
