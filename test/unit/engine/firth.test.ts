import { fitBinaryModel } from "../../../src/engine/binary";
import { hatValues, logDetFromCholesky } from "../../../src/engine/firth";
import { cholesky, weightedCrossProduct } from "../../../src/engine/linalg";
import { design, expectClose, expectScalarClose, loadFixture } from "./binaryHelpers";

/** brglm2 ran to epsilon 1e-12 and jsonlite printed 15 digits; observed agreement ~1e-10. */
const BRGLM_TOL = 1e-8;
/** Closed forms evaluated in double precision. */
const EXACT_TOL = 1e-10;

const ref = loadFixture("glm-references.json");

describe("Firth bias reduction on x = y = (0,0,0,1,1,1)", () => {
  // Derivation (checked by brglm2 below): with one binary covariate the model is saturated, each
  // group's hat values sum to 1, so each of the 3 rows in a group has h = 1/3. The modified score
  // of group g is s_g - 3 mu_g + 3 * (1/3) (1/2 - mu_g) = 0, so mu_g = (s_g + 1/2) / 4: mu = 1/8
  // for x = 0 and 7/8 for x = 1 (the "add 1/2 to every cell" estimate). Hence
  // intercept = logit(1/8) = log(1/7) and slope = logit(7/8) - logit(1/8) = log 49.
  const fit = fitBinaryModel(design({ x: [0, 0, 0, 1, 1, 1] }), Float64Array.of(0, 0, 0, 1, 1, 1), { biasReduction: true });

  test("intercept is log(1/7) and slope log 49 (analytic)", () => {
    expectScalarClose(fit.table[0].estimate, Math.log(1 / 7), EXACT_TOL, "intercept");
    expectScalarClose(fit.table[1].estimate, Math.log(49), EXACT_TOL, "slope");
    expect(fit.converged).toBe(true);
    expect(fit.biasReduced).toBe(true);
  });

  test("standard errors are those of the inverse Fisher information at the estimate (brglm2 AS_mean)", () => {
    // I at mu = 1/8, 7/8 with 3 rows each: W = 3 * 7/64 per group. Var(intercept) = 1/W0,
    // Var(slope) = 1/W0 + 1/W1 = 2 * 64/21.
    const W = (3 * 7) / 64;
    expectScalarClose(fit.table[0].standardError, Math.sqrt(1 / W), EXACT_TOL, "se intercept");
    expectScalarClose(fit.table[1].standardError, Math.sqrt(2 / W), EXACT_TOL, "se slope");
    expectClose(fit.table.map((r) => r.standardError), ref.firthTiny.standardErrors, BRGLM_TOL, "se vs brglm2");
    expectClose(fit.table.map((r) => r.estimate), ref.firthTiny.coefficients, BRGLM_TOL, "coef vs brglm2");
  });

  test("the unpenalized fit of the same data is flagged as separated instead", () => {
    const plain = fitBinaryModel(design({ x: [0, 0, 0, 1, 1, 1] }), Float64Array.of(0, 0, 0, 1, 1, 1));
    expect(plain.diagnostics.find((d) => d.code === "SEPARATION_COMPLETE")!.severity).toBe("error");
  });
});

describe("Firth fits vs brglm2 (type = 'AS_mean')", () => {
  test("endometrial data (NV separates): coefficients, standard errors and Wald p-values", () => {
    const en = ref.endometrial.data as { NV: number; PI: number; EH: number; HG: number }[];
    const fit = fitBinaryModel(design({ NV: en.map((r) => r.NV), PI: en.map((r) => r.PI), EH: en.map((r) => r.EH) }), Float64Array.from(en.map((r) => r.HG)), {
      biasReduction: true,
    });
    const b = ref.endometrial.firth;
    expectClose(fit.table.map((r) => r.estimate), b.coefficients, BRGLM_TOL, "coef");
    expectClose(fit.table.map((r) => r.standardError), b.standardErrors, BRGLM_TOL, "se");
    expectClose(fit.table.map((r) => r.p), b.pValues, 1e-7, "p");
    expect(fit.covariance).not.toBeNull();
  });

  test("Spector data: coefficients and standard errors", () => {
    const sp = loadFixture("spector.json");
    const fit = fitBinaryModel(design({ GPA: sp.data.GPA, TUCE: sp.data.TUCE, PSI: sp.data.PSI }), Float64Array.from(sp.data.GRADE), { biasReduction: true });
    expectClose(fit.table.map((r) => r.estimate), ref.spector.firth.coefficients, BRGLM_TOL, "coef");
    expectClose(fit.table.map((r) => r.standardError), ref.spector.firth.standardErrors, BRGLM_TOL, "se");
  });
});

