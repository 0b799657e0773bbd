/**
 * The multinomial family with the softmax link: the likelihood pieces of one row block, as the
 * kernel interface (kernels/types.ts) asks for them.
 *
 * Row i has class c_i, case weight w_i and, for each equation e < E, a linear predictor eta_ie
 * (equation e belongs to class k_e). With K classes and, in the reference form, E = K - 1 equations
 * (the reference class has eta = 0), or E = K in the symmetric form:
 *   p_ik = exp(eta_ik) / sum_l exp(eta_il),   l_i = w_i log p_ic_i,
 *   dl_i/deta_ie = w_i (y_ie - p_ie),   -d2 l_i/(deta_ie deta_if) = w_i p_ie (delta_ef - p_if),
 * with y_ie = 1 when row i is of class k_e (Böhning, Ann. Inst. Statist. Math. 44 (1992) 197-200).
 * The softmax subtracts the row maximum and the log-likelihood is taken by log-sum-exp, so no
 * exponential overflows; in the reference form no exponential can overflow while every eta is
 * below EXP_SAFE, so the shift is 0 there (one exponential fewer per row: exp(0) = 1).
 * References: A. Agresti, Categorical Data Analysis, 3rd ed. (2013), sec. 8.1 (baseline-category
 * logits); McCullagh & Nelder, Generalized Linear Models, 2nd ed. (1989), ch. 2.
 */
import type { BlockLikelihood } from "../kernels/types";

/** Below this linear predictor exp() cannot overflow (exp(709.78) is the largest finite double). */
const EXP_SAFE = 700;

/** The data of a multinomial fit: one entry per row. */
export interface MultinomialData {
  rows: number;
  /** Class index of each row (0 .. K - 1). */
  classOf: Int32Array;
  /** Case weight of each row (> 0). */
  weights: Float64Array;
  /** Number of classes K. */
  classes: number;
  /** Class of each equation, in equation order (every class but the reference, or all of them). */
  equationClasses: readonly number[];
  /** True for the symmetric form (one equation per class), false for the reference form. */
  symmetric: boolean;
}

/**
 * The multinomial log-likelihood as a BlockLikelihood. Its buffers (per-row shift, sum of
 * exponentials, probabilities) grow once to the largest block a kernel passes and are reused;
 * nothing is allocated per block.
 * Reference: Böhning (1992) for the score and information weights; Agresti (2013), sec. 8.1.
 */
export class MultinomialLikelihood implements BlockLikelihood {
  readonly equations: number;
  /** Equation of each class (-1 for the reference class). */
  private readonly equationOfClass: Int32Array;
  private readonly referenceForm: boolean;
  private shift: Float64Array;
  private sum: Float64Array;
  private rowEquation: Int32Array;
  private prob: Float64Array;

  constructor(readonly data: MultinomialData) {
    this.equations = data.equationClasses.length;
    this.referenceForm = !data.symmetric;
    this.equationOfClass = new Int32Array(data.classes).fill(-1);
    data.equationClasses.forEach((k, e) => (this.equationOfClass[k] = e));
    this.shift = new Float64Array(0);
    this.sum = new Float64Array(0);
    this.rowEquation = new Int32Array(0);
    this.prob = new Float64Array(0);
  }

  /** Buffers for blocks of up to `stride` rows (grown, never shrunk). */
  private reserve(stride: number): void {
    if (this.shift.length >= stride) return;
    this.shift = new Float64Array(stride);
    this.sum = new Float64Array(stride);
    this.rowEquation = new Int32Array(stride);
    this.prob = new Float64Array(this.equations * stride);
  }

  block(i0: number, len: number, eta: Float64Array, residual: Float64Array | null, weights: Float64Array | null, stride: number): number {
    this.reserve(stride);
    const E = this.equations;
    const { shift, sum, prob } = this;
    // The loops run one equation at a time over the block (long loops over rows, not short ones
    // over equations). Stable softmax: subtract the row maximum (0 in the reference form while
    // every eta is below EXP_SAFE).
    const ref = this.referenceForm;
    for (let r = 0; r < len; r++) shift[r] = ref ? 0 : -Infinity;
    for (let e = 0; e < E; e++) {
      const o = e * stride;
      for (let r = 0; r < len; r++) if (eta[o + r] > shift[r]) shift[r] = eta[o + r];
    }
    if (ref) for (let r = 0; r < len; r++) if (shift[r] <= EXP_SAFE) shift[r] = 0;
    for (let r = 0; r < len; r++) sum[r] = ref ? (shift[r] === 0 ? 1 : Math.exp(-shift[r])) : 0;
    for (let e = 0; e < E; e++) {
      const o = e * stride;
      const op = e * stride;
      for (let r = 0; r < len; r++) {
        const t = Math.exp(eta[o + r] - shift[r]);
        prob[op + r] = t;
        sum[r] += t;
      }
    }
    const logLikelihood = this.blockLogLikelihood(i0, len, eta, stride);
    if (!residual && !weights) return logLikelihood;
    this.normalize(len, stride);
    if (residual) this.residuals(i0, len, residual, stride);
    if (weights) this.informationWeights(i0, len, weights, stride);
    return logLikelihood;
  }

  /** sum_r w_r (eta_r,c - shift_r - log sum_r) over the block; records each row's equation. */
  private blockLogLikelihood(i0: number, len: number, eta: Float64Array, stride: number): number {
    const { classOf, weights: w } = this.data;
    const { shift, sum, rowEquation, equationOfClass } = this;
    let ll = 0;
    for (let r = 0; r < len; r++) {
      const i = i0 + r;
      const e = equationOfClass[classOf[i]];
      rowEquation[r] = e;
      ll += w[i] * ((e >= 0 ? eta[e * stride + r] : 0) - shift[r] - Math.log(sum[r]));
    }
    return ll;
  }

  /** Probabilities from the exponentials: prob / sum. */
  private normalize(len: number, stride: number): void {
    const { sum, prob } = this;
    for (let r = 0; r < len; r++) sum[r] = 1 / sum[r];
    for (let e = 0; e < this.equations; e++) {
      const o = e * stride;
      for (let r = 0; r < len; r++) prob[o + r] *= sum[r];
    }
  }

  /** residual[e stride + r] = w (y_e - p_e). */
  private residuals(i0: number, len: number, residual: Float64Array, stride: number): void {
    const w = this.data.weights;
    const { prob, rowEquation } = this;
    for (let e = 0; e < this.equations; e++) {
      const o = e * stride;
      for (let r = 0; r < len; r++) residual[o + r] = w[i0 + r] * ((rowEquation[r] === e ? 1 : 0) - prob[o + r]);
    }
  }

  /** weights[pair(e, f) stride + r] = w p_e (delta_ef - p_f), pairs in the order of kernels/types.ts. */
  private informationWeights(i0: number, len: number, v: Float64Array, stride: number): void {
    const w = this.data.weights;
    const prob = this.prob;
    const E = this.equations;
    let pr = 0;
    for (let e = 0; e < E; e++) {
      const oe = e * stride;
      for (let f = e; f < E; f++) {
        const of = f * stride;
        const ov = pr++ * stride;
        if (f === e) {
          for (let r = 0; r < len; r++) {
            const pe = prob[oe + r];
            v[ov + r] = w[i0 + r] * pe * (1 - pe);
          }
        } else {
          for (let r = 0; r < len; r++) v[ov + r] = -(w[i0 + r] * prob[oe + r]) * prob[of + r];
        }
      }
    }
  }
}
