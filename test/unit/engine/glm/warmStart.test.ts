/**
 * The one warm-start rule of the large fits (src/engine/glm/warmStart.ts), shared by the binomial
 * and the multinomial fit: which tables get a subsample, how large it is, how the subsample fit's
 * penalty and information are scaled, and when its answer is refused. Both families' warm starts
 * are checked against the exact full-data information at the start they return (reference
 * kernel, plain loops). Data: invented, seeded LCG.
 */
import { BinomialLikelihood } from "../../../../src/engine/families/binomial";
import { MultinomialLikelihood } from "../../../../src/engine/families/multinomial";
import { binomialWarmStart, type BinomialProblem } from "../../../../src/engine/glm/binomialFit";
import { multinomialWarmStart, type MultinomialProblem } from "../../../../src/engine/glm/multinomialFit";
import {
  subsampleStride,
  subsampleWarmStart,
  WARM_START_MAX_ITERATIONS,
  WARM_START_MIN_ROWS,
  WARM_START_TOLERANCE,
  type SubsampleFit,
  type WarmStartFamily,
} from "../../../../src/engine/glm/warmStart";
import { referenceKernel } from "../../../../src/engine/kernels/reference";
import type { BlockLikelihood } from "../../../../src/engine/kernels/types";

/**
 * The subsample's information differs from the full one by its sampling error, about
 * 1 / sqrt(subsample rows) = 1 / sqrt(5,000) = 1.4% relative; 10% leaves room for the start not
 * being the subsample's exact optimum and for the smaller blocks of the multinomial information.
 */
const INFORMATION_REL = 0.1;

describe("which tables get a subsample, and how large", () => {
  test("below WARM_START_MIN_ROWS rows there is no subsample", () => {
    expect(WARM_START_MIN_ROWS).toBe(40000);
    expect(subsampleStride(39999, 20)).toBe(0);
    expect(subsampleStride(40000, 20)).toBe(8);
  });
  test("about 5,000 rows for narrow tables: every 20th row of 100,000 x 20", () => {
    expect(subsampleStride(100000, 20)).toBe(20);
  });
  test("the subsample grows with the column count (100 rows per column): every 10th row of 100,000 x 100", () => {
    expect(subsampleStride(100000, 100)).toBe(10);
  });
  test("no subsample when it would be (nearly) the whole table", () => {
    expect(subsampleStride(40000, 300)).toBe(0);
  });
});

/** A toy problem: rows with weights; its "fit" reports what it was given. */
interface Toy {
  rows: number;
  weights: Float64Array;
}

function toyFamily(answer: (sub: Toy, settings: { tolerance: number; maxIterations: number; share: number }) => SubsampleFit | null): WarmStartFamily<Toy> & { seen: { rows: number; share: number; tolerance: number; maxIterations: number }[] } {
  const seen: { rows: number; share: number; tolerance: number; maxIterations: number }[] = [];
  return {
    seen,
    subsample(p: Toy, stride: number): Toy {
      const weights = Float64Array.from({ length: Math.floor((p.rows - 1) / stride) + 1 }, (_, r) => p.weights[r * stride]);
      return { rows: weights.length, weights };
    },
    weight(p: Toy): number {
      return p.weights.reduce((a, b) => a + b, 0);
    },
    fit(sub: Toy, settings) {
      seen.push({ rows: sub.rows, ...settings });
      return answer(sub, settings);
    },
  };
}

const toyRows = 50000;
/** Weights 1 and 3 in turn: every 10th row (stride 10) has weight 1, so the subsample's share is 5,000 / 100,000. */
const toy: Toy = { rows: toyRows, weights: Float64Array.from({ length: toyRows }, (_, i) => (i % 2 === 0 ? 1 : 3)) };
const toySize = { rows: toyRows, columns: 2, tolerance: 1e-10, maxIterations: 100 };
const converged = (): SubsampleFit => ({ theta: Float64Array.of(0.5, -1), information: Float64Array.of(4, 1, 1, 2), converged: true, singular: false });

