/**
 * Dense symmetric-matrix kernels for the fitting loops. Matrices are Float64Array, row-major, n*n.
 *
 * Policy: factorizations report failure in their result (`ok: false`, the failing column) rather
 * than throwing; the caller decides what that means for the user. Symmetric products are
 * accumulated over the upper triangle only and then mirrored, so they are exactly symmetric.
 * References: G. H. Golub & C. F. Van Loan, Matrix Computations, 4th ed. (2013), ch. 4 (Cholesky),
 * ch. 5 (rank-revealing / pivoted factorizations); N. J. Higham, "Analysis of the Cholesky decomposition
 * of a semi-definite matrix" (1990).
 */

/** A symmetric (or triangular) matrix stored row-major in a Float64Array of length n*n. */
export type SquareMatrix = Float64Array;

/**
 * Copy the upper triangle onto the lower one, in place: A[j][i] = A[i][j] for i < j. Symmetric
 * storage convention of Golub & Van Loan (2013), ch. 1; it keeps products exactly symmetric.
 */
export function mirrorUpper(a: SquareMatrix, n: number): SquareMatrix {
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) a[j * n + i] = a[i * n + j];
  }
  return a;
}

/**
 * Weighted cross-product X'WX of columnar data, accumulated over the upper triangle and mirrored.
 * `columns[j][i]` is x_ij; a null weight array means W = I. Writes into `out` (p*p, p = columns)
 * and returns it. Cost p(p+1)/2 passes over the rows; allocates one scratch column unless `work`
 * (length >= rows) is given. The inner loop forms three dot products per pass with two
 * accumulators each: the weighted column is loaded once for three products and the add dependency
 * chain is broken (about 3-4x faster in V8 than one accumulator per product); the summation order
 * differs from a plain loop only by rounding.
 * @example weightedCrossProduct([x1, x2], w, 100, new Float64Array(4))
 */
export function weightedCrossProduct(
  columns: readonly Float64Array[],
  weights: Float64Array | null,
  rows: number,
  out: SquareMatrix,
  work: Float64Array = new Float64Array(rows),
): SquareMatrix {
  const p = columns.length;
  const n = rows;
  const m = n - 1;
  for (let j = 0; j < p; j++) {
    const xj = columns[j];
    if (weights) {
      for (let i = 0; i < n; i++) work[i] = weights[i] * xj[i];
    } else {
      for (let i = 0; i < n; i++) work[i] = xj[i];
    }
    let k = j;
    for (; k + 2 < p; k += 3) {
      const xa = columns[k];
      const xb = columns[k + 1];
      const xc = columns[k + 2];
      let a0 = 0;
      let a1 = 0;
      let b0 = 0;
      let b1 = 0;
      let c0 = 0;
      let c1 = 0;
      let i = 0;
      for (; i < m; i += 2) {
        const w0 = work[i];
        const w1 = work[i + 1];
        a0 += w0 * xa[i];
        a1 += w1 * xa[i + 1];
        b0 += w0 * xb[i];
        b1 += w1 * xb[i + 1];
        c0 += w0 * xc[i];
        c1 += w1 * xc[i + 1];
      }
      for (; i < n; i++) {
        const w0 = work[i];
        a0 += w0 * xa[i];
        b0 += w0 * xb[i];
        c0 += w0 * xc[i];
      }
      out[j * p + k] = a0 + a1;
      out[j * p + k + 1] = b0 + b1;
      out[j * p + k + 2] = c0 + c1;
    }
    for (; k < p; k++) {
      const xa = columns[k];
      let a0 = 0;
      let a1 = 0;
      let i = 0;
      for (; i < m; i += 2) {
        a0 += work[i] * xa[i];
        a1 += work[i + 1] * xa[i + 1];
      }
      for (; i < n; i++) a0 += work[i] * xa[i];
      out[j * p + k] = a0 + a1;
    }
  }
  return mirrorUpper(out, p);
}

/**
 * Weighted cross-product X'Wv of columnar data with one vector; writes into `out` (length p).
 * (The score vector of a GLM, McCullagh & Nelder 1989, ch. 2.)
 */
