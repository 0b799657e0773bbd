/**
 * The one kernel interface of the fits: the passes over the rows that dominate their time. Every
 * fast path (kernels/blocks.ts in JavaScript, kernels/wasmPath.ts on WebAssembly SIMD,
 * kernels/sparse.ts for mostly-zero indicator columns) implements it, and kernels/reference.ts is
 * the plain version each is tested against (test/unit/engine/kernels/).
 *
 * Layout conventions (all arrays are Float64Array, row-major where two-dimensional):
 * - The design has q columns z_j, each (x_j - centre_j) / scale_j of a stored column x_j (or x_j
 *   itself without centre and scale); the intercept, when present, is a column of ones.
 * - Coefficients theta are equation-major: theta[e q + j] for equation e < E and column j < q.
 * - Per-row buffers of a block of `len` rows are laid out [e * stride + r] for row i0 + r.
 * - Information weights come in pairs (e, f), e <= f, in the order (0,0), (0,1), ..., (0,E-1),
 *   (1,1), ...: pair(e, f) = e E - e (e - 1) / 2 + (f - e).
 * - The score has E q entries [e q + j]; the information is the full M x M matrix, M = E q, with
 *   entry (e q + a, f q + b) = sum_i z_ia z_ib v_ef,i (symmetric).
 * Reference: P. McCullagh & J. A. Nelder, Generalized Linear Models, 2nd ed. (1989), ch. 2 (the
 * score X'(dl/deta) and information X'WX of a GLM); D. Böhning, Ann. Inst. Statist. Math. 44 (1992)
 * 197-200 (the multinomial information blocks).
 */

/** The design a kernel reads: stored columns and their centring and scaling, applied on the fly. */
export interface KernelDesign {
  rows: number;
  /** q stored columns, each of length `rows`. */
  columns: readonly Float64Array[];
  /** Centre and scale per column (both or neither): z_j = (x_j - centre_j) / scale_j. */
  centre: Float64Array | null;
  scale: Float64Array | null;
}

/**
 * What a family computes from the linear predictors of a block of rows (families/ implement it).
 * The kernel calls it once per block, in row order, starting at row 0 for every pass.
 */
export interface BlockLikelihood {
  /** Number of equations E (1 for the binomial family). */
  readonly equations: number;
  /**
   * For rows i0 .. i0 + len - 1, whose linear predictors z_i'theta_e (offset not included) are
   * eta[e * stride + r]: return the block's log-likelihood; when `residual` is given write
   * dl_i/deta_ie into residual[e * stride + r]; when `weights` is given write the information weights
   * v_ef,i = -d2 l_i / (deta_ie deta_if) into weights[pair(e, f) * stride + r]. With one equation the
   * weights are >= 0 (kernels may take their square roots).
   */
  block(i0: number, len: number, eta: Float64Array, residual: Float64Array | null, weights: Float64Array | null, stride: number): number;
}

/** What a pass computes besides the log-likelihood. */
export type PassWants = "value" | "score" | "information";

/** Where a pass writes: score (E q) when asked, information (M x M) when asked (with the score). */
export interface PassOutput {
  score: Float64Array;
  information: Float64Array;
}

/** The kernel of one design and one number of equations. */
export interface Kernel {
  /** Which implementation this is ("reference", "blocks", "wasm", "sparse"), for tests and benchmarks. */
  readonly name: string;
  /**
   * One pass over every row at theta: the log-likelihood summed over the rows; with "score" also
   * the score into out.score, with "information" also the information into out.information.
   */
  pass(theta: Float64Array, family: BlockLikelihood, wants: PassWants, out: PassOutput): number;
  /** Z' diag(weights) Z (q x q, symmetric) for weights >= 0, such as the case weights of a rank check. */
  gram(weights: Float64Array, out: Float64Array): Float64Array;
}

/** Number of information weight vectors of E equations: E (E + 1) / 2. */
export function pairCount(equations: number): number {
  return (equations * (equations + 1)) / 2;
}

/** Index of the pair (e, f), e <= f, among E equations (see the layout conventions above). */
export function pairIndex(e: number, f: number, equations: number): number {
  return e * equations - (e * (e - 1)) / 2 + (f - e);
}
