/**
 * Binary logistic regression: fitBinaryModel.
 *
 * Model: P(y = 1 | x) = sigmoid(offset + b0 + x'b), maximum likelihood by Newton-Raphson (IRLS)
 * with step halving (see glm/newton.ts), optionally with an L2 penalty or Firth's bias
 * reduction. Columns are centred (when there is an intercept) and scaled to unit population
 * standard deviation inside the fit; coefficients and covariance are mapped back exactly by the
 * linear map b = T g (b_j = g_j / s_j, b0 = g0 - sum_j g_j m_j / s_j) and V_b = T V_g T'.
 *
 * Conventions
 * - Case weights are frequency weights: weight 2 is the same as the row twice. Zero weight: the row
 *   is left out of the fit (it can still be scored).
 * - Grouped data (options.trials): y counts successes out of trials. The log-likelihood includes
 *   the binomial coefficient, sum_i w_i [log C(t_i, y_i) + y_i log p_i + (t_i - y_i) log(1 - p_i)],
 *   as R's glm does in its AIC; the deviance is twice the gap to the saturated model, so grouped
 *   and row-by-row input give the same coefficients and standard errors but different deviances
 *   and AIC (as in R).
 * - observations = sum of case weights over the rows used (for grouped data: the number of groups
 *   when weights are 1, as R's nobs); BIC = -2 logLik + k log(observations). With non-integer or
 *   unequal case weights this differs from R's BIC, which counts rows with non-zero weight.
 * - AIC = -2 logLik + 2k with k = number of estimated (non-aliased) coefficients, as R's glm.
 * - Penalized (ridge) fits: objective -l(b) + (lambda/2) sum_j (s_j b_j)^2 over non-intercept terms,
 *   s_j the population standard deviation of column j (penaltyScale "standardized", weighted by
 *   w_i t_i) or 1 ("original"); no covariance, no p-values (PENALIZED_NO_P_VALUES note).
 * - Firth fits (biasReduction): estimates maximize l(b) + (1/2) log det I(b); standard errors from
 *   I(b*)^{-1} at the estimate with Wald z, p and intervals (as brglm2's summary for "AS_mean");
 *   intervalMethod "profile" gives profile penalized-likelihood intervals instead (as Heinze &
 *   Schemper 2002 propose; see profile.ts).
 *   logLikelihood is the ordinary log-likelihood at the Firth estimate; nullLogLikelihood the
 *   ordinary intercept-only maximum; lrTest is the penalized-likelihood ratio of the fit against the
 *   same penalized likelihood maximized with every non-intercept coefficient held at 0 (the
 *   penalty still computed from the full design, so the statistic does not depend on units),
 *   the penalized likelihood ratio test of Heinze & Schemper (2002).
 * - Missing values: NaN in the response, a predictor, a weight, the offset or the trials marks the
 *   row missing; it is skipped and counted in a ROWS_SKIPPED warning. Infinite values are invalid.
 * - Large data: from WARM_START_MIN_ROWS rows the Newton-Raphson iterations start from a fit on a
 *   systematic subsample (the one rule of glm/warmStart.ts, shared with the multi-class fit); from
 *   SPARSE_MIN_ROWS rows, mostly-zero columns (such as text-level indicators) enter the
 *   information matrix through their non-zero rows. Neither changes the estimate, covariance
 *   (always from the information at the estimate) or log-likelihood beyond rounding and the
 *   convergence rule; `iterations` then counts the steps with the subsample's information too.
 * - Aliasing: a column whose 1 - R^2 on the earlier kept columns (weighted by w t, after centring)
 *   is below ALIAS_TOLERANCE = 1e-9 is dropped and reported not estimable, like R's NA.
 * - Separation (unpenalized, non-Firth fits): when certified, the fit has no usable estimate: the
 *   coefficients, covariance and table numbers are NaN and an error diagnostic names the columns
 *   and rows; logLikelihood and deviance keep the supremum the iterations approached.
 * References: McCullagh & Nelder (1989) ch. 4; Agresti (2013) ch. 5; Firth (1993); Heinze &
 * Schemper (2002); Albert & Anderson (1984).
 */

import { chiSquareSurvival } from "./distributions";
import {
  buildCoefficientTable,
  INTERCEPT_TERM,
  informationCriteria,
  likelihoodRatioTest,
  mcFaddenR2,
  penalizedNote,
  type Interval,
} from "./inference";
import { congruence, invertSymmetric, rankRevealingCholesky, subMatrix, type RankRevealingResult } from "./linalg";
import { binomialWarmStart, fitBinomial, fittingColumns, type BinomialProblem } from "./glm/binomialFit";
import { subsampleRankProof } from "./glm/warmStart";
import { createKernel } from "./kernels";
import type { KernelDesign } from "./kernels/types";
import { exampleRows, fitDiagnostic, listNames, problem, type FitDiagnosticCode } from "./messages";
import { logGamma } from "./numerics";
import { firthProfileIntervals, PROFILE_SEARCH_LIMIT, profileIntervals } from "./profile";
import { responseSides, separationFromIterates, univariateSeparation, type BinaryResponse, type SeparationFinding } from "./separation";
import type { BinaryFitOptions, DesignMatrix, Diagnostic, ModelFit } from "./types";

/** Defaults of the fit options (see FitOptions in types.ts). */
export const BINARY_DEFAULTS = {
  intercept: true,
  penalty: 0,
  penaltyScale: "standardized" as const,
  biasReduction: false,
  level: 0.95,
  intervalMethod: "wald" as const,
  maxIterations: 100,
  tolerance: 1e-10,
};

