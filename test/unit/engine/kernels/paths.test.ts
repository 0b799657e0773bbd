/**
 * Each fast kernel path (JavaScript blocks, WebAssembly SIMD, sparse indicators) against the plain
 * reference kernel (src/engine/kernels/reference.ts): the same log-likelihood, score and
 * information sums for designs of many shapes (one to four equations, odd block ends, centred and
 * scaled or raw columns, mostly-zero indicator columns), and the same weighted Gram matrix. The
 * family here is a made-up one (any per-row residuals and weights will do: the kernels only sum
 * them); whole fits on each path are compared in fits.test.ts.
 */
import { BlockKernel } from "../../../../src/engine/kernels/blocks";
import { referenceKernel } from "../../../../src/engine/kernels/reference";
import { SparseKernel, sparseRowLists } from "../../../../src/engine/kernels/sparse";
import { pairCount, pairIndex, type BlockLikelihood, type Kernel, type KernelDesign, type PassOutput } from "../../../../src/engine/kernels/types";
import { WasmKernel } from "../../../../src/engine/kernels/wasmPath";
import { wasmKernels } from "../../../../src/engine/kernels/wasmKernels";

/**
 * Sums of a few thousand products formed in another order (and with (x - c) * (1 / s) in place of
 * (x - c) / s, one rounding apart): rounding, relative to the sum of the terms' magnitudes.
 */
const SUM_TOL = 1e-13;

/** Deterministic, invented column values (sine recipes). */
const wave = (n: number, j: number, offset = 0) => Float64Array.from({ length: n }, (_, i) => offset + Math.sin(0.61 * i * (j + 1) + 0.3 * j) * (1 + 0.1 * j));

/** A made-up family: residuals and weights are fixed functions of the row and eta (weights >= 0 for one equation). */
class TestFamily implements BlockLikelihood {
  constructor(readonly equations: number) {}
  block(i0: number, len: number, eta: Float64Array, residual: Float64Array | null, weights: Float64Array | null, stride: number): number {
    const E = this.equations;
    let ll = 0;
    for (let r = 0; r < len; r++) {
      const i = i0 + r;
      for (let e = 0; e < E; e++) {
        const x = eta[e * stride + r];
        ll -= 0.5 * (x - Math.cos(i + e)) ** 2;
        if (residual) residual[e * stride + r] = Math.cos(i + e) - x;
        if (!weights) continue;
        for (let f = e; f < E; f++) {
          weights[pairIndex(e, f, E) * stride + r] = e === f ? 1 + 0.5 * Math.sin(i + e) + 0.01 * x * x : 0.3 * Math.cos(i + e + f);
        }
      }
    }
    return ll;
  }
}

/** |a - b| within SUM_TOL of the magnitude scale, entry by entry. */
function expectSums(got: Float64Array, expected: Float64Array, scale: Float64Array, what: string): void {
  for (let t = 0; t < expected.length; t++) {
    const err = Math.abs(got[t] - expected[t]);
    if (!(err <= SUM_TOL * scale[t])) throw new Error(`${what}[${t}]: ${got[t]} vs ${expected[t]} (scale ${scale[t]})`);
  }
}

/** |z| columns of a design (no centring or scaling left to apply). */
function absoluteDesign(design: KernelDesign): KernelDesign {
  const columns = design.columns.map((x, j) => Float64Array.from(x, (v) => Math.abs(design.centre && design.scale ? (v - design.centre[j]) / design.scale[j] : v)));
  return { rows: design.rows, columns, centre: null, scale: null };
}

/** Magnitude scales of the score and information sums: the same sums of |terms|, by the reference kernel. */
function magnitudes(design: KernelDesign, E: number, theta: Float64Array): PassOutput {
  const n = design.rows;
  const q = design.columns.length;
  const etaRows = new Float64Array(E * n);
  const capture: BlockLikelihood = {
    equations: E,
    block(_i0, _len, eta) {
      etaRows.set(eta.subarray(0, E * n));
      return 0;
    },
  };
  const out = { score: new Float64Array(E * q), information: new Float64Array(E * q * E * q) };
  referenceKernel(design, E).pass(theta, capture, "value", out);
  const residual = new Float64Array(E * n);
  const weights = new Float64Array(pairCount(E) * n);
  new TestFamily(E).block(0, n, etaRows, residual, weights, n);
  const absolute: BlockLikelihood = {
    equations: E,
    block(i0, len, _eta, res, w, stride) {
      for (let r = 0; r < len; r++) {
        for (let e = 0; e < E; e++) if (res) res[e * stride + r] = Math.abs(residual[e * n + i0 + r]);
        for (let p = 0; p < pairCount(E); p++) if (w) w[p * stride + r] = Math.abs(weights[p * n + i0 + r]);
      }
      return 0;
    },
  };
  referenceKernel(absoluteDesign(design), E).pass(new Float64Array(E * q), absolute, "information", out);
  return out;
}

function passOf(kernel: Kernel, design: KernelDesign, E: number, theta: Float64Array): PassOutput & { ll: number } {
  const q = design.columns.length;
  const out = { score: new Float64Array(E * q), information: new Float64Array(E * q * E * q) };
  const ll = kernel.pass(theta, new TestFamily(E), "information", out);
  return { ...out, ll };
}

interface Shape {
  rows: number;
  q: number;
  E: number;
  scaled: boolean;
}