export function weightedCrossVector(
  columns: readonly Float64Array[],
  weights: Float64Array | null,
  v: Float64Array,
  rows: number,
  out: Float64Array,
): Float64Array {
  for (let j = 0; j < columns.length; j++) {
    const xj = columns[j];
    let s = 0;
    if (weights) {
      for (let i = 0; i < rows; i++) s += weights[i] * xj[i] * v[i];
    } else {
      for (let i = 0; i < rows; i++) s += xj[i] * v[i];
    }
    out[j] = s;
  }
  return out;
}

/**
 * Dot product sum_i a_i b_i over the first n entries, with four accumulators (breaks the add
 * dependency chain; differs from a plain loop only by rounding). Golub & Van Loan (2013), ch. 1.
 */
export function dot(a: Float64Array, b: Float64Array, n: number): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let i = 0;
  for (const m = n - 3; i < m; i += 4) {
    s0 += a[i] * b[i];
    s1 += a[i + 1] * b[i + 1];
    s2 += a[i + 2] * b[i + 2];
    s3 += a[i + 3] * b[i + 3];
  }
  for (; i < n; i++) s0 += a[i] * b[i];
  return s0 + s1 + (s2 + s3);
}

/** Outcome of a Cholesky factorization. */
export interface CholeskyResult {
  /** True when every pivot exceeded the tolerance. */
  ok: boolean;
  /** Lower-triangular factor L (row-major n*n, A = L L'); upper part is zero. Partial when !ok. */
  factor: SquareMatrix;
  /** First column (0-based) whose pivot fell below the tolerance, or -1. */
  failedColumn: number;
}

/** Default relative pivot tolerance for {@link cholesky}. */
export const CHOLESKY_RELATIVE_TOLERANCE = 1e-13;

/**
 * Cholesky factorization A = L L' of a symmetric positive-definite matrix (Golub & Van Loan 2013, ch. 4).
 * A pivot d_j is accepted when d_j > tol * max(A_jj, max_k A_kk * eps-floor): failure is reported
 * in the result, never thrown. Reads only the lower triangle of A.
 * @param a - symmetric matrix, row-major n*n (not modified)
 * @param n - order
 * @param relTol - pivot must exceed relTol * max diagonal of A [1e-13]
 */
export function cholesky(a: SquareMatrix, n: number, relTol = CHOLESKY_RELATIVE_TOLERANCE): CholeskyResult {
  const l = new Float64Array(n * n);
  let maxDiag = 0;
  for (let i = 0; i < n; i++) maxDiag = Math.max(maxDiag, Math.abs(a[i * n + i]));
  const floor = relTol * maxDiag;
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j];
    for (let k = 0; k < j; k++) d -= l[j * n + k] * l[j * n + k];
    if (!(d > floor) || !(d > 0)) return { ok: false, factor: l, failedColumn: j };
    const ljj = Math.sqrt(d);
    l[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j];
      for (let k = 0; k < j; k++) s -= l[i * n + k] * l[j * n + k];
      l[i * n + j] = s / ljj;
    }
  }
  return { ok: true, factor: l, failedColumn: -1 };
}

/**
 * Solve A x = b given the Cholesky factor L of A (forward then back substitution,
 * Golub & Van Loan 2013, chs. 3 and 4). Writes into `out` when given (may alias b) and returns it.
 */
export function choleskySolve(l: SquareMatrix, n: number, b: ArrayLike<number>, out = new Float64Array(n)): Float64Array {
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[i * n + k] * out[k];
    out[i] = s / l[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = out[i];
    for (let k = i + 1; k < n; k++) s -= l[k * n + i] * out[k];
    out[i] = s / l[i * n + i];
  }
  return out;
}

/**
 * Inverse of A from its Cholesky factor: A^{-1} = L^{-T} L^{-1}, exactly symmetric (upper triangle
 * computed, then mirrored). Reference: Golub & Van Loan (2013), ch. 3 (triangular inverse) and ch. 4.
 */
export function choleskyInverse(l: SquareMatrix, n: number): SquareMatrix {
  // Invert L in place into linv (lower triangular).
  const linv = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    linv[j * n + j] = 1 / l[j * n + j];
    for (let i = j + 1; i < n; i++) {
      let s = 0;
      for (let k = j; k < i; k++) s -= l[i * n + k] * linv[k * n + j];
      linv[i * n + j] = s / l[i * n + i];
    }
  }
  // A^{-1}[i][j] = sum_k linv[k][i] * linv[k][j], k >= max(i, j).
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      let s = 0;
      for (let k = j; k < n; k++) s += linv[k * n + i] * linv[k * n + j];
      inv[i * n + j] = s;
    }
  }
  return mirrorUpper(inv, n);
}