describe("Firth fit properties", () => {
  const bw = ref.budworm.data as { sexM: number; ldose: number; numdead: number }[];
  const grouped = fitBinaryModel(design({ sexM: bw.map((r) => r.sexM), ldose: bw.map((r) => r.ldose) }), Float64Array.from(bw.map((r) => r.numdead)), {
    trials: new Float64Array(12).fill(20),
    biasReduction: true,
  });

  test("grouped counts and the expanded 0/1 rows give the same Firth estimates (same information matrix)", () => {
    const sexM: number[] = [];
    const ldose: number[] = [];
    const y: number[] = [];
    for (const r of bw) for (let i = 0; i < 20; i++) {
      sexM.push(r.sexM);
      ldose.push(r.ldose);
      y.push(i < r.numdead ? 1 : 0);
    }
    const rows = fitBinaryModel(design({ sexM, ldose }), Float64Array.from(y), { biasReduction: true });
    expectClose(rows.table.map((r) => r.estimate), grouped.table.map((r) => r.estimate), 1e-9, "coef");
    expectClose(rows.table.map((r) => r.standardError), grouped.table.map((r) => r.standardError), 1e-9, "se");
  });

  test("the penalized-likelihood LR test does not depend on the units of a column", () => {
    const sexM = bw.map((r) => r.sexM);
    const scaled = fitBinaryModel(design({ sexM, ldose: bw.map((r) => r.ldose * 10) }), Float64Array.from(bw.map((r) => r.numdead)), {
      trials: new Float64Array(12).fill(20),
      biasReduction: true,
    });
    expectScalarClose(scaled.lrTest.statistic, grouped.lrTest.statistic, 1e-9, "LR statistic");
    expectScalarClose(scaled.table[2].estimate * 10, grouped.table[2].estimate, 1e-9, "ldose coef");
    expect(grouped.lrTest.statistic).toBeGreaterThan(0);
    expect(grouped.lrTest.df).toBe(2);
  });

  test("Firth estimates shrink the ML estimates towards zero on these data", () => {
    const ml = fitBinaryModel(design({ sexM: bw.map((r) => r.sexM), ldose: bw.map((r) => r.ldose) }), Float64Array.from(bw.map((r) => r.numdead)), {
      trials: new Float64Array(12).fill(20),
    });
    expect(Math.abs(grouped.table[2].estimate)).toBeLessThan(Math.abs(ml.table[2].estimate));
  });

  test("intervalMethod 'profile' on a Firth fit gives profile penalized-likelihood intervals (see profile.test.ts)", () => {
    const f = fitBinaryModel(design({ x: [0, 0, 0, 1, 1, 1] }), Float64Array.of(0, 0, 0, 1, 1, 1), { biasReduction: true, intervalMethod: "profile" });
    expect(f.intervalMethod).toBe("profile");
    expect(f.diagnostics.some((d) => d.code === "PROFILE_NOT_AVAILABLE")).toBe(false);
    // asymmetric around the estimate, unlike the Wald interval
    const r = f.table[1];
    expect(r.upper - r.estimate).toBeGreaterThan(r.estimate - r.lower + 1);
  });
});

