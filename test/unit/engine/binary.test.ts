import { fitBinaryModel } from "../../../src/engine/binary";
import { OddsmithError } from "../../../src/engine/messages";
import type { ModelFit } from "../../../src/engine/types";
import { design, expectClose, expectScalarClose, loadFixture } from "./binaryHelpers";

/** R glm was run with epsilon = 1e-14 and printed to 15 digits: our fits agree far better than
 * the 1e-6 the project asks for; 1e-8 still leaves room for the 1e-10 convergence rule. */
const R_TOL = 1e-8;
/** Stata 11 held the Spector data in single precision (float GPA): agreement is ~1e-7, not better. */
const STATA_TOL = 2e-6;
/** Exact identities (row order, duplication vs weights) hold to rounding of the sums. */
const IDENTITY_TOL = 1e-9;

const ref = loadFixture("glm-references.json");
const spector = loadFixture("spector.json");
const spX = design({ GPA: spector.data.GPA, TUCE: spector.data.TUCE, PSI: spector.data.PSI });
const spY = Float64Array.from(spector.data.GRADE);

/** Stata's order is GPA, TUCE, PSI, const; ours puts the intercept first. */
function stataOrder(v: number[]): number[] {
  return [v[3], v[0], v[1], v[2]];
}
const col = (fit: ModelFit, f: "estimate" | "standardError" | "p" | "lower" | "upper" | "z") => fit.table.map((r) => r[f]);

describe("Spector & Mazzeo (1980) grades data, GRADE ~ GPA + TUCE + PSI", () => {
  const fit = fitBinaryModel(spX, spY, {}, ["no improvement", "improvement"]);

  test("converges without diagnostics and reports terms intercept first", () => {
    expect(fit.converged).toBe(true);
    expect(fit.diagnostics).toEqual([]);
    expect(fit.terms).toEqual(["(intercept)", "GPA", "TUCE", "PSI"]);
    expect(fit.positiveClass).toBe("improvement");
    expect(fit.parameters).toBe(4);
    expect(fit.observations).toBe(32);
  });

  test("coefficients, standard errors and z match Stata 11 (results_discrete.py) to single-precision accuracy", () => {
    expectClose(col(fit, "estimate"), stataOrder(spector.stata.params), STATA_TOL, "coef vs Stata");
    expectClose(col(fit, "standardError"), stataOrder(spector.stata.bse), STATA_TOL, "se vs Stata");
    expectClose(col(fit, "z"), stataOrder(spector.stata.z), STATA_TOL, "z vs Stata");
    const cov = spector.stata.cov_params as number[];
    // Stata covariance entry (GPA, PSI) = cov[0*4+2]; ours (1, 3).
    expectScalarClose(fit.covariance![1 * 4 + 3], cov[2], STATA_TOL, "cov(GPA, PSI)");
    expectScalarClose(fit.covariance![0], cov[15], STATA_TOL, "var(const)");
  });

  test("log-likelihoods, LR test, pseudo-R2, AIC and BIC match Stata 11", () => {
    expectScalarClose(fit.logLikelihood, spector.stata.llf, STATA_TOL, "llf");
    expectScalarClose(fit.nullLogLikelihood, spector.stata.llnull, STATA_TOL, "llnull");
    expectScalarClose(fit.lrTest.statistic, spector.stata.llr, STATA_TOL, "llr");
    expect(fit.lrTest.df).toBe(3);
    expectScalarClose(fit.lrTest.p, spector.stata.llr_pvalue, STATA_TOL, "llr p");
    expectScalarClose(fit.pseudoR2, spector.stata.prsquared, STATA_TOL, "pseudo R2");
    expectScalarClose(fit.aic, spector.stata.aic, STATA_TOL, "aic");
    expectScalarClose(fit.bic, spector.stata.bic, STATA_TOL, "bic");
  });

  test("coefficients, standard errors, covariance, p, deviance, AIC and BIC match R glm", () => {
    const r = ref.spector;
    expectClose(col(fit, "estimate"), r.coefficients, R_TOL, "coef vs R");
    expectClose(col(fit, "standardError"), r.standardErrors, R_TOL, "se vs R");
    expectClose(fit.covariance!, r.covariance, R_TOL, "cov vs R");
    expectClose(col(fit, "p"), r.pValues, R_TOL, "p vs R");
    expectScalarClose(fit.logLikelihood, r.logLik, R_TOL, "logLik");
    expectScalarClose(fit.deviance, r.deviance, R_TOL, "deviance");
    expectScalarClose(fit.nullDeviance, r.nullDeviance, R_TOL, "null deviance");
    expectScalarClose(fit.aic, r.aic, R_TOL, "AIC");
    expectScalarClose(fit.bic, r.bic, R_TOL, "BIC");
  });

  test("Wald intervals and odds ratios match statsmodels' conf_int at 95%", () => {
    const ci = spector.statsmodels.conf_int_95 as number[]; // rows GPA, TUCE, PSI, const; [lower, upper]
    const lower = [ci[6], ci[0], ci[2], ci[4]];
    const upper = [ci[7], ci[1], ci[3], ci[5]];
    expectClose(col(fit, "lower"), lower, R_TOL, "lower");
    expectClose(col(fit, "upper"), upper, R_TOL, "upper");
    for (const r of fit.table) {
      expect(r.ratio).toBeCloseTo(Math.exp(r.estimate), 12);
      expect(r.ratioLower).toBeCloseTo(Math.exp(r.lower), 12);
      expect(r.ratioUpper).toBeCloseTo(Math.exp(r.upper), 12);
    }
  });
});
