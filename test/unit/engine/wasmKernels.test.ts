/**
 * The WebAssembly kernels (src/engine/kernels/kernels.wat) against the JavaScript kernels they
 * stand in for, and fits with and without them. Both compute the same sums in another order
 * (two lanes of even and odd rows), so they agree to rounding; the fits then agree to rounding
 * and the convergence rule. Data: deterministic sine/cosine recipes (invented).
 */
import * as fs from "fs";
import * as path from "path";
import { accumulateWeightedGrams } from "../../../src/engine/blockAccumulate";
import { fitBinaryModel } from "../../../src/engine/binary";
import { KERNELS_WASM_BASE64 } from "../../../src/engine/kernels/kernelsWasm";
import { setWasmKernelsEnabled, wasmKernels } from "../../../src/engine/kernels/wasmKernels";
import { accumulateBlockGram } from "../../../src/engine/linalg";
import { fitMulticlassModel } from "../../../src/engine/multiclass";
import type { DesignMatrix, ModelFit } from "../../../src/engine/types";

// eslint-disable-next-line @typescript-eslint/no-require-imports
const build = require("../../../scripts/build-kernels.cjs") as {
  KERNELS_DIR: string;
  compileKernels(text: string): Promise<Buffer>;
};

/** Sums of a few hundred products of numbers near 1 in two orders: rounding, relative to the sum of |terms|. */
const SUM_TOL = 1e-14;
/**
 * Whole fits with the information summed in another order: estimates and standard errors agree to
 * rounding amplified by the condition of the information, far below the convergence rule's 1e-10.
 */
const FIT_TOL = 1e-9;

const column = (rows: number, j: number) => Float64Array.from({ length: rows }, (_, i) => Math.sin(0.61 * i * (j + 1) + 0.3 * j) * (1 + 0.1 * j));

afterEach(() => setWasmKernelsEnabled(true));

describe("the committed kernel bytes", () => {
  test("are kernels.wat compiled again (npm run build:kernels keeps them in step)", async () => {
    const text = fs.readFileSync(path.join(build.KERNELS_DIR, "kernels.wat"), "utf8");
    const bytes = await build.compileKernels(text);
    expect(bytes.toString("base64")).toBe(KERNELS_WASM_BASE64);
  });

  test("load in Node 20, which runs WebAssembly SIMD (so the tests below compare both paths)", () => {
    expect(wasmKernels()).not.toBeNull();
  });

  test("are bypassed when switched off (the JavaScript kernels then run)", () => {
    setWasmKernelsEnabled(false);
    expect(wasmKernels()).toBeNull();
  });
});

describe("gram kernel", () => {
  test.each([
    [6, 8],
    [9, 2],
    [3, 512],
  ])("equals accumulateBlockGram for %i columns and %i rows (tiles on and above the diagonal)", (k, len) => {
    const stride = 512;
    const wasm = wasmKernels()!;
    const outAt = k * stride;
    const mem = wasm.reserve(outAt + k * k)!;
    const js = new Float64Array(k * stride);
    for (let j = 0; j < k; j++) js.set(column(len, j), j * stride);
    mem.set(js, 0);
    mem.fill(0, outAt, outAt + k * k);
    const expected = new Float64Array(k * k);
    accumulateBlockGram(js, k, len, stride, expected);
    wasm.gram(0, k, len, stride, outAt);
    const got = wasm.reserve(outAt + k * k)!.subarray(outAt, outAt + k * k);
    for (let j = 0; j < k; j++) {
      for (let l = j; l < k; l++) {
        let scale = 0;
        for (let r = 0; r < len; r++) scale += Math.abs(js[j * stride + r] * js[l * stride + r]);
        expect(Math.abs(got[j * k + l] - expected[j * k + l])).toBeLessThanOrEqual(SUM_TOL * scale);
      }
    }
  });
});