describe("hatValues and logDetFromCholesky", () => {
  test("hat values sum to the number of columns (trace of the hat matrix)", () => {
    const n = 9;
    const cols = [new Float64Array(n).fill(1), Float64Array.from({ length: n }, (_, i) => i - 4), Float64Array.from({ length: n }, (_, i) => (i * i) % 5)];
    const w = Float64Array.from({ length: n }, (_, i) => 0.1 + (i % 3) * 0.05);
    const info = weightedCrossProduct(cols, w, n, new Float64Array(9));
    const c = cholesky(info, 3);
    const h = hatValues(cols, c.factor, w, n, new Float64Array(n), new Float64Array(n));
    expectScalarClose(h.reduce((s, v) => s + v, 0), 3, 1e-12, "trace");
    for (const v of h) {
      expect(v).toBeGreaterThan(0);
      expect(v).toBeLessThanOrEqual(1);
    }
  });
  test("log det from the Cholesky factor equals log of the determinant", () => {
    const a = new Float64Array([4, 2, 2, 3]); // det 8
    expectScalarClose(logDetFromCholesky(cholesky(a, 2).factor, 2), Math.log(8), 1e-14, "logdet");
  });
});

describe("Firth convergence on tiny data (found by property testing)", () => {
  test("one informative row x = 1, y = 1 converges to logit(3/4) = log 3 instead of oscillating", () => {
    // With one parameter and one informative row, h = 1 and the modified score 1 - mu + (1/2 - mu)
    // vanishes at mu = 3/4. Firth's Newton step with I overshoots by exactly 2x here (the true
    // Hessian is 2I), which the Aitken-damped step resolves.
    const f = fitBinaryModel(design({ x: [1, 0] }), Float64Array.of(1, 0), { intercept: false, biasReduction: true });
    expect(f.converged).toBe(true);
    expectScalarClose(f.table[0].estimate, Math.log(3), 1e-9, "log 3");
  });

  test("with a ridge penalty as well, collinear columns are still dropped (Firth needs a non-singular information)", () => {
    const f = fitBinaryModel(design({ a: [1, 0, 2, 1], b: [3, 0, 6, 3] }), Float64Array.of(1, 0, 1, 0), { intercept: false, biasReduction: true, penalty: 0.5 });
    expect(f.aliased).toEqual([false, true]);
    expect(f.converged).toBe(true);
  });
});

describe("Firth with case weights, an offset and grouped counts vs brglm2 (type = 'AS_mean')", () => {
  const wd = ref.weighted.data as { x1: number; x2: number; y: number; w: number; o: number }[];
  const X = design({ x1: wd.map((r) => r.x1), x2: wd.map((r) => r.x2) });
  const y = Float64Array.from(wd.map((r) => r.y));

  test("integer case weights", () => {
    const f = fitBinaryModel(X, y, { biasReduction: true, weights: Float64Array.from(wd.map((r) => r.w)) });
    expectClose(f.table.map((r) => r.estimate), ref.weighted.firthWeights.coefficients, BRGLM_TOL, "coef");
    expectClose(f.table.map((r) => r.standardError), ref.weighted.firthWeights.standardErrors, BRGLM_TOL, "se");
  });

  test("an offset", () => {
    const f = fitBinaryModel(X, y, { biasReduction: true, offset: Float64Array.from(wd.map((r) => r.o)) });
    expectClose(f.table.map((r) => r.estimate), ref.weighted.firthOffset.coefficients, BRGLM_TOL, "coef");
    expectClose(f.table.map((r) => r.standardError), ref.weighted.firthOffset.standardErrors, BRGLM_TOL, "se");
  });

  test("grouped counts (budworm)", () => {
    const bw = ref.budworm.data as { sexM: number; ldose: number; numdead: number }[];
    const f = fitBinaryModel(design({ sexM: bw.map((r) => r.sexM), ldose: bw.map((r) => r.ldose) }), Float64Array.from(bw.map((r) => r.numdead)), {
      trials: new Float64Array(12).fill(20),
      biasReduction: true,
    });
    expectClose(f.table.map((r) => r.estimate), ref.budworm.firth.coefficients, BRGLM_TOL, "coef");
    expectClose(f.table.map((r) => r.standardError), ref.budworm.firth.standardErrors, BRGLM_TOL, "se");
  });
});
