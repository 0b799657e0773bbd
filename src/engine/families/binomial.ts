/**
 * The binomial family with the logit link: the likelihood pieces of one row block, as the kernel
 * interface (kernels/types.ts) asks for them, and Firth's bias reduction as a hook on it.
 *
 * Row i has y_i successes out of t_i trials, case weight w_i and offset o_i; with
 * eta_i = o_i + z_i'theta and mu_i = sigmoid(eta_i):
 *   l_i = w_i [ y_i log mu_i + (t_i - y_i) log(1 - mu_i) ]   (no binomial coefficient),
 *   dl_i/deta_i = w_i (y_i - t_i mu_i),   -d2 l_i/deta_i^2 = w_i t_i mu_i (1 - mu_i).
 * log mu and log(1 - mu) are taken from u = exp(-|eta|) and L = log(1 + u), so that neither
 * overflows nor loses digits far out in the tails (log sigmoid(e) = -L for e >= 0, e - L below).
 * References: McCullagh & Nelder, Generalized Linear Models, 2nd ed. (1989), ch. 4; Firth (1993);
 * Heinze & Schemper, Statistics in Medicine 21 (2002), eq. 2 (the modified score).
 */
import { addFirthScoreAdjustment, hatValues, logDetFromCholesky } from "../firth";
import { cholesky } from "../linalg";
import type { BlockLikelihood } from "../kernels/types";

/** The data of a binomial fit: one entry per row. */
export interface BinomialData {
  rows: number;
  successes: Float64Array;
  trials: Float64Array;
  weights: Float64Array;
  offset: Float64Array;
}

/**
 * The binomial log-likelihood as a BlockLikelihood. Every pass also leaves the linear predictors
 * (offset included) and fitted probabilities of all rows in `eta` and `mu`, for the separation
 * check, the Firth hook and the caller.
 * Reference: McCullagh & Nelder (1989), ch. 4 (binomial GLM with logit link).
 */
export class BinomialLikelihood implements BlockLikelihood {
  readonly equations = 1;
  /** eta_i = o_i + z_i'theta of the last pass. */
  readonly eta: Float64Array;
  /** mu_i = sigmoid(eta_i) of the last pass. */
  readonly mu: Float64Array;

  constructor(readonly data: BinomialData) {
    this.eta = new Float64Array(data.rows);
    this.mu = new Float64Array(data.rows);
  }

  block(i0: number, len: number, eta: Float64Array, residual: Float64Array | null, weights: Float64Array | null): number {
    const { successes: y, trials: t, weights: w, offset } = this.data;
    let ll = 0;
    for (let r = 0; r < len; r++) {
      const i = i0 + r;
      const e = eta[r] + offset[i];
      const u = Math.exp(-Math.abs(e));
      const L = Math.log1p(u);
      const mu = e >= 0 ? 1 / (1 + u) : u / (1 + u);
      const logMu = e >= 0 ? -L : e - L;
      const logOneMinusMu = e >= 0 ? -e - L : -L;
      const failures = t[i] - y[i];
      let li = 0;
      if (y[i] !== 0) li += y[i] * logMu;
      if (failures !== 0) li += failures * logOneMinusMu;
      ll += w[i] * li;
      this.eta[i] = e;
      this.mu[i] = mu;
      if (residual) residual[r] = w[i] * (y[i] - t[i] * mu);
      if (weights) weights[r] = w[i] * t[i] * mu * (1 - mu);
    }
    return ll;
  }

  /** Fisher weights W_i = w_i t_i mu_i (1 - mu_i) at the last pass. */
  fisherWeights(): Float64Array {
    const { trials: t, weights: w } = this.data;
    const out = new Float64Array(this.data.rows);
    for (let i = 0; i < out.length; i++) out[i] = w[i] * t[i] * this.mu[i] * (1 - this.mu[i]);
    return out;
  }
}

/**
 * What the Newton loop (glm/newton.ts) asks of a penalty that depends on the information, such as
 * Firth's: its value at the point of the last pass, and its gradient added to the score there.
 */
export interface InformationPenalty {
  /**
   * The term added to the log-likelihood at the point of the last pass, whose information is
   * `information` (M x M); NaN when it is not defined there (a singular information).
   */
  value(information: Float64Array, parameters: number): number;
  /** Add the term's gradient at the point last given to `value` to the score (in place). */
  addToScore(score: Float64Array): void;
}

/**
 * Firth's bias reduction as a hook on the binomial family: the term (1/2) log det I(theta) and its
 * gradient sum_i h_i (1/2 - mu_i) z_i, h the hat values (Heinze & Schemper 2002, eq. 2). Needs
 * the whole fitting columns (the hat values are per row).
 * Reference: Firth, Biometrika 80 (1993); Heinze & Schemper (2002).
 */
export class FirthPenalty implements InformationPenalty {
  private factor: Float64Array | null = null;

  constructor(
    private readonly columns: readonly Float64Array[],
    private readonly family: BinomialLikelihood,
  ) {}

  value(information: Float64Array, parameters: number): number {
    const c = cholesky(information, parameters);
    this.factor = c.ok ? c.factor : null;
    return this.factor ? 0.5 * logDetFromCholesky(this.factor, parameters) : NaN;
  }

  addToScore(score: Float64Array): void {
    if (!this.factor) return;
    const n = this.family.data.rows;
    const hat = hatValues(this.columns, this.factor, this.family.fisherWeights(), n, new Float64Array(n), new Float64Array(n));
    addFirthScoreAdjustment(this.columns, hat, this.family.mu, n, score);
  }
}
