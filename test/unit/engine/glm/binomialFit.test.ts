import { fitBinaryModel } from "../../../../src/engine/binary";
import { fitBinomial, type BinomialProblem } from "../../../../src/engine/glm/binomialFit";
import { logSigmoid } from "../../../../src/engine/numerics";
import { expectClose, loadFixture } from "../binaryHelpers";

/** R glm (epsilon 1e-14) vs our loop on raw (unscaled) columns: condition number ~1e3 only. */
const R_TOL = 1e-8;

const spector = loadFixture("spector.json");
const ref = loadFixture("glm-references.json");
const n = 32;
const ones = new Float64Array(n).fill(1);
const cols = [ones, ...["GPA", "TUCE", "PSI"].map((k) => Float64Array.from(spector.data[k]))];
const y = Float64Array.from(spector.data.GRADE);

function problem(extra: Partial<BinomialProblem> = {}): BinomialProblem {
  return {
    rows: n,
    columns: cols,
    successes: y,
    trials: new Float64Array(n).fill(1),
    weights: new Float64Array(n).fill(1),
    offset: new Float64Array(n),
    penalty: new Float64Array(4),
    firth: false,
    maxIterations: 100,
    tolerance: 1e-12,
    ...extra,
  };
}

function negLogLik(g: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    let e = 0;
    for (let j = 0; j < 4; j++) e += g[j] * cols[j][i];
    s -= y[i] === 1 ? logSigmoid(e) : logSigmoid(-e);
  }
  return s;
}

describe("Newton-Raphson core", () => {
  test("from the default start it reaches R's glm estimate in a handful of iterations without halving", () => {
    const r = fitBinomial(problem());
    expect(r.converged).toBe(true);
    expect(r.iterations).toBeLessThan(10);
    expect(r.halvings).toBe(0);
    expectClose(r.coefficients, ref.spector.coefficients, R_TOL, "coef");
  });

  test("from a far start a full Newton step overshoots: step halving keeps every accepted step downhill", () => {
    const r = fitBinomial(problem({ start: Float64Array.of(8, -3, 0.5, -4), keepHistory: true }));
    expect(r.halvings).toBeGreaterThan(0);
    expect(r.converged).toBe(true);
    expectClose(r.coefficients, ref.spector.coefficients, R_TOL, "coef");
    let prev = negLogLik(Float64Array.of(8, -3, 0.5, -4));
    for (const g of r.history) {
      const f = negLogLik(g);
      expect(f).toBeLessThanOrEqual(prev + 1e-12);
      prev = f;
    }
  });

  test("the convergence rule |D - D_old| / (0.1 + |D|) < tol stops earlier for a looser tol", () => {
    const tight = fitBinomial(problem({ tolerance: 1e-14 }));
    const loose = fitBinomial(problem({ tolerance: 1e-3 }));
    expect(loose.iterations).toBeLessThan(tight.iterations);
    expect(loose.lastChange).toBeLessThan(1e-3);
  });

  test("the iteration cap is respected and reported as not converged", () => {
    const r = fitBinomial(problem({ maxIterations: 1 }));
    expect(r.iterations).toBe(1);
    expect(r.converged).toBe(false);
  });

  test("held (not free) coefficients stay at their start values", () => {
    const r = fitBinomial(problem({ free: Uint8Array.of(1, 1, 0, 1), start: Float64Array.of(0, 0, 0.25, 0) }));
    expect(r.coefficients[2]).toBe(0.25);
    expect(r.converged).toBe(true);
  });

  test("a singular information matrix ends the loop with singular = true instead of throwing", () => {
    const dup = [ones, cols[1], cols[1]];
    const r = fitBinomial(problem({ columns: dup, penalty: new Float64Array(3) }));
    expect(r.singular).toBe(true);
    expect(r.converged).toBe(false);
  });
});

describe("convergence floor in units of the case weights", () => {
  test("weights all 1e-12 give the same estimates as weights 1 (the 0.1 floor scales with the mean weight)", () => {
    const X = { rows: 10, columns: [Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9, 10])], names: ["x"] };
    const y = Float64Array.from([0, 0, 1, 0, 1, 0, 1, 1, 0, 1]);
    const base = fitBinaryModel(X, y);
    const tiny = fitBinaryModel(X, y, { weights: new Float64Array(10).fill(1e-12) });
    expect(tiny.converged).toBe(true);
    expect(Math.abs(tiny.coefficients[0][1] - base.coefficients[0][1])).toBeLessThan(1e-9 * Math.abs(base.coefficients[0][1]));
  });
});

