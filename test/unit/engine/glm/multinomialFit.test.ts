/**
 * The multinomial fit on the one Newton loop (src/engine/glm/multinomialFit.ts over glm/newton.ts):
 * the same estimate on every kernel path, the symmetric form's side condition, and the pass
 * economy of large fits (one exact information pass over all rows, and an estimate at which a
 * fresh Newton step, computed by the plain reference kernel, is negligible). Data: invented,
 * seeded LCG.
 */
import { MultinomialLikelihood } from "../../../../src/engine/families/multinomial";
import { fitMultinomial, type MultinomialProblem } from "../../../../src/engine/glm/multinomialFit";
import { setKernelChoice } from "../../../../src/engine/kernels";
import { referenceKernel } from "../../../../src/engine/kernels/reference";
import { choleskySolve, cholesky } from "../../../../src/engine/linalg";

/** Two runs of the same loop whose sums differ only in rounding order: estimates agree to about 1e-12 of their size. */
const SAME_PATH_REL = 1e-9;
/**
 * The pass economy stops once the Newton decrement U'H^{-1}U (about the squared distance to the
 * maximum in standard-error units) is below 1e-8 and then takes one more Newton step, which leaves
 * a decrement far below that; 1e-10 is an assertion with room to spare.
 */
const FINAL_DECREMENT = 1e-10;

let seed = 97531;
const u = () => {
  seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
  return seed / 4294967296;
};

/** n rows, q - 1 standardized-ish predictors plus an intercept, K classes from a softmax model. */
function problem(n: number, q: number, K: number, extra: Partial<MultinomialProblem> = {}): MultinomialProblem {
  const columns = [new Float64Array(n).fill(1), ...Array.from({ length: q - 1 }, () => Float64Array.from({ length: n }, () => u() * 2 - 1))];
  const B = Array.from({ length: K }, (_, k) => Array.from({ length: q }, () => (k === 0 ? 0 : u() - 0.5)));
  const classOf = Int32Array.from({ length: n }, (_, i) => {
    const e = B.map((b) => Math.exp(b.reduce((acc, bj, j) => acc + bj * columns[j][i], 0)));
    let t = u() * e.reduce((a, b) => a + b, 0);
    let k = 0;
    while (k < K - 1 && t > e[k]) t -= e[k++];
    return k;
  });
  return {
    rows: n,
    classOf,
    weights: new Float64Array(n).fill(1),
    classes: K,
    equationClasses: Array.from({ length: K - 1 }, (_, e) => e + 1),
    symmetric: false,
    columns,
    intercept: true,
    penalty: new Float64Array(q),
    maxIterations: 100,
    tolerance: 1e-10,
    ...extra,
  };
}

function maxRelDiff(a: Float64Array, b: Float64Array): number {
  let m = 0;
  for (let t = 0; t < a.length; t++) m = Math.max(m, Math.abs(a[t] - b[t]) / Math.max(1, Math.abs(b[t])));
  return m;
}

afterEach(() => setKernelChoice("auto"));

describe("the same estimate on every kernel path", () => {
  const p = problem(700, 4, 3);
  test.each(["blocks", "wasm"] as const)("the %s path reaches the reference kernel's estimate", (path) => {
    setKernelChoice("reference");
    const reference = fitMultinomial(p);
    setKernelChoice(path);
    const fast = fitMultinomial(p);
    expect(reference.converged && fast.converged).toBe(true);
    expect(maxRelDiff(fast.theta, reference.theta)).toBeLessThan(SAME_PATH_REL);
    expect(Math.abs(fast.logLikelihood - reference.logLikelihood)).toBeLessThan(1e-9 * Math.abs(reference.logLikelihood));
  });
});

describe("the symmetric form", () => {
  test("its intercepts sum to 0 at the estimate (the side condition enters as a penalty on their sum)", () => {
    const p = problem(500, 3, 4, { symmetric: true, equationClasses: [0, 1, 2, 3], penalty: Float64Array.of(0, 2, 2) });
    const fit = fitMultinomial(p);
    expect(fit.converged).toBe(true);
    const q = 3;
    let sum = 0;
    let size = 0;
    for (let e = 0; e < 4; e++) {
      sum += fit.theta[e * q];
      size += Math.abs(fit.theta[e * q]);
    }
    expect(size).toBeGreaterThan(0.1);
    expect(Math.abs(sum)).toBeLessThan(1e-8 * size);
  });
});

describe("pass economy of a large fit (48,000 rows x 9 columns x 4 classes, warm-started)", () => {
  const p = problem(48000, 9, 4);
  const fit = fitMultinomial(p);
  test("it converges with exactly one information pass over all rows", () => {
    expect(fit.converged).toBe(true);
    expect(fit.passes.information).toBe(1);
    expect(fit.passes.score).toBeGreaterThan(0);
    expect(fit.passes.score).toBeLessThanOrEqual(12);
  });
  test("at the estimate a fresh Newton step (reference kernel, exact score and information) is negligible", () => {
    const M = fit.theta.length;
    const out = { score: new Float64Array(M), information: new Float64Array(M * M) };
    referenceKernel({ rows: p.rows, columns: p.columns, centre: null, scale: null }, 3).pass(fit.theta, new MultinomialLikelihood(p), "information", out);
    const c = cholesky(out.information, M);
    expect(c.ok).toBe(true);
    const step = choleskySolve(c.factor, M, out.score);
    let decrement = 0;
    for (let t = 0; t < M; t++) decrement += step[t] * out.score[t];
    expect(decrement).toBeLessThan(FINAL_DECREMENT);
  });
});
