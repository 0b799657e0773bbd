/**
 * Firth's bias reduction for logistic regression: the pieces the Newton core needs.
 *
 * Firth (1993) maximizes the penalized log-likelihood l*(b) = l(b) + (1/2) log det I(b), where I is
 * the Fisher information. For the logit link its score is the modified score of Heinze & Schemper
 * (2002, eq. 2):
 *
 *   U*_r(b) = sum_i [ w_i (y_i - t_i mu_i) + h_i (1/2 - mu_i) ] x_ir,
 *
 * with h_i the diagonal of the hat matrix H = W^{1/2} X (X'WX)^{-1} X' W^{1/2}, W_i = w_i t_i mu_i
 * (1 - mu_i) (w: case weight, t: trials). The estimates are finite even under separation.
 * Inference reported by Oddsmith for Firth fits: standard errors from the inverse Fisher information
 * I(b*)^{-1} at the Firth estimate b*, with Wald z, p and intervals — the summary brglm2 gives for
 * type "AS_mean" (Kosmidis & Firth 2009; Kosmidis, Kenne Pagui & Sartori 2020).
 * References: D. Firth, "Bias reduction of maximum likelihood estimates", Biometrika 80 (1993);
 * G. Heinze & M. Schemper, "A solution to the problem of separation in logistic regression",
 * Statistics in Medicine 21 (2002).
 */

import type { SquareMatrix } from "./linalg";

/**
 * Hat values h_i = W_i x_i' I^{-1} x_i for every row, from the Cholesky factor L of the
 * information I = X'WX (Heinze & Schemper 2002, eq. 2). With I = L L', x_i' I^{-1} x_i =
 * |L^{-1} x_i|^2, formed column-wise in k(k+1)/2 passes over the rows. Allocates only the k*k
 * inverse factor; `work` (length rows) and `out` are reused.
 * @param columns - the k columns of the design (columnar)
 * @param infoFactor - Cholesky factor L of I (k*k, lower)
 * @param fisherWeights - W_i per row
 * @param rows - number of rows
 * @param work - scratch array of length >= rows
 * @param out - receives h (length >= rows)
 */
export function hatValues(
  columns: readonly Float64Array[],
  infoFactor: SquareMatrix,
  fisherWeights: Float64Array,
  rows: number,
  work: Float64Array,
  out: Float64Array,
): Float64Array {
  const k = columns.length;
  const linv = lowerInverse(infoFactor, k);
  out.fill(0, 0, rows);
  for (let j = 0; j < k; j++) {
    // work = (L^{-1} X')_j = sum_{l <= j} Linv_jl x_l
    work.fill(0, 0, rows);
    for (let l = 0; l <= j; l++) {
      const v = linv[j * k + l];
      if (v === 0) continue;
      const xl = columns[l];
      for (let i = 0; i < rows; i++) work[i] += v * xl[i];
    }
    for (let i = 0; i < rows; i++) out[i] += work[i] * work[i];
  }
  for (let i = 0; i < rows; i++) out[i] *= fisherWeights[i];
  return out;
}

/** Inverse of a lower-triangular matrix (row-major k*k) by forward substitution. */
function lowerInverse(l: SquareMatrix, k: number): SquareMatrix {
  const inv = new Float64Array(k * k);
  for (let j = 0; j < k; j++) {
    inv[j * k + j] = 1 / l[j * k + j];
    for (let i = j + 1; i < k; i++) {
      let s = 0;
      for (let m = j; m < i; m++) s -= l[i * k + m] * inv[m * k + j];
      inv[i * k + j] = s / l[i * k + i];
    }
  }
  return inv;
}

/**
 * Add Firth's score adjustment sum_i h_i (1/2 - mu_i) x_ir to a score vector in place
 * (Heinze & Schemper 2002, eq. 2).
 */
export function addFirthScoreAdjustment(
  columns: readonly Float64Array[],
  hat: Float64Array,
  mu: Float64Array,
  rows: number,
  score: Float64Array,
): Float64Array {
  for (let j = 0; j < columns.length; j++) {
    const xj = columns[j];
    let s = 0;
    for (let i = 0; i < rows; i++) s += hat[i] * (0.5 - mu[i]) * xj[i];
    score[j] += s;
  }
  return score;
}

/** log det I from its Cholesky factor: 2 sum log L_jj (the Firth penalty is half of it; Firth 1993, eq. 4). */
export function logDetFromCholesky(factor: SquareMatrix, k: number): number {
  let s = 0;
  for (let j = 0; j < k; j++) s += Math.log(factor[j * k + j]);
  return 2 * s;
}
