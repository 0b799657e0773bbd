/**
 * Coefficient tables and likelihood-based summaries shared by the binary and multi-class engines.
 *
 * Wald inference: se_j = sqrt(V_jj), z_j = b_j / se_j, p_j = P(|Z| >= |z_j|), interval
 * b_j +/- z_{(1+level)/2} se_j, ratio exp(b_j) with the interval ends exponentiated (the ratio
 * interval is the transform of the coefficient interval, not a delta-method interval).
 * Reference: A. Agresti, Categorical Data Analysis, 3rd ed. (2013), chs. 1, 4 and 5.
 * Penalized fits: the table carries estimates and ratios only; every other field is NaN, and the
 * fit carries the PENALIZED_NO_P_VALUES note (see {@link penalizedNote}).
 */

import { chiSquareSurvival, criticalZ, twoSidedPFromZ } from "./distributions";
import { fitDiagnostic } from "./messages";
import type { CoefficientRow, Diagnostic, LikelihoodRatioTest } from "./types";

/** Name of the intercept term in every table (a label, not a method). */
export const INTERCEPT_TERM = "(intercept)";

/** A Wald interval for one coefficient. */
export interface Interval {
  lower: number;
  upper: number;
}

/**
 * Wald interval estimate +/- z se at a two-sided level (Agresti 2013, ch. 1). NaN ends when se is
 * NaN or the level is outside (0, 1).
 * @example waldInterval(1, 0.5, 0.95) // { lower: 0.02, upper: 1.98 } (approximately)
 */
export function waldInterval(estimate: number, standardError: number, level: number): Interval {
  if (!(level > 0 && level < 1)) return { lower: NaN, upper: NaN };
  const z = criticalZ(level);
  return { lower: estimate - z * standardError, upper: estimate + z * standardError };
}

/** Input of {@link buildCoefficientTable}. */
export interface CoefficientTableInput {
  /** Term names of one equation (intercept first when present). */
  terms: readonly string[];
  /** Outcome label per equation, parallel to `coefficients`. */
  equationClasses: readonly string[];
  /** Coefficients per equation, each of length terms.length; aliased entries may hold anything. */
  coefficients: readonly Float64Array[];
  /**
   * Covariance of the stacked coefficients (m*m, m = equations * terms, equation by equation),
   * or null. Rows/columns of aliased terms are ignored.
   */
  covariance: Float64Array | null;
  /**
   * Aliased flags: per term (length terms.length, same for every equation) or per stacked
   * coefficient (length equations * terms).
   */
  aliased: readonly boolean[];
  /** Two-sided level of the intervals. */
  level: number;
  /** Penalized fit: no SE, z, p or intervals (NaN), estimates and ratios only. */
  penalized: boolean;
  /**
   * Intervals computed another way (profile likelihood), per stacked coefficient; when given they
   * replace the Wald ends. NaN ends stay NaN.
   */
  intervals?: readonly Interval[] | null;
  /**
   * Standard errors per stacked coefficient computed without squaring (see binary.ts): they replace
   * sqrt(covariance diagonal), whose variances underflow to 0 for columns scaled beyond about 1e154.
   */
  standardErrors?: Float64Array | null;
}

/**
 * Turn per-equation coefficient arrays and their covariance into the flat table of
 * {@link CoefficientRow}s, equation by equation. Aliased terms get estimable=false and NaN in every
 * number; penalized fits get NaN standard errors, z, p and intervals.
 * Reference: Agresti (2013), ch. 4 (Wald inference for GLM coefficients).
 */
