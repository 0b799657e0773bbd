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
 * Fitting: the one Newton-Raphson loop of the fits (glm/newton.ts, shared with the binary fit) on
 * the multinomial family (families/multinomial.ts), through glm/multinomialFit.ts: the full
 * information (all equations jointly), step halving and R's glm convergence rule
 * |dev - dev_old| / (0.1 w + |dev|) < tol (w the mean case weight), on internally centred and
 * scaled columns; coefficients and covariance are mapped back to the original scale. The softmax
 * subtracts the row maximum and the log-likelihood uses log-sum-exp, so no exponential overflows.
 * Information blocks I_kl = X' diag(w p_k (delta_kl - p_l)) X (Böhning, "Multinomial logistic
 * regression algorithm", Ann. Inst. Statist. Math. 44 (1992) 197-200) are summed by the kernels
 * (kernels/: JavaScript blocks, WebAssembly SIMD, and the plain reference they are tested against).
 *
 * Large data (speed): from 40,000 rows the iterations start from a fit on a systematic subsample
 * (the warm-start rule of glm/warmStart.ts, the binary fit's too), its information scaled up
 * standing in for the full-data one and refined by BFGS along each step, each step then costing a
 * score pass instead of an information pass; where an information pass is costly the loop saves
 * passes as its file comment describes ("pass economy"). The covariance is the inverse of an
 * exact full-data information at (or one tiny polishing step before) the estimate.
 *
 * Penalty convention (shared with the binary model): objective = -logLik + (lambda / 2) *
 * sum over equations and non-intercept terms of (s_j b_kj)^2, with s_j the population SD of column j
 * over the fitted rows (weighted by the case weights) for penaltyScale "standardized" (default), or 1
 * for "original". Intercepts are never penalized.
 *
 * Edge-case policy (each rule is repeated above the code that applies it):
 * - A row with a non-finite predictor or a negative class index (missing label) is skipped, and
 *   counted in a ROWS_SKIPPED warning; a row with weight 0 is left out silently (that is what 0 means).
 * - Aliased columns (1 - R^2 <= 1e-9 on the columns before them, weighted) are dropped, named, and
 *   reported with estimable = false and NaN numbers.
 * - A failed fit (separation, empty class, too few rows, a likelihood that is not finite) returns
 *   NaN numbers and an "error" diagnostic: diverged numbers are never presented as results. A fit
 *   stopped at the iteration cap keeps its estimate with a NOT_CONVERGED warning. Severities come
 *   from the one table of the catalogue (DIAGNOSTIC_SEVERITY in messages.ts), as in the binary fit.
 */

import {
  buildCoefficientTable,
  informationCriteria,
  INTERCEPT_TERM,
  likelihoodRatioTest,
  mcFaddenR2,
  penalizedNote,
} from "./inference";
import { invertSymmetric, mirrorUpper, rankRevealingCholesky, RANK_TOLERANCE, weightedCrossProduct } from "./linalg";
import { fitMultinomial } from "./glm/multinomialFit";
import { subsampleRankProof } from "./glm/warmStart";
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

/** What the fit reads from the Newton loop, on the internal scale. */
interface NewtonResult {
  theta: Float64Array;
  logLik: number;
  iterations: number;
  converged: boolean;
  lastChange: number;
  /** Inverse of the information at theta (unpenalized fits), or null when it is not positive definite. */
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
 *   ALIASED_COLUMNS, ROWS_SKIPPED and NOT_CONVERGED (warnings), PENALIZED_NO_P_VALUES (note), and as
 *   errors with NaN estimates EMPTY_CLASS, TOO_FEW_ROWS, LIKELIHOOD_NOT_FINITE and CLASSES_SEPARATED
 *   (unpenalized fits; the method, a certified diverging Newton direction, is described at
 *   findSeparation below); severities from DIAGNOSTIC_SEVERITY in messages.ts
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
  const newton = newtonRaphson(prep, K, equationClassIdx, symmetric, opts);

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
// Newton-Raphson: glm/multinomialFit.ts on the one loop of glm/newton.ts
// ================================================================================================

function newtonRaphson(prep: Prepared, K: number, equationClassIdx: readonly number[], symmetric: boolean, opts: ResolvedOptions): NewtonResult {
  const outcome = fitMultinomial({
    rows: prep.n,
    classOf: prep.y,
    weights: prep.w,
    classes: K,
    equationClasses: equationClassIdx,
    symmetric,
    columns: prep.z,
    intercept: opts.intercept,
    penalty: prep.penaltyWeight,
    maxIterations: opts.maxIterations,
    tolerance: opts.tolerance,
  });
  const M = equationClassIdx.length * prep.z.length;
  return {
    theta: outcome.theta,
    logLik: outcome.logLikelihood,
    iterations: outcome.iterations,
    converged: outcome.converged,
    lastChange: outcome.lastChange,
    // Penalized fits have no covariance (see toOriginalScale).
    inverseInformation: opts.penalty > 0 ? null : invertSymmetric(outcome.information, M),
    finalStep: outcome.finalStep,
    lastStep: outcome.lastStep,
  };
}

/**
 * See the aliasing check in fitMulticlassModel: the shared subsample of large fits
 * (glm/warmStart.ts) may prove every column independent. Every internal column has weighted sum of
 * squares `total` (centred and scaled to unit SD, or to unit root mean square without an
 * intercept; the intercept column is all ones).
 */
function rankProvedOnSubsample(prep: Prepared): boolean {
  let total = 0;
  for (let r = 0; r < prep.n; r++) total += prep.w[r];
  const q = prep.z.length;
  const design = { rows: prep.n, columns: prep.z, centre: null, scale: null };
  return subsampleRankProof(design, prep.w, null, new Float64Array(q).fill(total), RANK_TOLERANCE);
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