describe("weightedGrams kernel", () => {
  test.each([
    [5, 7, 10],
    [4, 4, 256],
    [1, 1, 2],
  ])("equals accumulateWeightedGrams for %i columns, %i weight vectors and %i rows", (q, m, len) => {
    const stride = 256;
    const z = Array.from({ length: q }, (_, j) => column(len, j));
    const v = new Float64Array(m * stride);
    for (let k = 0; k < m; k++) v.set(column(len, 10 + k).map((x, i) => (k % 2 === 0 ? x * x : -x * column(len, 3)[i] ** 2)), k * stride);
    const expected = new Float64Array(q * q * m);
    accumulateWeightedGrams(z, 0, len, v, stride, m, expected);
    const wasm = wasmKernels()!;
    const vAt = q * stride;
    const outAt = vAt + m * stride;
    const mem = wasm.reserve(outAt + q * q * m)!;
    z.forEach((c, j) => mem.set(c, j * stride));
    mem.set(v, vAt);
    mem.fill(0, outAt, outAt + q * q * m);
    wasm.weightedGrams(0, q, len, vAt, stride, m, outAt);
    const got = wasm.reserve(outAt + q * q * m)!;
    for (let b = 0; b < q; b++) {
      for (let a = 0; a <= b; a++) {
        for (let k = 0; k < m; k++) {
          let scale = 0;
          for (let r = 0; r < len; r++) scale += Math.abs(z[a][r] * z[b][r] * v[k * stride + r]);
          const at = (a * q + b) * m + k;
          expect(Math.abs(got[outAt + at] - expected[at])).toBeLessThanOrEqual(SUM_TOL * scale);
        }
      }
    }
  });
});

describe("scaleBlock kernel", () => {
  test.each([true, false])("centres, scales and weights a block in place, and sums the residual products (with residuals: %s)", (withResidual) => {
    const k = 4;
    const len = 10;
    const stride = 16;
    const wasm = wasmKernels()!;
    const swAt = k * stride;
    const uAt = swAt + stride;
    const cAt = uAt + stride;
    const fAt = cAt + k;
    const outAt = fAt + k;
    const mem = wasm.reserve(outAt + k)!;
    const x = Array.from({ length: k }, (_, j) => column(len, j).map((v) => 100 + 10 * v));
    const sw = column(len, 7).map((v) => Math.sqrt(0.25 * Math.abs(v)));
    const u = column(len, 8);
    const c = [100, 101, 99, 100.5];
    const f = [0.1, 0.2, 0.05, 1];
    x.forEach((col, j) => mem.set(col, j * stride));
    mem.set(sw, swAt);
    mem.set(u, uAt);
    mem.set(c, cAt);
    mem.set(f, fAt);
    mem.fill(0, outAt, outAt + k);
    wasm.scaleBlock(0, k, len, stride, swAt, cAt, fAt, withResidual ? uAt : 0, outAt);
    const got = wasm.reserve(outAt + k)!;
    for (let j = 0; j < k; j++) {
      let dot = 0;
      let scale = 0;
      for (let r = 0; r < len; r++) {
        const d = x[j][r] - c[j];
        expect(Math.abs(got[j * stride + r] - sw[r] * d * f[j])).toBeLessThanOrEqual(SUM_TOL * Math.abs(sw[r] * d * f[j]));
        dot += u[r] * d;
        scale += Math.abs(u[r] * d);
      }
      if (withResidual) expect(Math.abs(got[outAt + j] - dot)).toBeLessThanOrEqual(SUM_TOL * scale);
      else expect(got[outAt + j]).toBe(0);
    }
  });
});