describe("the subsample fit's settings and the scaling of its answer", () => {
  test("the fit runs on every stride-th row at the loose tolerance and iteration cap, told its share of the total weight", () => {
    const family = toyFamily(converged);
    subsampleWarmStart(toy, toySize, family);
    expect(family.seen).toEqual([{ rows: 5000, share: 5000 / 100000, tolerance: WARM_START_TOLERANCE, maxIterations: WARM_START_MAX_ITERATIONS }]);
  });
  test("a full fit looser than the subsample settings (tolerance 1e-3, 5 iterations) keeps its own", () => {
    const family = toyFamily(converged);
    subsampleWarmStart(toy, { ...toySize, tolerance: 1e-3, maxIterations: 5 }, family);
    expect(family.seen[0].tolerance).toBe(1e-3);
    expect(family.seen[0].maxIterations).toBe(5);
  });
  test("the start is the subsample estimate and the information is scaled up by total / subsample weight", () => {
    const warm = subsampleWarmStart(toy, toySize, toyFamily(converged))!;
    expect(Array.from(warm.start)).toEqual([0.5, -1]);
    expect(Array.from(warm.information)).toEqual([80, 20, 20, 40]);
  });
  test("no warm start below the row threshold: the family is not even asked", () => {
    const family = toyFamily(converged);
    expect(subsampleWarmStart({ rows: 39999, weights: toy.weights.subarray(0, 39999) }, { ...toySize, rows: 39999 }, family)).toBeNull();
    expect(family.seen).toHaveLength(0);
  });
  test.each([
    ["the family refuses the fit", () => null],
    ["the fit did not converge", () => ({ ...converged(), converged: false })],
    ["its information is singular", () => ({ ...converged(), singular: true })],
    ["an estimate is not finite", () => ({ ...converged(), theta: Float64Array.of(0.5, Infinity) })],
  ])("no warm start when %s", (_, answer) => {
    expect(subsampleWarmStart(toy, toySize, toyFamily(answer))).toBeNull();
  });
  test("no warm start when the subsample carries no weight", () => {
    const zero: Toy = { rows: toyRows, weights: Float64Array.from({ length: toyRows }, (_, i) => (i % 10 === 0 ? 0 : 1)) };
    expect(subsampleWarmStart(zero, toySize, toyFamily(converged))).toBeNull();
  });
});

// ---- both families through the rule ---------------------------------------------------------

let seed = 4242;
const u = () => {
  seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
  return seed / 4294967296;
};
const N = 48000;
const ones = new Float64Array(N).fill(1);
const x1 = Float64Array.from({ length: N }, () => u() * 2 - 1);
const x2 = Float64Array.from({ length: N }, () => u() * 2 - 1);
const binaryY = Float64Array.from({ length: N }, (_, i) => (u() < 1 / (1 + Math.exp(-(0.3 + x1[i] - 0.8 * x2[i]))) ? 1 : 0));
const classOf = Int32Array.from({ length: N }, (_, i) => {
  const e = [0, 0.2 + x1[i], -0.1 - x2[i]].map(Math.exp);
  let t = u() * (e[0] + e[1] + e[2]);
  let k = 0;
  while (k < 2 && t > e[k]) t -= e[k++];
  return k;
});

function binomialProblem(rows: number): BinomialProblem {
  return {
    rows,
    columns: [ones, x1, x2].map((c) => c.subarray(0, rows)),
    successes: binaryY.subarray(0, rows),
    trials: new Float64Array(rows).fill(1),
    weights: new Float64Array(rows).fill(1),
    offset: new Float64Array(rows),
    penalty: new Float64Array(3),
    firth: false,
    maxIterations: 100,
    tolerance: 1e-10,
  };
}

function multinomialProblem(rows: number): MultinomialProblem {
  return {
    rows,
    classOf: classOf.subarray(0, rows),
    weights: new Float64Array(rows).fill(1),
    classes: 3,
    equationClasses: [1, 2],
    symmetric: false,
    columns: [ones, x1, x2].map((c) => c.subarray(0, rows)),
    intercept: true,
    penalty: new Float64Array(3),
    maxIterations: 100,
    tolerance: 1e-10,
  };
}

/** Exact information of all rows at theta (reference kernel), and the relative Frobenius distance to `approx`. */
function informationDistance(columns: Float64Array[], family: BlockLikelihood, theta: Float64Array, approx: Float64Array): number {
  const M = theta.length;
  const out = { score: new Float64Array(M), information: new Float64Array(M * M) };
  referenceKernel({ rows: columns[0].length, columns, centre: null, scale: null }, family.equations).pass(theta, family, "information", out);
  let diff = 0;
  let size = 0;
  for (let t = 0; t < M * M; t++) {
    diff += (approx[t] - out.information[t]) ** 2;
    size += out.information[t] ** 2;
  }
  return Math.sqrt(diff / size);
}

describe("the binomial and the multinomial fit share the rule", () => {
  test("neither family warm-starts one row below the threshold", () => {
    expect(binomialWarmStart(binomialProblem(WARM_START_MIN_ROWS - 1))).toBeNull();
    expect(multinomialWarmStart(multinomialProblem(WARM_START_MIN_ROWS - 1))).toBeNull();
  });
  test("binomial: the scaled subsample information is close to the full-data information at the start", () => {
    const p = binomialProblem(N);
    const warm = binomialWarmStart(p)!;
    expect(warm).not.toBeNull();
    const d = informationDistance(p.columns, new BinomialLikelihood(p), warm.start, warm.information);
    expect(d).toBeLessThan(INFORMATION_REL);
  });
  test("multinomial: the scaled subsample information is close to the full-data information at the start", () => {
    const p = multinomialProblem(N);
    const warm = multinomialWarmStart(p)!;
    expect(warm).not.toBeNull();
    const d = informationDistance(p.columns, new MultinomialLikelihood(p), warm.start, warm.information);
    expect(d).toBeLessThan(INFORMATION_REL);
  });
  test("Firth's fit is never warm-started (its iteration needs the whole information at every step)", () => {
    expect(binomialWarmStart({ ...binomialProblem(N), firth: true })).toBeNull();
  });
});
