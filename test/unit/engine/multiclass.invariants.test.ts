/**
 * Invariants of the multi-class fit: row order, duplication vs weights, zero weights, class
 * relabelling, the choice of reference class, and the large-data path (warm start, information
 * reuse) against plain Newton-Raphson.
 */
import fc from "fast-check";
import { fitMulticlassModel } from "../../../src/engine/multiclass";
import { predictMulticlass } from "../../../src/engine/predictMulticlass";
import type { DesignMatrix } from "../../../src/engine/types";
import { designOf, expectAllClose, expectClose, flat, loadMulticlassFixture } from "./multiclassHelpers";

/**
 * Fits of the same likelihood reached along different paths (row order, weights vs copies) agree
 * to the 1e-10 deviance rule: Newton's last step leaves far less, 1e-8 relative is a safe bound.
 */
const SAME_FIT_REL = 1e-8;
/** Absolute floor for quantities near 0 (a covariance entry, a small coefficient). */
const SAME_FIT_ABS = 1e-11;

const d = loadMulticlassFixture("weighted-four-class.json");
const cols: number[][] = d.X;
const names = ["x1", "x2", "x3"];
const y: number[] = d.y;
const classes: string[] = d.classes;
const n = y.length;

function pick(idx: number[]): { X: DesignMatrix; y: Int32Array } {
  return { X: designOf(cols.map((c) => idx.map((i) => c[i])), names), y: Int32Array.from(idx, (i) => y[i]) };
}
const all = Array.from({ length: n }, (_, i) => i);

describe("invariants of the multi-class fit", () => {
  const base = fitMulticlassModel(designOf(cols, names), Int32Array.from(y), classes);

  test("shuffling the rows changes nothing (coefficients, covariance, log-likelihood)", () => {
    // A fixed permutation (seeded LCG Fisher-Yates) keeps the test reproducible.
    const perm = [...all];
    let s = 7;
    for (let i = n - 1; i > 0; i--) {
      s = (Math.imul(s, 1103515245) + 12345) >>> 0;
      const j = s % (i + 1);
      [perm[i], perm[j]] = [perm[j], perm[i]];
    }
    const p = pick(perm);
    const fit = fitMulticlassModel(p.X, p.y, classes);
    expectAllClose("coefficient", flat(fit.coefficients), flat(base.coefficients), SAME_FIT_REL, SAME_FIT_ABS);
    expectAllClose("covariance", fit.covariance!, base.covariance!, SAME_FIT_REL, SAME_FIT_ABS);
    expectClose("logLik", fit.logLikelihood, base.logLikelihood, 1e-12);
  });

  test("duplicating every row equals weight 2 (same coefficients, SEs, logLik; twice the observations)", () => {
    const dup = pick([...all, ...all]);
    const fitDup = fitMulticlassModel(dup.X, dup.y, classes);
    const fitW2 = fitMulticlassModel(designOf(cols, names), Int32Array.from(y), classes, { weights: new Float64Array(n).fill(2) });
    expectAllClose("coefficient", flat(fitW2.coefficients), flat(fitDup.coefficients), SAME_FIT_REL, SAME_FIT_ABS);
    expectAllClose("standard error", fitW2.table.map((r) => r.standardError), fitDup.table.map((r) => r.standardError), SAME_FIT_REL);
    expectClose("logLik", fitW2.logLikelihood, fitDup.logLikelihood, 1e-12);
    expect(fitW2.observations).toBe(2 * n);
    expect(fitDup.observations).toBe(2 * n);
    expect(fitW2.rowsUsed).toBe(n);
    // ... and standard errors shrink by sqrt(2) against the single copy.
    expectAllClose("SE ratio", fitW2.table.map((r) => r.standardError * Math.SQRT2), base.table.map((r) => r.standardError), SAME_FIT_REL);
  });

  test("a row of weight 0 is the same as the row left out", () => {
    const w = new Float64Array(n).fill(1);
    const drop = [3, 17, 42, 99];
    for (const i of drop) w[i] = 0;
    const fitW = fitMulticlassModel(designOf(cols, names), Int32Array.from(y), classes, { weights: w });
    const kept = pick(all.filter((i) => !drop.includes(i)));
    const fitK = fitMulticlassModel(kept.X, kept.y, classes);
    expectAllClose("coefficient", flat(fitW.coefficients), flat(fitK.coefficients), SAME_FIT_REL, SAME_FIT_ABS);
    expect(fitW.rowsUsed).toBe(n - drop.length);
    expect(fitW.diagnostics).toEqual([]);
  });

  test("relabelling (permuting the class order, reference following its class) permutes the results", () => {
    // New order: dune, cedar, amber, birch; old class k is at position newPos[k].
    const order = [3, 2, 0, 1];
    const newPos = [2, 3, 1, 0];
    const relabelled = order.map((k) => classes[k]);
    const yNew = Int32Array.from(y, (k) => newPos[k]);
    const fitNew = fitMulticlassModel(designOf(cols, names), yNew, relabelled, { reference: newPos[0] });
    expect(fitNew.referenceClass).toBe(base.referenceClass);
    expect(fitNew.equationClasses).toEqual(["dune", "cedar", "birch"]);
    for (const cls of base.equationClasses) {
      const a = base.coefficients[base.equationClasses.indexOf(cls)];
      const b = fitNew.coefficients[fitNew.equationClasses.indexOf(cls)];
      expectAllClose(`coefficients of ${cls}`, b, a, SAME_FIT_REL, SAME_FIT_ABS);
    }
    expectClose("logLik", fitNew.logLikelihood, base.logLikelihood, 1e-12);
    const pa = predictMulticlass(base, designOf(cols, names));
    const pb = predictMulticlass(fitNew, designOf(cols, names));
    for (let k = 0; k < 4; k++) expectAllClose(`P(${classes[k]})`, pb.probabilities[newPos[k]], pa.probabilities[k], SAME_FIT_REL, 1e-14);
    expect(Array.from(pb.predicted)).toEqual(Array.from(pa.predicted, (k) => newPos[k]));
  });

  test("another reference class reparameterizes: b_k(ref r) = b_k(ref 0) - b_r(ref 0), same likelihood and probabilities", () => {
    const fit2 = fitMulticlassModel(designOf(cols, names), Int32Array.from(y), classes, { reference: 2 });
    const br = base.coefficients[base.equationClasses.indexOf("cedar")];
    for (const cls of ["birch", "dune"]) {
      const b0 = base.coefficients[base.equationClasses.indexOf(cls)];
      const want = Array.from(b0, (v, j) => v - br[j]);
      expectAllClose(`coefficients of ${cls}`, fit2.coefficients[fit2.equationClasses.indexOf(cls)], want, SAME_FIT_REL, SAME_FIT_ABS);
    }
    // amber is the old reference: its coefficients against cedar are -b_cedar.
    expectAllClose("coefficients of amber", fit2.coefficients[fit2.equationClasses.indexOf("amber")], Array.from(br, (v) => -v), SAME_FIT_REL, SAME_FIT_ABS);
    expectClose("logLik", fit2.logLikelihood, base.logLikelihood, 1e-12);
    expectClose("AIC", fit2.aic, base.aic, 1e-12);
  });

  test("fitted probabilities sum to 1 on every row, for any data the fit accepts (property)", () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.double({ min: -50, max: 50, noNaN: true }), fc.integer({ min: 0, max: 2 })), { minLength: 12, maxLength: 40 }),
        (rows) => {
          const x = rows.map((r) => r[0]);
          const yy = Int32Array.from(rows.map((r) => r[1]));
          if (new Set(rows.map((r) => r[1])).size < 3) return true;
          const fit = fitMulticlassModel(designOf([x], ["x"]), yy, ["a", "b", "c"], { penalty: 0.5 });
          const pred = predictMulticlass(fit, designOf([x], ["x"]));
          for (let i = 0; i < x.length; i++) {
            const s = pred.probabilities[0][i] + pred.probabilities[1][i] + pred.probabilities[2][i];
            if (!(Math.abs(s - 1) < 1e-12)) return false;
          }
          return true;
        },
      ),
      { numRuns: 40, seed: 20261201 },
    );
  });
});

