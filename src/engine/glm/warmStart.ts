/**
 * The one subsample rule of the large fits, binary and multi-class alike: from WARM_START_MIN_ROWS
 * rows a fit first runs on every stride-th row (a systematic subsample of about WARM_START_ROWS
 * rows, more for wide designs), at a loose tolerance, and the full-data Newton loop starts from its
 * estimate with its information scaled up standing in for the full one (see the warm start in
 * glm/newton.ts); the same subsample may prove that no column is aliased, so that the full-data
 * rank check is skipped. Neither changes the estimate, covariance or log-likelihood beyond
 * rounding and the convergence rule: the subsample only chooses where the iterations begin.
 * Reference: Nocedal & Wright, Numerical Optimization, 2nd ed. (2006), ch. 6 (a Hessian
 * approximation refined by BFGS); the subsample's information differs from the full one by about
 * 1 / sqrt(subsample rows) relative (common practice of subsampled Newton methods).
 */
import { subsampleProvesFullRank } from "../linalg";
import { createKernel } from "../kernels";
import type { KernelDesign } from "../kernels/types";

/** Rows from which a fit starts from a subsample fit (below it a fit from the usual start is quick). */
export const WARM_START_MIN_ROWS = 40000;
/** Target number of rows of the subsample (at least WARM_START_ROWS_PER_COLUMN per column). */
export const WARM_START_ROWS = 5000;
/** Subsample rows per design column (wide designs need more for a close information). */
export const WARM_START_ROWS_PER_COLUMN = 100;
/**
 * Convergence tolerance of the subsample fit. Its estimate only chooses where the full-data
 * iterations begin: it differs from the full-data estimate by the subsample's sampling error (about
 * sqrt(rows / subsample rows) full-data standard errors), far more than a tighter tolerance removes.
 */
export const WARM_START_TOLERANCE = 1e-4;
/** Iteration cap of the subsample fit (a well-posed fit needs well under 10). */
export const WARM_START_MAX_ITERATIONS = 25;

/** Every stride-th row of a design of n rows and `columns` columns for the subsample, or 0 (no subsample). */
export function subsampleStride(n: number, columns: number): number {
  if (n < WARM_START_MIN_ROWS) return 0;
  const stride = Math.max(1, Math.floor(n / Math.max(WARM_START_ROWS, WARM_START_ROWS_PER_COLUMN * columns)));
  return stride < 2 ? 0 : stride;
}

/** The subsample fit's tolerance and iteration cap, from the full fit's. */
export function subsampleSettings(tolerance: number, maxIterations: number): { tolerance: number; maxIterations: number } {
  return { tolerance: Math.max(tolerance, WARM_START_TOLERANCE), maxIterations: Math.min(maxIterations, WARM_START_MAX_ITERATIONS) };
}

/** A warm start: starting values and an approximate information there (see glm/newton.ts). */
export interface WarmStart {
  start: Float64Array;
  information: Float64Array;
}

/** What the warm-start rule reads from a subsample fit. */
export interface SubsampleFit {
  theta: Float64Array;
  information: Float64Array;
  converged: boolean;
  singular: boolean;
}

/** A family's part of the warm start: how to take its rows and weigh them, and how to fit them. */
export interface WarmStartFamily<P> {
  /** The problem on every stride-th row (the same columns, classes and options). */
  subsample(problem: P, stride: number): P;
  /** Total weight of a problem's rows (sum of w, or of w t for grouped binomial rows). */
  weight(problem: P): number;
  /**
   * Fit the subsample with `settings`: the tolerance and iteration cap of the subsample fit, and
   * the subsample's share of the total weight, by which its ridge penalty is multiplied. Null when
   * the family sees the fit as no guide (a class missing from the subsample, a sign of separation).
   */
  fit(subsample: P, settings: { tolerance: number; maxIterations: number; share: number }): SubsampleFit | null;
}

/**
 * The one warm-start rule of the large fits (see the file comment): the family's fit on every
 * stride-th row, its ridge penalty multiplied by the subsample's share w_s / w of the total weight
 * (so the penalty keeps its share of the objective), and its information scaled up by w / w_s as
 * the stand-in for the full one. Null below WARM_START_MIN_ROWS, or when the subsample fit is no
 * guide (the family says so, or it did not converge, or its information is singular, or an
 * estimate is not finite): the full fit then starts from its usual start.
 * Reference: Nocedal & Wright (2006), ch. 6; common practice of subsampled Newton methods.
 */
export function subsampleWarmStart<P>(
  problem: P,
  size: { rows: number; columns: number; tolerance: number; maxIterations: number },
  family: WarmStartFamily<P>,
): WarmStart | null {
  const stride = subsampleStride(size.rows, size.columns);
  if (stride === 0) return null;
  const sub = family.subsample(problem, stride);
  const share = family.weight(sub) / family.weight(problem);
  if (!(share > 0 && share < 1)) return null;
  const fit = family.fit(sub, { ...subsampleSettings(size.tolerance, size.maxIterations), share });
  if (!fit || !fit.converged || fit.singular || !fit.theta.every(Number.isFinite)) return null;
  return { start: fit.theta, information: scaledCopy(fit.information, 1 / share) };
}

/** Every stride-th entry of an array. */
export function pickRows(src: Float64Array, stride: number): Float64Array {
  const m = Math.floor((src.length - 1) / stride) + 1;
  const out = new Float64Array(m);
  for (let r = 0; r < m; r++) out[r] = src[r * stride];
  return out;
}

/** Every stride-th entry of an integer array. */
export function pickIntegers(src: Int32Array, stride: number): Int32Array {
  const m = Math.floor((src.length - 1) / stride) + 1;
  const out = new Int32Array(m);
  for (let r = 0; r < m; r++) out[r] = src[r * stride];
  return out;
}

/** v times each entry of x (a loop rather than a closure: see "Keeping the optimized code" in DEVELOPERS.md). */
export function scaledCopy(x: Float64Array, v: number): Float64Array {
  const out = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) out[i] = x[i] * v;
  return out;
}

/**
 * True when the subsample proves that the full-data rank check (a rank-revealing Cholesky of
 * Z'AZ + P at `tolerance`) keeps every column (see subsampleProvesFullRank in linalg.ts), so that a
 * large fit skips that full pass. P enters with the subsample's share of it, which keeps the full
 * matrix dominant; `fullDiagonal` is (Z'AZ + P)_jj on all rows. False below the subsample size.
 * Reference: Golub & Van Loan, Matrix Computations, 4th ed. (2013), sec. 5.4 (rank revealing).
 */
export function subsampleRankProof(design: KernelDesign, a: Float64Array, penalty: Float64Array | null, fullDiagonal: ArrayLike<number>, tolerance: number): boolean {
  const n = design.rows;
  const p = design.columns.length;
  const stride = subsampleStride(n, p);
  if (stride === 0) return false;
  const columns: Float64Array[] = [];
  for (let j = 0; j < p; j++) columns.push(pickRows(design.columns[j], stride));
  const subA = pickRows(a, stride);
  const m = subA.length;
  const gram = createKernel({ rows: m, columns, centre: design.centre, scale: design.scale }, 1).gram(subA, new Float64Array(p * p));
  if (penalty) for (let j = 0; j < p; j++) gram[j * p + j] += penalty[j] * (m / n);
  return subsampleProvesFullRank(gram, p, fullDiagonal, tolerance);
}
