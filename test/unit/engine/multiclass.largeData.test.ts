/**
 * The large-data path of the multi-class fit (at least 40,000 used rows: warm start from a subsample,
 * its information refined by BFGS along the steps, trial points evaluated together with the
 * information, polishing step: the pass economy of glm/newton.ts) must give the same result as plain Newton-Raphson: the maximum-likelihood estimate,
 * the log-likelihood at it, and the covariance = inverse information at it (Agresti, Categorical
 * Data Analysis, 3rd ed., 2013, §8.1; information blocks X' diag(w p_e (delta_ef - p_f)) X, Böhning,
 * Ann. Inst. Statist. Math. 44 (1992) 197-200). Data: invented, seeded LCG.
 */
import { fitMulticlassModel } from "../../../src/engine/multiclass";
import type { DesignMatrix, ModelFit } from "../../../src/engine/types";
import { expectAllClose, expectClose, flat } from "./multiclassHelpers";

/**
 * Two fits of the same likelihood along different paths: both stop within a Newton decrement of
 * 1e-8 (about 1e-4 standard errors) before a final exact Newton step, which leaves an error far
 * below 1e-9 relative in the coefficients.
 */
const SAME_ESTIMATE_REL = 1e-9;
/** Absolute floor for coefficients near 0. */
const SAME_ESTIMATE_ABS = 1e-12;
/**
 * Standard errors: the covariance is the inverse information at the last iterate before the
 * polishing step (at most about 1e-4 standard errors from the estimate, where the information
 * changes by about that times 1/sqrt(n) relative): 1e-7 relative is a safe bound.
 */
const SAME_SE_REL = 1e-7;
/**
 * cov * information must be the identity to this. The covariance is the inverse information at the
 * last iterate before the polishing step (as R's glm reports the covariance from the weights of its
 * previous iterate); that iterate is within a Newton decrement of 1e-8 of the estimate, which moved
 * cov * information by 1.5e-7 here (plain Newton-Raphson: 2e-14).
 */
const IDENTITY_ABS = 1e-6;
/** A log-likelihood (a sum of 60,000 terms) recomputed in another order: rounding only. */
const LOGLIK_REL = 1e-12;

const DISTINCT = 30000;
const P = 8;
const K = 4;
let seed = 2718;
const u = () => {
  seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
  return seed / 4294967296;
};
const X = Array.from({ length: P }, () => Float64Array.from({ length: DISTINCT }, () => u() * 4 - 2));
const B = [new Array(P + 1).fill(0), ...[1, 2, 3].map(() => Array.from({ length: P + 1 }, () => u() - 0.5))];
const y = new Int32Array(DISTINCT);
for (let i = 0; i < DISTINCT; i++) {
  const eta = B.map((b) => b.reduce((acc, bj, j) => acc + bj * (j === 0 ? 1 : X[j - 1][i]), 0));
  const m = Math.max(...eta);
  const e = eta.map((v) => Math.exp(v - m));
  let t = u() * e.reduce((a, b) => a + b, 0);
  let k = 0;
  while (k < K - 1 && t > e[k]) t -= e[k++];
  y[i] = k;
}
const names = X.map((_, j) => `x${j + 1}`);
const classes = ["k0", "k1", "k2", "k3"];

/** Every row twice: 60,000 rows, above the large-data threshold. */
const doubled: DesignMatrix = {
  rows: 2 * DISTINCT,
  columns: X.map((c) => {
    const out = new Float64Array(2 * DISTINCT);
    out.set(c);
    out.set(c, DISTINCT);
    return out;
  }),
  names,
};
const yDoubled = new Int32Array(2 * DISTINCT);
yDoubled.set(y);
yDoubled.set(y, DISTINCT);

const large = fitMulticlassModel(doubled, yDoubled, classes);
/** The same likelihood on 30,000 rows of weight 2: below the threshold, plain Newton-Raphson. */
const plain = fitMulticlassModel({ rows: DISTINCT, columns: X, names }, y, classes, { weights: new Float64Array(DISTINCT).fill(2) });