describe("large data: warm start from a subsample and reuse of the information", () => {
  // 60,000 rows and 8 predictors, 4 classes: above the warm-start threshold (40,000 rows) and the
  // information-reuse threshold (n q^2 E(E+1)/2 = 60,000 * 81 * 6 > 2e7). The result must still be
  // the maximum-likelihood fit: the score at the estimate vanishes. Data: invented, seeded LCG.
  const rows = 60000;
  const P = 8;
  let s = 99;
  const u = () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 4294967296;
  };
  const X = Array.from({ length: P }, () => Float64Array.from({ length: rows }, () => u() * 4 - 2));
  const B = [new Array(P + 1).fill(0), ...[0, 1, 2].map(() => Array.from({ length: P + 1 }, () => u() - 0.5))];
  const yy = new Int32Array(rows);
  for (let i = 0; i < rows; i++) {
    const eta = B.map((b) => b.reduce((acc, bj, j) => acc + bj * (j === 0 ? 1 : X[j - 1][i]), 0));
    const m = Math.max(...eta);
    const e = eta.map((v) => Math.exp(v - m));
    let t = u() * e.reduce((a, b) => a + b, 0);
    let k = 0;
    while (k < 3 && t > e[k]) t -= e[k++];
    yy[i] = k;
  }
  const design: DesignMatrix = { rows, columns: X, names: X.map((_, j) => `x${j + 1}`) };
  const fit = fitMulticlassModel(design, yy, ["k0", "k1", "k2", "k3"]);

  test("converges to the maximum: the score X'(y - p) vanishes at the estimate", () => {
    expect(fit.converged).toBe(true);
    const pred = predictMulticlass(fit, design);
    let worst = 0;
    const cols = [new Float64Array(rows).fill(1), ...X];
    for (let k = 1; k < 4; k++) {
      for (const c of cols) {
        let g = 0;
        for (let i = 0; i < rows; i++) g += ((yy[i] === k ? 1 : 0) - pred.probabilities[k][i]) * c[i];
        worst = Math.max(worst, Math.abs(g));
      }
    }
    // Gradient entries are sums over 60,000 rows of terms of size ~1: 1e-5 is 1e-9 relative.
    expect(worst).toBeLessThan(1e-5);
  });

  test("recovers the generating coefficients within 5 standard errors", () => {
    const p = P + 1;
    for (let e = 0; e < 3; e++) {
      for (let j = 0; j < p; j++) {
        const r = fit.table[e * p + j];
        expect(Math.abs(r.estimate - B[e + 1][j])).toBeLessThan(5 * r.standardError);
      }
    }
  });
});