/** Tolerance on 1 - R^2 of a column on the earlier ones below which it is called aliased. */
export const ALIAS_TOLERANCE = 1e-9;

/** Screened data of the rows that enter the fit (compacted). */
interface FitData {
  rows: number;
  /** Caller's row index of each compacted row. */
  rowIndex: Int32Array;
  columns: Float64Array[];
  successes: Float64Array;
  trials: Float64Array;
  weights: Float64Array;
  offset: Float64Array;
  grouped: boolean;
  skipped: number;
  skippedDetail: string;
}

function badOption(name: string, value: unknown, expected: string): never {
  throw problem("BAD_OPTION_VALUE", { name, value, expected });
}

/**
 * Standard errors on the original scale, sqrt((T V T')_tt) for the fitting-scale inverse information
 * V, computed as m_t sqrt(u' V u) with u = T_t / m_t and m_t = max |T_t|: no variance is formed on
 * the original scale, so a column scaled by 1e200 (variance 1e-400, which underflows to 0) still
 * gets its standard error (about 1e-200) and finite z and p. Aliased terms stay NaN.
 */
function originalScaleStandardErrors(T: Float64Array, V: Float64Array, k: number, kept: readonly number[], p: number): Float64Array {
  const se = new Float64Array(p).fill(NaN);
  const u = new Float64Array(k);
  for (let t = 0; t < k; t++) {
    let m = 0;
    for (let a = 0; a < k; a++) m = Math.max(m, Math.abs(T[t * k + a]));
    if (m === 0) continue;
    for (let a = 0; a < k; a++) u[a] = T[t * k + a] / m;
    let q = 0;
    for (let a = 0; a < k; a++) {
      if (u[a] === 0) continue;
      let s = 0;
      for (let b = 0; b < k; b++) s += V[a * k + b] * u[b];
      q += u[a] * s;
    }
    se[kept[t]] = q >= 0 ? m * Math.sqrt(q) : NaN;
  }
  return se;
}


/*
 * The helpers of screen are module functions rather than closures: optimized code that calls a
 * closure created per call depends on that closure object, and is discarded once a garbage
 * collection frees it, so the next fit would start its row loops unoptimized.
 */

function checkLength(arr: Float64Array | null | undefined, argument: string, n: number): void {
  if (arr && arr.length !== n) throw problem("RANGE_SHAPE_MISMATCH", { argument, got: arr.length, expectedArgument: "predictors", expected: n });
}

function countMissing(missingBy: Record<string, number>, what: string): void {
  missingBy[what] = (missingBy[what] ?? 0) + 1;
}

/** The used rows of a column (the column itself when every row is used). */
function compactRows(src: Float64Array, rowIndex: Int32Array, all: boolean): Float64Array {
  if (all) return src;
  const out = new Float64Array(rowIndex.length);
  for (let r = 0; r < rowIndex.length; r++) out[r] = src[rowIndex[r]];
  return out;
}

/** Validate shapes and values; throw problem(...) for invalid input; compact the usable rows. */
function screen(X: DesignMatrix, y: Float64Array, o: BinaryFitOptions): FitData {
  const n = X.rows;
  if (X.columns.length !== X.names.length) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument: "column names", got: X.names.length, expectedArgument: "predictor columns", expected: X.columns.length });
  }
  for (let j = 0; j < X.columns.length; j++) {
    if (X.columns[j].length !== n) {
      throw problem("RANGE_SHAPE_MISMATCH", { argument: `predictor ${X.names[j]}`, got: X.columns[j].length, expectedArgument: "the design", expected: n });
    }
  }
  checkLength(y, "response", n);
  checkLength(o.weights, "weights", n);
  checkLength(o.offset, "offset", n);
  checkLength(o.trials, "trials", n);
  const w = o.weights ?? null;
  const off = o.offset ?? null;
  const tr = o.trials ?? null;
  const keep = new Uint8Array(n);
  let used = 0;
  let skipped = 0;
  const missingBy: Record<string, number> = {};
  // Predictors column by column (cache-friendly): NaN = missing; an infinity is invalid input,
  // reported at the first such row.
  const missingX = new Uint8Array(n);
  let firstInf = -1;
  let firstInfCol = -1;
  for (let j = 0; j < X.columns.length; j++) {
    const col = X.columns[j];
    let count = 0;
    for (let i = 0; i < n; i++) {
      const v = col[i];
      if (v - v !== 0) {
        // NaN or +/-Infinity
        if (Number.isNaN(v)) {
          missingX[i] = 1;
          count++;
        } else if (firstInf < 0 || i < firstInf) {
          firstInf = i;
          firstInfCol = j;
        }
      }
    }
    if (count > 0) missingBy[X.names[j]] = count;
  }
  if (firstInf >= 0) {
    throw problem("NOT_FINITE_VALUE", { argument: "predictor", row: firstInf + 1, column: X.names[firstInfCol], value: X.columns[firstInfCol][firstInf] });
  }
  for (let i = 0; i < n; i++) {
    let missing = missingX[i] === 1;
    const yi = y[i];
    if (Number.isNaN(yi)) {
      missing = true;
      countMissing(missingBy, "response");
    }
    if (w) {
      const wi = w[i];
      if (Number.isNaN(wi)) {
        missing = true;
        countMissing(missingBy, "weights");
      } else if (!(wi >= 0) || !Number.isFinite(wi)) {
        throw problem("BAD_WEIGHT", { row: i + 1, value: wi });
      }
    }
    if (off) {
      const v = off[i];
      if (Number.isNaN(v)) {
        missing = true;
        countMissing(missingBy, "offset");
      } else if (!Number.isFinite(v)) {
        throw problem("NOT_FINITE_VALUE", { argument: "offset", row: i + 1, column: "offset", value: v });
      }
    }
    if (tr) {
      const t = tr[i];
      if (Number.isNaN(t)) {
        missing = true;
        countMissing(missingBy, "trials");
      } else if (!(t >= 0) || !Number.isFinite(t) || (!Number.isNaN(yi) && !(yi >= 0 && yi <= t))) {
        throw problem("BAD_TRIALS", { row: i + 1, successes: yi, trials: t });
      }
    } else if (!Number.isNaN(yi) && yi !== 0 && yi !== 1) {
      throw problem("BAD_RESPONSE", { row: i + 1, value: yi });
    }
    if (missing) {
      skipped++;
      continue;
    }
    if ((w && w[i] === 0) || (tr && tr[i] === 0)) continue;
    keep[i] = 1;
    used++;
  }
  const rowIndex = new Int32Array(used);
  let r = 0;
  for (let i = 0; i < n; i++) if (keep[i]) rowIndex[r++] = i;
  // Compact column by column; when every row is used the caller's arrays are shared (never written).
  const all = used === n;
  const columns: Float64Array[] = [];
  for (let j = 0; j < X.columns.length; j++) columns.push(compactRows(X.columns[j], rowIndex, all));
  const successes = compactRows(y, rowIndex, all);
  const trials = tr ? compactRows(tr, rowIndex, all) : new Float64Array(used).fill(1);
  const weights = w ? compactRows(w, rowIndex, all) : new Float64Array(used).fill(1);
  const offset = off ? compactRows(off, rowIndex, all) : new Float64Array(used);
  const skippedDetail = Object.entries(missingBy)
    .map(([k, v]) => `${k}: ${v}`)
    .join(", ");
  return { rows: used, rowIndex, columns, successes, trials, weights, offset, grouped: !!tr, skipped, skippedDetail };
}