/** Log-likelihood and information of the reference-form model at the fit's coefficients, by direct loops. */
function direct(fit: ModelFit, design: DesignMatrix, labels: Int32Array): { logLik: number; information: number[][] } {
  const p = P + 1;
  const E = K - 1;
  const M = E * p;
  const I = Array.from({ length: M }, () => new Array(M).fill(0));
  let logLik = 0;
  const x = new Array(p).fill(1);
  for (let i = 0; i < design.rows; i++) {
    for (let j = 0; j < P; j++) x[j + 1] = design.columns[j][i];
    const eta = [0, ...fit.coefficients.map((b) => b.reduce((acc, bj, j) => acc + bj * x[j], 0))];
    const m = Math.max(...eta);
    const ex = eta.map((v) => Math.exp(v - m));
    const sum = ex.reduce((a, b) => a + b, 0);
    const prob = ex.map((v) => v / sum);
    logLik += eta[labels[i]] - m - Math.log(sum);
    for (let e = 0; e < E; e++) {
      for (let f = 0; f < E; f++) {
        const v = prob[e + 1] * ((e === f ? 1 : 0) - prob[f + 1]);
        for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) I[e * p + a][f * p + b] += v * x[a] * x[b];
      }
    }
  }
  return { logLik, information: I };
}

describe("large-data path of the multi-class fit equals plain Newton-Raphson", () => {
  test("60,000 rows (every row twice) give the coefficients of 30,000 rows of weight 2", () => {
    expect(large.converged).toBe(true);
    expect(plain.converged).toBe(true);
    expect(large.diagnostics).toEqual([]);
    expectAllClose("coefficients", flat(large.coefficients), flat(plain.coefficients), SAME_ESTIMATE_REL, SAME_ESTIMATE_ABS);
  });

  test("and the same standard errors and log-likelihood", () => {
    expectAllClose("standard errors", large.table.map((r) => r.standardError), plain.table.map((r) => r.standardError), SAME_SE_REL);
    expectClose("log-likelihood", large.logLikelihood, plain.logLikelihood, LOGLIK_REL);
  });

  const check = direct(large, doubled, yDoubled);

  test("the reported log-likelihood is the one at the reported coefficients", () => {
    expectClose("log-likelihood", large.logLikelihood, check.logLik, LOGLIK_REL);
  });

  test("the covariance is the inverse of the information at the reported coefficients", () => {
    const M = (K - 1) * (P + 1);
    const cov = large.covariance!;
    expect(cov).not.toBeNull();
    let worst = 0;
    for (let r = 0; r < M; r++) {
      for (let c = 0; c < M; c++) {
        let s = 0;
        for (let t = 0; t < M; t++) s += cov[r * M + t] * check.information[t][c];
        worst = Math.max(worst, Math.abs(s - (r === c ? 1 : 0)));
      }
    }
    expect(worst).toBeLessThan(IDENTITY_ABS);
  });
});

/**
 * Large fits decide aliasing from a subsample when it proves every column independent with margin
 * (see subsampleProvesFullRank in linalg.ts) and otherwise on all rows, as small fits do.
 */
describe("aliasing in the large-data path", () => {
  const withColumn = (extra: Float64Array, name: string): DesignMatrix => ({
    rows: doubled.rows,
    columns: [...doubled.columns, extra],
    names: [...names, name],
  });

  test("an exactly dependent column is reported aliased, and the other estimates stay", () => {
    const dependent = doubled.columns[0].map((v, i) => 2 * v - doubled.columns[3][i]);
    const fit = fitMulticlassModel(withColumn(dependent, "dependent"), yDoubled, classes);
    expect(fit.aliased).toEqual([...new Array(P + 1).fill(false), true]);
    expect(fit.diagnostics.map((d) => d.code)).toEqual(["ALIASED_COLUMNS"]);
    const kept = fit.coefficients.map((eq) => Array.from(eq).slice(0, P + 1));
    expectAllClose("coefficients", kept.flat(), flat(large.coefficients), SAME_ESTIMATE_REL, SAME_ESTIMATE_ABS);
  });

  test("a column equal to another on the subsample's rows only is kept (decided on all rows)", () => {
    // The subsample takes every 12th row (60,000 rows, 5,000-row subsample): on those rows the
    // column is x1 exactly, so the subsample cannot prove it independent; on odd rows it differs.
    const nearCopy = doubled.columns[0].map((v, i) => (i % 2 === 1 ? v + 0.5 * Math.sin(i) : v));
    const fit = fitMulticlassModel(withColumn(nearCopy, "nearCopy"), yDoubled, classes);
    expect(fit.aliased).toEqual(new Array(P + 2).fill(false));
    expect(fit.converged).toBe(true);
  });
});