describe("predictors and crossSums kernels", () => {
  test.each([
    [5, 3, 10],
    [8, 4, 256],
    [1, 1, 2],
  ])("match direct sums for %i columns, %i equations and %i rows", (q, m, len) => {
    const stride = 256;
    const wasm = wasmKernels()!;
    const thetaAt = q * stride;
    const etaAt = thetaAt + m * q;
    const uAt = etaAt + m * stride;
    const outAt = uAt + m * stride;
    const mem = wasm.reserve(outAt + m * q)!;
    const z = Array.from({ length: q }, (_, j) => column(len, j));
    const theta = Float64Array.from({ length: m * q }, (_, t) => Math.cos(1.7 * t) - 0.2);
    const u = Array.from({ length: m }, (_, k) => column(len, 20 + k));
    z.forEach((c, j) => mem.set(c, j * stride));
    mem.set(theta, thetaAt);
    u.forEach((c, k) => mem.set(c, uAt + k * stride));
    mem.fill(0, outAt, outAt + m * q);
    wasm.predictors(0, q, len, stride, thetaAt, m, etaAt);
    wasm.crossSums(0, q, len, stride, uAt, m, outAt);
    const got = wasm.reserve(outAt + m * q)!;
    for (let e = 0; e < m; e++) {
      for (let r = 0; r < len; r++) {
        let eta = 0;
        let scale = 0;
        for (let j = 0; j < q; j++) {
          eta += theta[e * q + j] * z[j][r];
          scale += Math.abs(theta[e * q + j] * z[j][r]);
        }
        expect(Math.abs(got[etaAt + e * stride + r] - eta)).toBeLessThanOrEqual(SUM_TOL * scale);
      }
      for (let j = 0; j < q; j++) {
        let dot = 0;
        let scale = 0;
        for (let r = 0; r < len; r++) {
          dot += z[j][r] * u[e][r];
          scale += Math.abs(z[j][r] * u[e][r]);
        }
        expect(Math.abs(got[outAt + e * q + j] - dot)).toBeLessThanOrEqual(SUM_TOL * scale);
      }
    }
  });
});

function expectSameFit(a: ModelFit, b: ModelFit): void {
  expect(a.converged).toBe(true);
  expect(b.converged).toBe(true);
  for (let t = 0; t < a.table.length; t++) {
    expect(Math.abs(a.table[t].estimate - b.table[t].estimate)).toBeLessThan(FIT_TOL * (1 + Math.abs(b.table[t].estimate)));
    expect(Math.abs(a.table[t].standardError / b.table[t].standardError - 1)).toBeLessThan(FIT_TOL);
  }
  expect(Math.abs(a.logLikelihood / b.logLikelihood - 1)).toBeLessThan(1e-13);
}

describe("fits with and without the WebAssembly kernels", () => {
  test("a binary fit of 45,001 rows (odd: the last block is padded) is the same either way", () => {
    const rows = 45001;
    const X: DesignMatrix = { rows, columns: [0, 1, 2, 3].map((j) => column(rows, j)), names: ["a", "b", "c", "d"] };
    const y = Float64Array.from({ length: rows }, (_, i) => (Math.sin(1.3 * i) + 0.8 * X.columns[0][i] - 0.5 * X.columns[2][i] > 0.2 ? 1 : 0));
    const withWasm = fitBinaryModel(X, y);
    setWasmKernelsEnabled(false);
    const withoutWasm = fitBinaryModel(X, y);
    expectSameFit(withWasm, withoutWasm);
  });

  test("a three-class fit of 40,001 rows is the same either way", () => {
    const rows = 40001;
    const X: DesignMatrix = { rows, columns: [0, 1, 2].map((j) => column(rows, j)), names: ["a", "b", "c"] };
    const cls = Int32Array.from({ length: rows }, (_, i) => {
      const s = Math.sin(2.1 * i) + X.columns[0][i] - 0.7 * X.columns[1][i];
      return s > 0.6 ? 2 : s > -0.4 ? 1 : 0;
    });
    const withWasm = fitMulticlassModel(X, cls, ["p", "q", "r"]);
    setWasmKernelsEnabled(false);
    const withoutWasm = fitMulticlassModel(X, cls, ["p", "q", "r"]);
    expectSameFit(withWasm, withoutWasm);
  });
});