function validateOptions(o: BinaryFitOptions): Required<Omit<BinaryFitOptions, "weights" | "offset" | "trials">> {
  const intercept = o.intercept ?? BINARY_DEFAULTS.intercept;
  const penalty = o.penalty ?? BINARY_DEFAULTS.penalty;
  if (!(penalty >= 0) || !Number.isFinite(penalty)) badOption("penalty", penalty, "Use a number of 0 or more.");
  const penaltyScale = o.penaltyScale ?? BINARY_DEFAULTS.penaltyScale;
  if (penaltyScale !== "standardized" && penaltyScale !== "original") badOption("penaltyScale", penaltyScale, 'Use "standardized" or "original".');
  const level = o.level ?? BINARY_DEFAULTS.level;
  if (!(level > 0 && level < 1)) badOption("level", level, "Use a number between 0 and 1, such as 0.95.");
  const intervalMethod = o.intervalMethod ?? BINARY_DEFAULTS.intervalMethod;
  if (intervalMethod !== "wald" && intervalMethod !== "profile") badOption("intervalMethod", intervalMethod, 'Use "wald" or "profile".');
  const maxIterations = o.maxIterations ?? BINARY_DEFAULTS.maxIterations;
  if (!(Number.isInteger(maxIterations) && maxIterations >= 1)) badOption("maxIterations", maxIterations, "Use a whole number of 1 or more.");
  const tolerance = o.tolerance ?? BINARY_DEFAULTS.tolerance;
  if (!(tolerance > 0 && tolerance < 1)) badOption("tolerance", tolerance, "Use a small positive number such as 1e-10.");
  const biasReduction = o.biasReduction ?? BINARY_DEFAULTS.biasReduction;
  return { intercept, penalty, penaltyScale, level, intervalMethod, maxIterations, tolerance, biasReduction };
}

/**
 * Weighted moments of one column for centring and scaling: big = max|x| (1 for an all-zero
 * column), m = weighted mean of x, and v, ms = weighted sums of squares about the mean and about 0
 * of x / big. Usually one pass (the passes over the design dominate the fit's time, and this loop
 * is bound by memory, not arithmetic): sums of d = x - x_0 and d^2 give the mean and
 * v = sum a d^2 - (sum a d)^2 / sum a (the shifted-data formula; Chan, Golub & LeVeque, "Algorithms
 * for computing the sample variance", Amer. Statist. 37, 1983), accepted when its cancellation
 * loses at most four digits (sum a d^2 <= 1e4 v) and big lies in [MOMENT_SAFE_MIN,
 * MOMENT_SAFE_MAX] (no square or sum can overflow or underflow there). Otherwise two passes on
 * x / big (the mean, then the squares about it), so that neither 1e200 nor 1e-200 overflows or
 * underflows when squared. A function of its own so that V8 optimizes these row loops on their own.
 */
function columnMoments(x: Float64Array, a: Float64Array, sumA: number, n: number): { big: number; m: number; v: number; ms: number } {
  const shift = n > 0 ? x[0] : 0;
  let big = 0;
  let d1 = 0;
  let d2 = 0;
  let sq = 0;
  for (let i = 0; i < n; i++) {
    const xi = x[i];
    big = Math.max(big, Math.abs(xi));
    const d = xi - shift;
    const ad = a[i] * d;
    d1 += ad;
    d2 += ad * d;
    sq += a[i] * xi * xi;
  }
  if (!(big > 0)) big = 1;
  if (big >= MOMENT_SAFE_MIN && big <= MOMENT_SAFE_MAX) {
    const md = d1 / sumA;
    const v = d2 - d1 * md;
    if (d2 <= MOMENT_MAX_CANCELLATION * v || d2 === 0) {
      const big2 = big * big;
      return { big, m: shift + md, v: Math.max(v, 0) / big2, ms: sq / big2 };
    }
  }
  // Multiply by reciprocals (cheaper than dividing) unless the reciprocal would overflow.
  const invBig = 1 / big;
  const useInv = Number.isFinite(invBig);
  let m = 0;
  for (let i = 0; i < n; i++) m += a[i] * (useInv ? x[i] * invBig : x[i] / big);
  m /= sumA;
  let v = 0;
  let ms = 0;
  for (let i = 0; i < n; i++) {
    const u = useInv ? x[i] * invBig : x[i] / big;
    v += a[i] * (u - m) * (u - m);
    ms += a[i] * u * u;
  }
  return { big, m: m * big, v, ms };
}