function designOf(s: Shape): KernelDesign {
  const columns = Array.from({ length: s.q }, (_, j) => (j === 0 ? new Float64Array(s.rows).fill(1) : wave(s.rows, j, 3 * j)));
  return {
    rows: s.rows,
    columns,
    centre: s.scaled ? Float64Array.from({ length: s.q }, (_, j) => (j === 0 ? 0 : 3 * j + 0.1)) : null,
    scale: s.scaled ? Float64Array.from({ length: s.q }, (_, j) => (j === 0 ? 1 : 0.7 + 0.2 * j)) : null,
  };
}

const thetaOf = (E: number, q: number) => Float64Array.from({ length: E * q }, (_, t) => 0.3 * Math.cos(1.7 * t) - 0.1);

const SHAPES: Shape[] = [
  { rows: 1, q: 1, E: 1, scaled: false },
  { rows: 3, q: 2, E: 1, scaled: true },
  { rows: 513, q: 5, E: 1, scaled: true },
  { rows: 1025, q: 21, E: 1, scaled: true },
  { rows: 7, q: 4, E: 2, scaled: false },
  { rows: 257, q: 7, E: 3, scaled: true },
  { rows: 601, q: 21, E: 4, scaled: true },
];

function checkAgainstReference(kernel: Kernel, design: KernelDesign, E: number): void {
  const q = design.columns.length;
  const theta = thetaOf(E, q);
  const expected = passOf(referenceKernel(design, E), design, E, theta);
  const got = passOf(kernel, design, E, theta);
  const scale = magnitudes(design, E, theta);
  expectSums(Float64Array.of(got.ll), Float64Array.of(expected.ll), Float64Array.of(Math.abs(expected.ll) + 1), "log-likelihood");
  expectSums(got.score, expected.score, scale.score, "score");
  expectSums(got.information, expected.information, scale.information, "information");
  // Value and score passes agree with the information pass.
  const scoreOnly = { score: new Float64Array(E * q), information: new Float64Array(E * q * E * q) };
  expect(kernel.pass(theta, new TestFamily(E), "score", scoreOnly)).toBe(got.ll);
  expectSums(scoreOnly.score, expected.score, scale.score, "score pass");
  expect(kernel.pass(theta, new TestFamily(E), "value", scoreOnly)).toBe(got.ll);
  // The weighted Gram matrix.
  const w = Float64Array.from({ length: design.rows }, (_, i) => 1 + 0.5 * Math.sin(3 * i));
  const gramRef = referenceKernel(design, 1).gram(w, new Float64Array(q * q));
  const gram = kernel.gram(w, new Float64Array(q * q));
  const gramScale = referenceKernel(absoluteDesign(design), 1).gram(w, new Float64Array(q * q));
  expectSums(gram, gramRef, gramScale, "gram");
}

describe("the JavaScript block path equals the reference kernel", () => {
  test.each(SHAPES)("%o", (s) => {
    const design = designOf(s);
    checkAgainstReference(new BlockKernel(design, s.E), design, s.E);
  });
});

describe("the WebAssembly path equals the reference kernel", () => {
  test("WebAssembly SIMD runs in Node 20, so this path is really compared", () => {
    expect(wasmKernels()).not.toBeNull();
  });
  test.each(SHAPES)("%o", (s) => {
    const design = designOf(s);
    checkAgainstReference(new WasmKernel(design, s.E, wasmKernels()!, new BlockKernel(design, s.E)), design, s.E);
  });
});

describe("the sparse indicator path equals the reference kernel", () => {
  /** An intercept, two numeric columns and indicators of an 8-level text column (one level per row). */
  function indicatorDesign(rows: number, scaled: boolean): KernelDesign {
    const levels = 8;
    const columns = [new Float64Array(rows).fill(1), wave(rows, 1, 2), wave(rows, 2)];
    for (let l = 1; l < levels; l++) columns.push(Float64Array.from({ length: rows }, (_, i) => ((i * 7 + (i >> 3)) % (levels + 3) === l ? 1 : 0)));
    const q = columns.length;
    return {
      rows,
      columns,
      centre: scaled ? Float64Array.from({ length: q }, (_, j) => (j === 0 ? 0 : j < 3 ? 2 - j : 0.09)) : null,
      scale: scaled ? Float64Array.from({ length: q }, (_, j) => (j === 0 ? 1 : j < 3 ? 0.7 : 0.29)) : null,
    };
  }

  test.each([
    [1000, true],
    [1001, false],
  ])("%i rows, centred and scaled: %s", (rows, scaled) => {
    const design = indicatorDesign(rows, scaled);
    const lists = sparseRowLists(design.columns, rows, 1)!;
    expect(lists.filter((l) => l !== null).length).toBe(7);
    checkAgainstReference(new SparseKernel(design, lists, (d, e) => new BlockKernel(d, e)), design, 1);
    checkAgainstReference(new SparseKernel(design, lists, (d, e) => new WasmKernel(d, e, wasmKernels()!, new BlockKernel(d, e))), design, 1);
  });
});

describe("layout helpers", () => {
  test("pairs (e, f), e <= f, are numbered row by row", () => {
    const E = 4;
    const seen: number[] = [];
    for (let e = 0; e < E; e++) for (let f = e; f < E; f++) seen.push(pairIndex(e, f, E));
    expect(seen).toEqual(Array.from({ length: pairCount(E) }, (_, k) => k));
  });
});