describe("large data with a rare class", () => {
  test("a class of 5 rows among 45,000 still gives the maximum-likelihood fit (score vanishes)", () => {
    const rows = 45000;
    let s = 11;
    const u = () => {
      s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
      return s / 4294967296;
    };
    const x = Float64Array.from({ length: rows }, () => u() * 2 - 1);
    const yy = Int32Array.from({ length: rows }, (_, i) => (i % 9000 === 4500 ? 2 : u() < 1 / (1 + Math.exp(-2 * x[i])) ? 1 : 0));
    const design: DesignMatrix = { rows, columns: [x], names: ["x"] };
    const fit = fitMulticlassModel(design, yy, ["a", "b", "rare"]);
    expect(fit.converged).toBe(true);
    expect(fit.diagnostics).toEqual([]);
    const pred = predictMulticlass(fit, design);
    let worst = 0;
    for (let k = 1; k < 3; k++) {
      let g0 = 0;
      let g1 = 0;
      for (let i = 0; i < rows; i++) {
        const r = (yy[i] === k ? 1 : 0) - pred.probabilities[k][i];
        g0 += r;
        g1 += r * x[i];
      }
      worst = Math.max(worst, Math.abs(g0), Math.abs(g1));
    }
    expect(worst).toBeLessThan(1e-6);
  });
});

describe("convergence floor in units of the case weights", () => {
  test("weights all 1e-12 give the same estimates as weights 1", () => {
    const x = Float64Array.from([1, 2, 3, 4, 5, 6, 1, 2, 3, 4, 5, 6, 2, 5]);
    const cls = Int32Array.from([0, 1, 2, 0, 1, 2, 1, 0, 2, 0, 1, 2, 2, 1]);
    const X = { rows: x.length, columns: [x], names: ["x"] };
    const base = fitMulticlassModel(X, cls, ["a", "b", "c"]);
    const tiny = fitMulticlassModel(X, cls, ["a", "b", "c"], { weights: new Float64Array(x.length).fill(1e-12) });
    expect(tiny.converged).toBe(true);
    for (let e = 0; e < base.coefficients.length; e++) {
      for (let j = 0; j < base.terms.length; j++) {
        const b = base.coefficients[e][j];
        expect(Math.abs(tiny.coefficients[e][j] - b)).toBeLessThan(1e-7 * Math.max(1, Math.abs(b)));
      }
    }
  });
});

describe("predictor magnitudes near the ends of the double range", () => {
  test("a predictor scaled by 1e300 or 1e-300 is fitted like the unscaled one: slope, SE and z rescale exactly", () => {
    const x = Float64Array.from([1, 2, 3, 4, 5, 6, 1, 2, 3, 4, 5, 6]);
    const cls = Int32Array.from([0, 1, 2, 0, 1, 2, 1, 0, 2, 0, 1, 2]);
    const base = fitMulticlassModel({ rows: 12, columns: [x], names: ["x"] }, cls, ["a", "b", "c"]);
    for (const scale of [1e300, 1e-300]) {
      const f = fitMulticlassModel({ rows: 12, columns: [x.map((v) => v * scale)], names: ["x"] }, cls, ["a", "b", "c"]);
      expect(f.diagnostics.filter((d) => d.severity !== "note").map((d) => d.code)).toEqual([]);
      for (let e = 0; e < 2; e++) {
        const row = f.table[e * 2 + 1];
        const ref = base.table[e * 2 + 1];
        expect(Math.abs(row.estimate * scale - ref.estimate)).toBeLessThan(1e-9 * Math.abs(ref.estimate));
        expect(Math.abs(row.standardError * scale - ref.standardError)).toBeLessThan(1e-9 * ref.standardError);
        expect(Math.abs(row.z - ref.z)).toBeLessThan(1e-9 * Math.abs(ref.z));
      }
    }
  });
});