/** Largest fitting value |x - centre| / scale the robust refit allows (its square and sums of them stay finite). */
const ROBUST_MAX_FITTING_VALUE = 1e100;

/** Above this multiple of the total weight a ridge penalty's share in the rank decision is capped (see its use). */
const RANK_PENALTY_CAP = 1e12;

/** The one-pass variance is used when sum a (x - x_0)^2 is at most this many times the result (four digits lost at most). */
const MOMENT_MAX_CANCELLATION = 1e4;

/**
 * Range of max|x| in which columnMoments sums x and x^2 directly: squares stay within about
 * 1e+-200 and sums of up to 2^53 weighted squares far from overflow.
 */
const MOMENT_SAFE_MIN = 1e-100;
const MOMENT_SAFE_MAX = 1e100;

/*
 * Row loops of fitBinaryModel live in small functions of their own: fitBinaryModel builds closures
 * per call, so its optimized code is discarded after a garbage collection frees them, and loops
 * inside it would then run unoptimized in the next fit.
 */

/** Sum of the case weights, and weighted sums of successes and trials. */
function weightedTotals(d: FitData): { observations: number; totalSucc: number; totalTrials: number } {
  let observations = 0;
  let totalSucc = 0;
  let totalTrials = 0;
  for (let i = 0; i < d.rows; i++) {
    observations += d.weights[i];
    totalSucc += d.weights[i] * d.successes[i];
    totalTrials += d.weights[i] * d.trials[i];
  }
  return { observations, totalSucc, totalTrials };
}

/** w_i t_i per row: the Bernoulli observations each row stands for. */
function bernoulliWeights(d: FitData): Float64Array {
  const a = new Float64Array(d.rows);
  for (let i = 0; i < d.rows; i++) a[i] = d.weights[i] * d.trials[i];
  return a;
}

/** sum_i w_i log C(t_i, y_i) and the saturated kernel log-likelihood. */
function constantTerms(d: FitData): { logBinom: number; saturated: number } {
  // 0/1 data: log C(1, y) = 0 and the saturated model fits every row exactly (log-likelihood 0).
  if (!d.grouped) return { logBinom: 0, saturated: 0 };
  let logBinom = 0;
  let saturated = 0;
  for (let i = 0; i < d.rows; i++) {
    const y = d.successes[i];
    const t = d.trials[i];
    const w = d.weights[i];
    if (d.grouped) logBinom += w * (logGamma(t + 1) - logGamma(y + 1) - logGamma(t - y + 1));
    const f = t - y;
    if (y > 0) saturated += w * y * Math.log(y / t);
    if (f > 0) saturated += w * f * Math.log(f / t);
  }
  return { logBinom, saturated };
}

/**
 * Fit a binary logistic regression model.
 *
 * Reference: McCullagh & Nelder (1989), ch. 4; Agresti (2013), ch. 5; Firth (1993); Heinze & Schemper (2002).
 *
 * @param X - design matrix without the intercept column (the intercept is an option)
 * @param y - 0/1 response (1 = positive class), or the number of successes when options.trials is
 *   given; NaN marks a missing value (the row is skipped and counted in a ROWS_SKIPPED warning)
 * @param options - fit options (see FitOptions / BinaryFitOptions in types.ts)
 * @param classes - labels [negative, positive] used in the result ["0", "1"]
 * @returns the fit; data problems that leave no usable estimate (one class, too few rows,
 *   separation of an unpenalized fit) are reported as severity "error" diagnostics with NaN
 *   estimates, never thrown
 * @throws OddsmithError (BAD_WEIGHT, BAD_TRIALS, BAD_RESPONSE, NOT_FINITE_VALUE,
 *   RANGE_SHAPE_MISMATCH, BAD_OPTION_VALUE) for invalid input; row numbers in these messages are
 *   1-based positions within the arrays passed in
 * @example
 * const fit = fitBinaryModel({ rows: 4, columns: [Float64Array.of(1, 2, 3, 4)], names: ["x"] },
 *   Float64Array.of(0, 1, 0, 1));
 * fit.table[1].estimate; // slope of x on the log-odds scale
 */
export function fitBinaryModel(
  X: DesignMatrix,
  y: Float64Array,
  options: BinaryFitOptions = {},
  classes: [negative: string, positive: string] = ["0", "1"],
): ModelFit {
  const fit = fitInScale(X, y, options, classes, false);
  // A fit that stalled (separation found from the iterates, or no convergence) may owe it to the
  // internal scale: one value 1e9 times the others makes every other row's fitting value nearly
  // constant. Refit once with a robust centre and spread (median and MAD); its answer replaces the
  // first only when it converges without separation. The estimate does not depend on the
  // internal scale, so this changes no fit that converges the ordinary way.
  const stalled = fit.diagnostics.some((d) => d.code === "SEPARATION_QUASI" || d.code === "SEPARATION_COMPLETE" || d.code === "NOT_CONVERGED");
  if (!stalled || fit.penalized || fit.biasReduced) return fit;
  const robust = fitInScale(X, y, options, classes, true);
  const separated = robust.diagnostics.some((d) => d.code.startsWith("SEPARATION_"));
  const sameTerms = robust.aliased.every((v, j) => v === fit.aliased[j]);
  return robust.converged && !separated && sameTerms ? robust : fit;
}