/**
 * Solve the symmetric positive-definite system A x = b by Cholesky (Golub & Van Loan 2013, ch. 4);
 * null when A is not positive definite at the given relative tolerance.
 */
export function solveSymmetric(a: SquareMatrix, n: number, b: ArrayLike<number>, relTol = CHOLESKY_RELATIVE_TOLERANCE): Float64Array | null {
  const c = cholesky(a, n, relTol);
  return c.ok ? choleskySolve(c.factor, n, b) : null;
}

/**
 * Inverse of a symmetric positive-definite matrix by Cholesky (Golub & Van Loan 2013, ch. 4); null
 * when it is not positive definite at the given relative tolerance.
 */
export function invertSymmetric(a: SquareMatrix, n: number, relTol = CHOLESKY_RELATIVE_TOLERANCE): SquareMatrix | null {
  const c = cholesky(a, n, relTol);
  return c.ok ? choleskyInverse(c.factor, n) : null;
}

/** Outcome of {@link rankRevealingCholesky}. */
export interface RankRevealingResult {
  /** Numerical rank. */
  rank: number;
  /** Indices of the columns kept (linearly independent at the tolerance), in their original order. */
  independent: number[];
  /** Indices of the columns judged linearly dependent on earlier kept columns. */
  dependent: number[];
  /**
   * For each column, the share of its (scaled) diagonal left after projecting it on the kept
   * columns before it: 1 - R^2 of that column on them. 1 for the first column; NaN for a zero column.
   */
  residualShare: Float64Array;
}

/** Default tolerance of {@link rankRevealingCholesky} on 1 - R^2 (squared residual-norm ratio). */
export const RANK_TOLERANCE = 1e-9;

/**
 * Rank-revealing Cholesky of a symmetric positive semi-definite Gram matrix A = X'WX, in column
 * order with deferral: column j is kept when its residual diagonal after eliminating the columns
 * kept before it is more than `tol` times its own diagonal (i.e. 1 - R^2 > tol on the earlier
 * kept columns); otherwise it is named dependent and skipped. This is the Gram-matrix analogue of
 * the limited column pivoting R's glm uses (LINPACK dqrdc2): the later column of a dependent set
 * is the one dropped. Columns whose diagonal is zero (all-zero columns) are dependent.
 * Reference: Golub & Van Loan (2013), ch. 5; Higham (1990).
 * @param a - symmetric matrix, row-major n*n (not modified)
 * @param n - order
 * @param tol - threshold on 1 - R^2 [1e-9]
 */
export function rankRevealingCholesky(a: SquareMatrix, n: number, tol = RANK_TOLERANCE): RankRevealingResult {
  const l = new Float64Array(n * n);
  const kept: number[] = [];
  const dependent: number[] = [];
  const residualShare = new Float64Array(n);
  let maxDiag = 0;
  for (let j = 0; j < n; j++) maxDiag = Math.max(maxDiag, a[j * n + j]);
  for (let j = 0; j < n; j++) {
    const ajj = a[j * n + j];
    if (!(ajj > maxDiag * 1e-300) || !(ajj > 0)) {
      residualShare[j] = NaN;
      dependent.push(j);
      continue;
    }
    // Row j of L restricted to kept columns: solve L_kk * r = a_kj.
    let d = ajj;
    for (let t = 0; t < kept.length; t++) {
      const k = kept[t];
      let s = a[j * n + k];
      for (let u = 0; u < t; u++) s -= l[j * n + kept[u]] * l[k * n + kept[u]];
      const v = s / l[k * n + k];
      l[j * n + k] = v;
      d -= v * v;
    }
    residualShare[j] = d / ajj;
    if (d / ajj > tol) {
      l[j * n + j] = Math.sqrt(d);
      kept.push(j);
    } else {
      dependent.push(j);
    }
  }
  return { rank: kept.length, independent: kept, dependent, residualShare };
}

/**
 * Margin of {@link subsampleProvesFullRank} over the tolerance: far above the rounding of either
 * Cholesky, so a proof never decides a case the full-data check would call the other way.
 */
export const RANK_PROOF_MARGIN = 1000;