export function buildCoefficientTable(input: CoefficientTableInput): CoefficientRow[] {
  const { terms, equationClasses, coefficients, covariance, aliased, level, penalized, intervals } = input;
  const p = terms.length;
  const m = p * coefficients.length;
  const perTerm = aliased.length === p;
  const zCrit = level > 0 && level < 1 ? criticalZ(level) : NaN;
  const rows: CoefficientRow[] = [];
  for (let e = 0; e < coefficients.length; e++) {
    for (let j = 0; j < p; j++) {
      const idx = e * p + j;
      const isAliased = perTerm ? aliased[j] : aliased[idx];
      if (isAliased) {
        rows.push({
          outcome: equationClasses[e],
          term: terms[j],
          estimate: NaN,
          standardError: NaN,
          z: NaN,
          p: NaN,
          lower: NaN,
          upper: NaN,
          ratio: NaN,
          ratioLower: NaN,
          ratioUpper: NaN,
          estimable: false,
        });
        continue;
      }
      const b = coefficients[e][j];
      let se = NaN;
      if (!penalized && input.standardErrors) {
        se = input.standardErrors[idx];
      } else if (!penalized && covariance) {
        const v = covariance[idx * m + idx];
        se = v >= 0 ? Math.sqrt(v) : NaN;
      }
      const z = b / se;
      let lower = b - zCrit * se;
      let upper = b + zCrit * se;
      if (intervals && !penalized) {
        lower = intervals[idx].lower;
        upper = intervals[idx].upper;
      }
      rows.push({
        outcome: equationClasses[e],
        term: terms[j],
        estimate: b,
        standardError: se,
        z,
        p: twoSidedPFromZ(z),
        lower,
        upper,
        ratio: Math.exp(b),
        ratioLower: Math.exp(lower),
        ratioUpper: Math.exp(upper),
        estimable: true,
      });
    }
  }
  return rows;
}

/**
 * Likelihood-ratio test of a model against a nested one: statistic 2 (logLik - nullLogLik),
 * chi-square on df degrees of freedom (Wilks 1938; Agresti 2013, ch. 1). NaN p when df <= 0.
 */
export function likelihoodRatioTest(logLikelihood: number, nullLogLikelihood: number, df: number): LikelihoodRatioTest {
  const statistic = 2 * (logLikelihood - nullLogLikelihood);
  const stat = statistic < 0 && statistic > -1e-8 * Math.abs(nullLogLikelihood) ? 0 : statistic;
  return { statistic: stat, df, p: df > 0 ? chiSquareSurvival(stat, df) : NaN };
}

/**
 * McFadden's pseudo-R2, 1 - logLik / nullLogLik (McFadden 1974). NaN when the null log-likelihood
 * is 0 (a perfectly predicted single class).
 */
export function mcFaddenR2(logLikelihood: number, nullLogLikelihood: number): number {
  return nullLogLikelihood === 0 ? NaN : 1 - logLikelihood / nullLogLikelihood;
}

/**
 * Akaike and Bayesian information criteria: AIC = -2 logLik + 2k, BIC = -2 logLik + k log(n)
 * (Akaike 1974; Schwarz 1978), with k estimated parameters and n observations.
 */
export function informationCriteria(logLikelihood: number, parameters: number, observations: number): { aic: number; bic: number } {
  return {
    aic: -2 * logLikelihood + 2 * parameters,
    bic: -2 * logLikelihood + parameters * Math.log(observations),
  };
}

/**
 * The note every penalized fit carries: shrunken estimates have no classical standard errors or
 * p-values (Hastie, Tibshirani & Friedman, The Elements of Statistical Learning, 2nd ed., ch. 3).
 */
export function penalizedNote(penalty: number): Diagnostic {
  return fitDiagnostic("PENALIZED_NO_P_VALUES", { penalty });
}

/** Standard errors sqrt(diag V) of a row-major m*m covariance (NaN for negative variances); Agresti (2013), ch. 4. */
export function standardErrors(covariance: Float64Array, m: number): Float64Array {
  const se = new Float64Array(m);
  for (let j = 0; j < m; j++) {
    const v = covariance[j * m + j];
    se[j] = v >= 0 ? Math.sqrt(v) : NaN;
  }
  return se;
}