/**
 * Weighted median and median absolute deviation (times 1.4826, the normal-consistency factor;
 * Hampel 1974, common practice) of a column over rows of positive weight a; spread 0 when more
 * than half the weight sits on one value. Sorting costs O(n log n): used only by the refit.
 */
function robustCentreSpread(x: Float64Array, a: Float64Array, n: number, sumA: number): { centre: number; spread: number } {
  const weightedMedian = (v: Float64Array): number => {
    const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => v[i] - v[j]);
    let acc = 0;
    for (const i of order) {
      acc += a[i];
      if (acc >= sumA / 2) return v[i];
    }
    return v[order[n - 1]];
  };
  const centre = weightedMedian(x);
  const dev = Float64Array.from(x, (v) => Math.abs(v - centre));
  return { centre, spread: 1.4826 * weightedMedian(dev) };
}

function fitInScale(
  X: DesignMatrix,
  y: Float64Array,
  options: BinaryFitOptions,
  classes: [negative: string, positive: string],
  robust: boolean,
): ModelFit {
  const opt = validateOptions(options);
  const data = screen(X, y, options);
  const terms = opt.intercept ? [INTERCEPT_TERM, ...X.names] : [...X.names];
  const p = terms.length;
  const penalized = opt.penalty > 0;
  const diagnostics: Diagnostic[] = [];
  const rowsToCaller = (rows: number[]): number[] => rows.map((r) => data.rowIndex[r]);

  if (data.skipped > 0) {
    diagnostics.push(fitDiagnostic("ROWS_SKIPPED", { count: data.skipped, detail: data.skippedDetail }));
  }
  const { observations, totalSucc, totalTrials } = weightedTotals(data);
  const base = {
    kind: "binary" as const,
    classes: [...classes],
    positiveClass: classes[1],
    form: "binary" as const,
    terms,
    intercept: opt.intercept,
    equationClasses: [classes[1]],
    level: opt.level,
    intervalMethod: opt.intervalMethod,
    penalized,
    penalty: opt.penalty,
    biasReduced: opt.biasReduction,
    rowsUsed: data.rows,
    observations,
  };
  const failed = (aliased: boolean[] = new Array(p).fill(false)): ModelFit => {
    const coefficients = [new Float64Array(p).fill(NaN)];
    return {
      ...base,
      coefficients,
      covariance: null,
      table: buildCoefficientTable({ terms, equationClasses: base.equationClasses, coefficients, covariance: null, aliased, level: opt.level, penalized }),
      aliased,
      logLikelihood: NaN,
      nullLogLikelihood: NaN,
      deviance: NaN,
      nullDeviance: NaN,
      aic: NaN,
      bic: NaN,
      pseudoR2: NaN,
      lrTest: { statistic: NaN, df: NaN, p: NaN },
      parameters: 0,
      iterations: 0,
      converged: false,
      diagnostics,
    };
  };

  if (data.rows === 0) {
    const missing = data.skippedDetail || "none (every row has zero weight or zero trials)";
    diagnostics.push(fitDiagnostic("NO_USABLE_ROWS", { missing }));
    return failed();
  }
  if (totalSucc === 0 || totalSucc === totalTrials) {
    diagnostics.push(fitDiagnostic("ONE_CLASS_ONLY", { label: totalSucc === 0 ? classes[0] : classes[1] }));
    return failed();
  }
  if (!penalized && data.rows < p) {
    diagnostics.push(fitDiagnostic("TOO_FEW_ROWS", { rows: data.rows, parameters: p }));
    return failed();
  }

  // ---- internal coordinates: centre (with an intercept) and scale every column -------------
  const n = data.rows;
  const a = bernoulliWeights(data); // Bernoulli observations each row stands for: w_i t_i
  let sumA = 0;
  for (let i = 0; i < n; i++) sumA += a[i];
  const q = X.columns.length;
  const centre = new Float64Array(q);
  const scale = new Float64Array(q);
  const sd = new Float64Array(q);
  // Fitting columns z_j = (x_j - centre_j) / scale_j are formed a row block at a time inside the
  // Newton core (no scaled copy of the design); the intercept column passes through unchanged.
  const raw: Float64Array[] = [];
  if (opt.intercept) raw.push(new Float64Array(n).fill(1));
  const moments: ReturnType<typeof columnMoments>[] = [];
  for (let j = 0; j < q; j++) {
    const x = data.columns[j];
    moments.push(columnMoments(x, a, sumA, n));
    const { big, m, v, ms } = moments[j];
    sd[j] = big * Math.sqrt(v / sumA);
    const s = opt.intercept ? sd[j] : big * Math.sqrt(ms / sumA);
    scale[j] = s > 0 ? s : 1;
    centre[j] = opt.intercept ? m : 0;
    if (robust) {
      // The refit's scale (see fitBinaryModel): median and MAD where the MAD is positive.
      const r = robustCentreSpread(x, a, n, sumA);
      if (r.spread > 0 && Number.isFinite(r.spread)) {
        centre[j] = opt.intercept ? r.centre : 0;
        // No fitting value beyond ROBUST_MAX_FITTING_VALUE, so that no square of one overflows.
        scale[j] = Math.max(r.spread, big / ROBUST_MAX_FITTING_VALUE, Math.abs(centre[j]) / ROBUST_MAX_FITTING_VALUE);
      }
    }
    raw.push(x);
  }
  const off0 = opt.intercept ? 1 : 0;
  const centreAll = new Float64Array(p);
  const scaleAll = new Float64Array(p).fill(1);
  centreAll.set(centre, off0);
  scaleAll.set(scale, off0);
  const penaltyAll = new Float64Array(p);
  if (penalized) {
    for (let j = 0; j < q; j++) {
      const ps = opt.penaltyScale === "standardized" ? sd[j] : 1;
      penaltyAll[off0 + j] = opt.penalty * (ps / scale[j]) ** 2;
    }
  }

  // ---- aliasing: rank-revealing Cholesky of Z'AZ (+ penalty) in column order ---------------
  // A ridge penalty makes collinear columns estimable, so it enters the rank decision; Firth's
  // penalty needs log det of the unpenalized information, so with bias reduction it does not.
  // A penalty beyond RANK_PENALTY_CAP x sumA already makes its column independent of every other
  // (1 - R^2 >= cap / (cap + 1)); capped, it cannot push an unpenalized column (the intercept)
  // below the rank check's zero-column floor (a diagonal 1e-300 of the largest): penalty=1e305.
  const rankPenalty = opt.biasReduction ? new Float64Array(p) : penaltyAll.map((v) => Math.min(v, RANK_PENALTY_CAP * sumA));
  // Large data: a subsample may already prove that no column is aliased (see subsampleRankProof in glm/warmStart.ts).
  // The full diagonal (Z'AZ)_jj is known from the moments (sumA for a column scaled to unit SD, or
  // unit root mean square without an intercept); a column whose spread is at the rounding level of
  // its values (or zero) gets NaN, which no proof passes, and is left to the full check.
  const fullDiagonal = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    const c = j - off0;
    if (c < 0) {
      fullDiagonal[j] = sumA + rankPenalty[j];
      continue;
    }
    const { big, v, ms } = moments[c];
    const spread = opt.intercept ? sd[c] : scale[c];
    fullDiagonal[j] = spread > RANK_PROOF_MIN_SPREAD * big ? (big / scale[c]) ** 2 * (opt.intercept ? v : ms) + rankPenalty[j] : NaN;
  }
  // (The proof's diagonal comes from moments about the mean: not for the robust refit's centres.)
  const provenFullRank = !opt.biasReduction && !robust && subsampleRankProof({ rows: n, columns: raw, centre: centreAll, scale: scaleAll }, a, rankPenalty, fullDiagonal, ALIAS_TOLERANCE);
  let rr: RankRevealingResult;
  if (provenFullRank) {
    rr = { rank: p, independent: Array.from({ length: p }, (_, j) => j), dependent: [], residualShare: new Float64Array(p).fill(NaN) };
  } else {
    const gram = designGram({ rows: n, columns: raw, centre: centreAll, scale: scaleAll }, a);
    for (let j = 0; j < p; j++) gram[j * p + j] += rankPenalty[j];
    rr = rankRevealingCholesky(gram, p, ALIAS_TOLERANCE);
  }
  const aliased = new Array<boolean>(p).fill(false);
  for (const j of rr.dependent) aliased[j] = true;
  if (rr.dependent.length > 0) {
    diagnostics.push(
      fitDiagnostic("ALIASED_COLUMNS", { columns: listNames(rr.dependent.map((j) => terms[j])) }, { columns: rr.dependent.map((j) => terms[j]) }),
    );
  }
  const kept = rr.independent;
  const k = kept.length;
  const keptDesign = {
    rows: n,
    columns: kept.map((j) => raw[j]),
    centre: Float64Array.from(kept, (j) => centreAll[j]),
    scale: Float64Array.from(kept, (j) => scaleAll[j]),
  };
  const interceptIndex = opt.intercept && !aliased[0] ? 0 : -1;
  const response: BinaryResponse = { rows: n, successes: data.successes, trials: data.trials };

  // ---- main fit ----------------------------------------------------------------------------
  const problemK: BinomialProblem = {
    rows: n,
    columns: keptDesign.columns,
    centre: keptDesign.centre,
    scale: keptDesign.scale,
    successes: data.successes,
    trials: data.trials,
    weights: data.weights,
    offset: data.offset,
    penalty: Float64Array.from(kept.map((j) => penaltyAll[j])),
    firth: opt.biasReduction,
    maxIterations: opt.maxIterations,
    tolerance: opt.tolerance,
    keepHistory: !penalized && !opt.biasReduction,
  };
  // Large data: start from a fit on a systematic subsample, with its information scaled up
  // standing in for the full-data one at first (see the warm start in glm/newton.ts).
  const warm = binomialWarmStart(problemK);
  const fit = fitBinomial(warm ? { ...problemK, start: warm.start, startInformation: warm.information } : problemK);
  const { logBinom, saturated } = constantTerms(data);

  // ---- separation --------------------------------------------------------------------------
  let separation: SeparationFinding | null = null;
  const univariate: { col: number; rows: number[]; complete: boolean }[] = [];
  const sides = responseSides(response);
  for (let t = 0; t < k; t++) {
    const j = kept[t];
    if (j === interceptIndex && opt.intercept) continue;
    const u = univariateSeparation(data.columns[j - off0], response, sides);
    if (u) univariate.push({ col: t, rows: u.rows, complete: u.complete });
  }
  if (!penalized && !opt.biasReduction) {
    separation = separationFromIterates(() => fittingColumns(keptDesign), fit.history, fit.eta, response, interceptIndex, fit.converged);
  }
  if (!separation && univariate.length > 0) {
    // Certify the first univariate finding in the fitting coordinates (it is already exact).
    const u = univariate[0];
    separation = { complete: u.complete, columns: univariate.map((v) => v.col), rows: u.rows };
  }
  if (separation) {
    const colNames = separation.columns.map((t) => terms[kept[t]]);
    const rows = rowsToCaller(separation.rows);
    const example = exampleRows(rows);
    if (!penalized && !opt.biasReduction) {
      const code: FitDiagnosticCode = separation.complete ? "SEPARATION_COMPLETE" : "SEPARATION_QUASI";
      diagnostics.push(
        fitDiagnostic(code, { columns: listNames(colNames), count: rows.length, rows: example }, { columns: colNames, rows }),
      );
    } else {
      const method = opt.biasReduction ? "bias reduction (Firth)" : "penalty";
      diagnostics.push(
        fitDiagnostic("SEPARATION_HANDLED", { columns: listNames(colNames), count: rows.length, rows: example, method }, { columns: colNames, rows }),
      );
    }
  }
  const separatedUnusable = separation !== null && !penalized && !opt.biasReduction;

  if (!fit.converged && !separatedUnusable) {
    const change = Number.isFinite(fit.lastChange) ? fit.lastChange.toPrecision(3) : "not available: the information matrix became singular";
    diagnostics.push(fitDiagnostic("NOT_CONVERGED", { iterations: fit.iterations, change }));
  }

  // ---- back to the original scale ----------------------------------------------------------
  // T maps fitting coordinates of the kept terms to original ones.
  const T = new Float64Array(k * k);
  for (let t = 0; t < k; t++) {
    const j = kept[t];
    if (opt.intercept && j === 0) {
      T[t * k + t] = 1;
    } else {
      const c = j - off0;
      T[t * k + t] = 1 / scale[c];
      if (interceptIndex === 0) T[0 * k + t] = -centre[c] / scale[c];
    }
  }
  const coefK = new Float64Array(k);
  for (let r = 0; r < k; r++) {
    let s = 0;
    for (let c = 0; c < k; c++) s += T[r * k + c] * fit.coefficients[c];
    coefK[r] = s;
  }
  let covK: Float64Array | null = null;
  let fitInverse: Float64Array | null = null;
  if (!penalized && !separatedUnusable) {
    fitInverse = invertSymmetric(fit.information, k);
    if (fitInverse) covK = congruence(T, fitInverse, k);
  }
  // Standard errors come from the fitting scale without squaring (originalScaleStandardErrors), so
  // a column multiplied by 1e-200 keeps its SE (about 1e200) although its variance overflows.
  const seAll = covK ? originalScaleStandardErrors(T, fitInverse!, k, kept, p) : null;
  // Values so extreme that a coefficient (or its standard error) is not representable on the
  // original scale (above 1.8e308): no usable estimate, and the message asks for a rescaled column.
  const overflowTerms = kept
    .filter((j, t) => (!Number.isFinite(coefK[t]) && !Number.isNaN(coefK[t])) || (seAll !== null && seAll[j] === Infinity))
    .map((j) => terms[j]);
  if (overflowTerms.length > 0) {
    diagnostics.push(fitDiagnostic("COEFFICIENT_OVERFLOW", { columns: listNames(overflowTerms) }, { columns: overflowTerms }));
  }
  const unusable = separatedUnusable || overflowTerms.length > 0;
  const coefficients = new Float64Array(p).fill(NaN);
  let covariance: Float64Array | null = null;
  let standardErrors: Float64Array | null = null;
  if (!unusable) {
    for (let t = 0; t < k; t++) coefficients[kept[t]] = coefK[t];
    // A covariance with an entry beyond the double range (a column multiplied by 1e-200: variance
    // about 1e400) is not published: effects and probability intervals built on it would show
    // z = 0 and p = 1. The table keeps its standard errors (computed without squaring).
    if (covK && covK.every((v) => Number.isFinite(v))) {
      covariance = new Float64Array(p * p).fill(NaN);
      for (let r = 0; r < k; r++) for (let c = 0; c < k; c++) covariance[kept[r] * p + kept[c]] = covK[r * k + c];
      standardErrors = seAll;
    } else if (covK) {
      standardErrors = seAll;
    }
  }

  // ---- likelihood summaries ----------------------------------------------------------------
  const logLikelihood = fit.logLikelihood + logBinom;
  // An offset or value so extreme that an observed row gets probability 0 leaves no usable fit.
  if (!Number.isFinite(logLikelihood) && !separatedUnusable) diagnostics.push(fitDiagnostic("LIKELIHOOD_NOT_FINITE", {}));
  const nullFit = nullModel(data, opt.intercept, opt.maxIterations);
  const nullLogLikelihood = nullFit.logLikelihood + logBinom;
  const deviance = 2 * (saturated - fit.logLikelihood);
  const nullDeviance = 2 * (saturated - nullFit.logLikelihood);
  const ic = informationCriteria(logLikelihood, k, observations);
  const df = k - (interceptIndex === 0 ? 1 : 0);
  let lrTest = likelihoodRatioTest(logLikelihood, nullLogLikelihood, df);
  if (opt.biasReduction) {
    // Penalized likelihood ratio test (Heinze & Schemper 2002): the null model holds every
    // non-intercept coefficient at 0 but keeps the full design in the penalty (1/2) log det I, so
    // the Jacobian of the parametrization cancels and the statistic does not depend on units.
    const free = new Uint8Array(k);
    if (interceptIndex === 0) free[0] = 1;
    const nullFirth = fitBinomial({ ...problemK, keepHistory: false, free, start: null });
    const statistic = 2 * (nullFirth.objective - fit.objective);
    lrTest = { statistic, df, p: df > 0 ? chiSquareSurvival(Math.max(statistic, 0), df) : NaN };
  }
  if (penalized) {
    lrTest = { ...lrTest, p: NaN };
    diagnostics.push(penalizedNote(opt.penalty));
  }

  // ---- intervals ---------------------------------------------------------------------------
  let intervals: Interval[] | null = null;
  if (opt.intervalMethod === "profile" && !unusable) {
    if (penalized) {
      diagnostics.push(fitDiagnostic("PROFILE_NOT_AVAILABLE", { reason: "penalized (ridge) fits", shown: "no intervals" }));
    } else if (covK) {
      const seK = new Float64Array(k);
      for (let t = 0; t < k; t++) seK[t] = Math.sqrt(covK[t * k + t]);
      // Firth fits profile the penalized likelihood (Heinze & Schemper 2002); others the likelihood.
      const prof = (opt.biasReduction ? firthProfileIntervals : profileIntervals)(
        {
          rows: n,
          columns: kept.filter((j) => !(opt.intercept && j === 0)).map((j) => data.columns[j - off0]),
          intercept: interceptIndex === 0,
          successes: data.successes,
          trials: data.trials,
          weights: data.weights,
          offset: data.offset,
          estimate: coefK,
          standardError: seK,
          logLikelihood: fit.logLikelihood,
          maxIterations: opt.maxIterations,
          tolerance: opt.tolerance,
        },
        opt.level,
      );
      intervals = new Array<Interval>(p).fill({ lower: NaN, upper: NaN });
      for (let t = 0; t < k; t++) {
        intervals[kept[t]] = { lower: prof[t].lower, upper: prof[t].upper };
        for (const side of prof[t].open) {
          diagnostics.push(
            fitDiagnostic("PROFILE_INTERVAL_OPEN", { term: terms[kept[t]], side, limit: `${PROFILE_SEARCH_LIMIT} Wald half-widths of the estimate` }, { columns: [terms[kept[t]]] }),
          );
        }
      }
    }
  }

  const table = buildCoefficientTable({
    terms,
    equationClasses: base.equationClasses,
    coefficients: [coefficients],
    covariance,
    aliased,
    level: opt.level,
    penalized,
    intervals,
    standardErrors,
  });
  return {
    ...base,
    // The method actually used: a profile request falls back to Wald where profiles are not offered.
    intervalMethod: intervals ? "profile" : "wald",
    coefficients: [coefficients],
    covariance,
    table,
    aliased,
    logLikelihood,
    nullLogLikelihood,
    deviance,
    nullDeviance,
    aic: ic.aic,
    bic: ic.bic,
    pseudoR2: mcFaddenR2(logLikelihood, nullLogLikelihood),
    lrTest,
    parameters: k,
    iterations: fit.iterations,
    converged: fit.converged && !unusable,
    diagnostics,
  };
}