/**
 * True when the Gram matrix of a subset of the rows (plus at most the full matrix's own diagonal
 * addition) proves that {@link rankRevealingCholesky} of the full Gram matrix, with tolerance
 * `tol`, keeps every column; large fits then skip that full pass of n p(p+1)/2 multiply-adds.
 * The proof: the full matrix is the subset's plus the other rows' Gram matrix, so it dominates the
 * subset's in the positive semi-definite order, and so does every Schur complement (R. A. Horn &
 * C. R. Johnson, Matrix Analysis, 2nd ed., 2013, sec. 7.7): the residual d_j of column j on the
 * earlier columns is at least the subset's. When every subset residual divided by the full
 * diagonal entry A_jj (which the caller knows from the column moments) is above
 * RANK_PROOF_MARGIN x tol, each full 1 - R^2 = d_j / A_jj is above the tolerance. Otherwise false:
 * some column might be aliased and the caller forms the full matrix.
 * @param subsetGram - Gram matrix of the subset (p*p, not modified)
 * @param fullDiagonal - diagonal of the full Gram matrix
 */
export function subsampleProvesFullRank(subsetGram: SquareMatrix, p: number, fullDiagonal: ArrayLike<number>, tol: number): boolean {
  const rr = rankRevealingCholesky(subsetGram, p, 0);
  if (rr.dependent.length > 0) return false;
  for (let j = 0; j < p; j++) {
    const residual = rr.residualShare[j] * subsetGram[j * p + j];
    if (!(residual / fullDiagonal[j] > RANK_PROOF_MARGIN * tol)) return false;
  }
  return true;
}

/** Take the principal (or general) sub-matrix of A (n*n) on the given index set (Golub & Van Loan 2013 notation A(idx, idx)). */
export function subMatrix(a: SquareMatrix, n: number, idx: readonly number[]): SquareMatrix {
  const m = idx.length;
  const out = new Float64Array(m * m);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) out[i * m + j] = a[idx[i] * n + idx[j]];
  }
  return out;
}

/** Matrix-vector product y = A x for a square row-major A (Golub & Van Loan 2013, ch. 1). */
export function multiplyVector(a: SquareMatrix, n: number, x: ArrayLike<number>, out = new Float64Array(n)): Float64Array {
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += a[i * n + j] * x[j];
    out[i] = s;
  }
  return out;
}

/** Quadratic form x' A x for a square row-major A (e.g. a variance x' V x; Golub & Van Loan 2013, ch. 1). */
export function quadraticForm(a: SquareMatrix, n: number, x: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    let r = 0;
    for (let j = 0; j < n; j++) r += a[i * n + j] * x[j];
    s += x[i] * r;
  }
  return s;
}

/**
 * Congruence transform B = T A T' for square row-major T (n*n) and symmetric A; the result is
 * mirrored so it is exactly symmetric. Used to map a covariance from the scaled fitting
 * coordinates back to the original ones.
 */
export function congruence(t: SquareMatrix, a: SquareMatrix, n: number): SquareMatrix {
  const ta = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < n; k++) {
      const tik = t[i * n + k];
      if (tik === 0) continue;
      for (let j = 0; j < n; j++) ta[i * n + j] += tik * a[k * n + j];
    }
  }
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += ta[i * n + k] * t[j * n + k];
      out[i * n + j] = s;
    }
  }
  return mirrorUpper(out, n);
}

/**
 * Add the upper triangle (3 x 3 tiles on and above the diagonal) of one row block's Gram matrix
 * A'A to `out`: out[j][l] += sum_r a_j[r] a_l[r] for the tiles with l >= j, where column j of the
 * block is a[j*stride .. j*stride+len) and k is a multiple of 3 (pad with zero columns); `out` is
 * k*k row-major and its entries below the diagonal inside the diagonal tiles are meant to be
 * overwritten by {@link mirrorUpper}. With a = sqrt(W) Z (each row scaled by the square root of its
 * weight) this accumulates Z'WZ from one buffer; nine independent sums per six loads keep the loop
 * compute-bound (the blocked, cache-aware organisation of Golub & Van Loan 2013, ch. 1.5).
 */