/** Designs with at least this many rows look for mostly-zero columns (see kernels/sparse.ts). */
export { SPARSE_MIN_ROWS } from "./kernels";

/** The shared warm-start sizes (glm/warmStart.ts), re-exported for the tests of the large fits. */
export { WARM_START_MIN_ROWS, WARM_START_ROWS, WARM_START_ROWS_PER_COLUMN } from "./glm/warmStart";

/** Z' diag(a) Z of a design, from its kernel. */
function designGram(design: KernelDesign, a: Float64Array): Float64Array {
  const p = design.columns.length;
  return createKernel(design, 1).gram(a, new Float64Array(p * p));
}

/** The subsample rank proof is only tried for columns whose spread is above this share of their largest magnitude. */
const RANK_PROOF_MIN_SPREAD = 1e-8;

/**
 * Intercept-only model with the same weights, trials and offset (or the offset alone without an
 * intercept). Returns the kernel log-likelihood.
 */
function nullModel(d: FitData, intercept: boolean, maxIterations: number): { logLikelihood: number } {
  const n = d.rows;
  if (!intercept) {
    const r = fitBinomial({
      rows: n,
      columns: [],
      successes: d.successes,
      trials: d.trials,
      weights: d.weights,
      offset: d.offset,
      penalty: new Float64Array(0),
      firth: false,
      maxIterations: 1,
      tolerance: 1e-12,
    });
    return { logLikelihood: r.logLikelihood };
  }
  // Constant offset: the intercept-only MLE is the pooled rate, in closed form.
  let constantOffset = true;
  for (let i = 1; constantOffset && i < n; i++) if (d.offset[i] !== d.offset[0]) constantOffset = false;
  if (constantOffset) {
    let sy = 0;
    let st = 0;
    for (let i = 0; i < n; i++) {
      sy += d.weights[i] * d.successes[i];
      st += d.weights[i] * d.trials[i];
    }
    const rate = sy / st;
    const ll = (sy > 0 ? sy * Math.log(rate) : 0) + (st - sy > 0 ? (st - sy) * Math.log1p(-rate) : 0);
    return { logLikelihood: ll };
  }
  const r = fitBinomial({
    rows: n,
    columns: [new Float64Array(n).fill(1)],
    successes: d.successes,
    trials: d.trials,
    weights: d.weights,
    offset: d.offset,
    penalty: new Float64Array(1),
    firth: false,
    maxIterations,
    tolerance: 1e-13,
  });
  return { logLikelihood: r.logLikelihood };
}