export function accumulateBlockGram(a: Float64Array, k: number, len: number, stride: number, out: SquareMatrix): void {
  for (let j = 0; j + 2 < k; j += 3) {
    const a0 = j * stride;
    const a1 = a0 + stride;
    const a2 = a1 + stride;
    for (let l = j; l + 2 < k; l += 3) {
      const b0 = l * stride;
      const b1 = b0 + stride;
      const b2 = b1 + stride;
      let s00 = 0;
      let s01 = 0;
      let s02 = 0;
      let s10 = 0;
      let s11 = 0;
      let s12 = 0;
      let s20 = 0;
      let s21 = 0;
      let s22 = 0;
      for (let r = 0; r < len; r++) {
        const x0 = a[a0 + r];
        const x1 = a[a1 + r];
        const x2 = a[a2 + r];
        const y0 = a[b0 + r];
        const y1 = a[b1 + r];
        const y2 = a[b2 + r];
        s00 += x0 * y0;
        s01 += x0 * y1;
        s02 += x0 * y2;
        s10 += x1 * y0;
        s11 += x1 * y1;
        s12 += x1 * y2;
        s20 += x2 * y0;
        s21 += x2 * y1;
        s22 += x2 * y2;
      }
      const o = j * k + l;
      out[o] += s00;
      out[o + 1] += s01;
      out[o + 2] += s02;
      out[o + k] += s10;
      out[o + k + 1] += s11;
      out[o + k + 2] += s12;
      out[o + 2 * k] += s20;
      out[o + 2 * k + 1] += s21;
      out[o + 2 * k + 2] += s22;
    }
  }
}

/**
 * Add the upper triangle of one row block's cross-product to `out`: out[j][l] += sum_r a_j[r] b_l[r]
 * for l >= j, where column j of the block is a[j*stride .. j*stride+len) (likewise b); `out` is
 * k*k row-major. Entries below the diagonal may also receive values (the tiles overlap it) and are
 * meant to be overwritten by {@link mirrorUpper} once every block is in. With a = W b (row weights
 * applied to the block) this accumulates X'WX block by block: a block of k columns of a few hundred rows stays in
 * the L1/L2 cache, where a pass over whole columns per pair of columns streams them from memory
 * (the blocked, cache-aware organisation of Golub & Van Loan 2013, ch. 1.5). Tiles of 2 x 3 output
 * entries (six independent sums, five loads per six multiply-adds) keep the loop compute-bound.
 */
export function accumulateBlockCrossProduct(
  a: Float64Array,
  b: Float64Array,
  k: number,
  len: number,
  stride: number,
  out: SquareMatrix,
): void {
  let j = 0;
  for (; j + 1 < k; j += 2) {
    const aj = j * stride;
    const aj1 = aj + stride;
    let l = j;
    for (; l + 2 < k; l += 3) {
      const bl = l * stride;
      const bl1 = bl + stride;
      const bl2 = bl1 + stride;
      let s00 = 0;
      let s01 = 0;
      let s02 = 0;
      let s10 = 0;
      let s11 = 0;
      let s12 = 0;
      for (let r = 0; r < len; r++) {
        const x0 = a[aj + r];
        const x1 = a[aj1 + r];
        const y0 = b[bl + r];
        const y1 = b[bl1 + r];
        const y2 = b[bl2 + r];
        s00 += x0 * y0;
        s01 += x0 * y1;
        s02 += x0 * y2;
        s10 += x1 * y0;
        s11 += x1 * y1;
        s12 += x1 * y2;
      }
      out[j * k + l] += s00;
      out[j * k + l + 1] += s01;
      out[j * k + l + 2] += s02;
      out[(j + 1) * k + l] += s10;
      out[(j + 1) * k + l + 1] += s11;
      out[(j + 1) * k + l + 2] += s12;
    }
    for (; l < k; l++) {
      const bl = l * stride;
      let s0 = 0;
      let s1 = 0;
      for (let r = 0; r < len; r++) {
        const y = b[bl + r];
        s0 += a[aj + r] * y;
        s1 += a[aj1 + r] * y;
      }
      out[j * k + l] += s0;
      out[(j + 1) * k + l] += s1;
    }
  }
  for (; j < k; j++) {
    const aj = j * stride;
    const bj = j * stride;
    let s0 = 0;
    let s1 = 0;
    let r = 0;
    for (; r + 1 < len; r += 2) {
      s0 += a[aj + r] * b[bj + r];
      s1 += a[aj + r + 1] * b[bj + r + 1];
    }
    for (; r < len; r++) s0 += a[aj + r] * b[bj + r];
    out[j * k + j] += s0 + s1;
  }
}
