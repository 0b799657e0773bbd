/**
 * The WebAssembly path: the block path of kernels/blocks.ts with its sums run by the SIMD kernels
 * of kernels.wat (loaded by wasmKernels.ts). Each block's stored columns are copied into the
 * module's memory, centred and scaled there (scaleBlock), and the linear predictors
 * (predictors), score (crossSums) and information (gram on the sqrt(W)-scaled block with one
 * equation, weightedGrams with several) are taken from that copy; the family's block reads and
 * writes views of the same memory. The kernels take rows in pairs, so an odd block gets a zero row
 * (weights and residuals 0: it adds nothing).
 * With one equation a pass without the information runs on the JavaScript block path instead: there
 * the copy into the module's memory costs what SIMD saves (measured on 100,000 x 21; bench/RESULTS.md).
 * Reference: WebAssembly Core Specification 2.0 (2022), fixed-width SIMD; Golub & Van Loan (2013),
 * sec. 1.5.
 */
import { assembleInformation, blockRows, paddedColumns, unpadGram } from "./blocks";
import { pairCount, type BlockLikelihood, type Kernel, type KernelDesign, type PassOutput, type PassWants } from "./types";
import type { WasmKernels } from "./wasmKernels";

/** Offsets (in doubles) of the regions of the module's memory used by one kernel. */
interface MemoryLayout {
  z: number;
  eta: number;
  residual: number;
  weights: number;
  root: number;
  ones: number;
  theta: number;
  score: number;
  centre: number;
  factor: number;
  zeros: number;
  unit: number;
  sums: number;
  end: number;
}

function layout(q: number, E: number, stride: number): MemoryLayout {
  const kp = paddedColumns(q);
  const z = 0;
  const eta = z + kp * stride;
  const residual = eta + E * stride;
  const weights = residual + E * stride;
  const root = weights + pairCount(E) * stride;
  const ones = root + stride;
  const theta = ones + stride;
  const score = theta + E * q;
  const centre = score + E * q;
  const factor = centre + q;
  const zeros = factor + q;
  const unit = zeros + q;
  const sums = unit + q;
  const end = sums + (E === 1 ? kp * kp : q * q * pairCount(E));
  return { z, eta, residual, weights, root, ones, theta, score, centre, factor, zeros, unit, sums, end };
}

/** True when every column's reciprocal scale is finite (the kernels multiply by it). */
export function reciprocalScalesFinite(design: KernelDesign): boolean {
  if (!design.scale) return true;
  for (let j = 0; j < design.scale.length; j++) if (!Number.isFinite(1 / design.scale[j])) return false;
  return true;
}

/** The WebAssembly kernel of one design; `fallback` (the JavaScript block kernel) takes what it does not. */
export class WasmKernel implements Kernel {
  readonly name = "wasm";
  private readonly q: number;
  private readonly E: number;
  private readonly stride: number;
  private readonly at: MemoryLayout;

  constructor(
    private readonly design: KernelDesign,
    equations: number,
    private readonly wasm: WasmKernels,
    private readonly fallback: Kernel,
  ) {
    this.q = design.columns.length;
    this.E = equations;
    this.stride = blockRows(equations);
    this.at = layout(this.q, equations, this.stride);
  }

  /** The module's memory prepared for a pass: padding zeroed, centres, reciprocal scales and constants set. */
  private prepare(): Float64Array | null {
    const { q, at, stride, design } = this;
    const mem = this.wasm.reserve(at.end);
    if (!mem) return null;
    mem.fill(0, 0, at.end);
    for (let j = 0; j < q; j++) {
      mem[at.centre + j] = design.centre && design.scale ? design.centre[j] : 0;
      mem[at.factor + j] = design.centre && design.scale ? 1 / design.scale[j] : 1;
      mem[at.unit + j] = 1;
    }
    mem.fill(1, at.ones, at.ones + stride);
    return mem;
  }

  /** Copy rows i0 .. i0 + len - 1 of the stored columns into the block region, a zero row after an odd block. */
  private copyBlock(mem: Float64Array, i0: number, len: number, even: number): void {
    const { q, stride, design } = this;
    for (let j = 0; j < q; j++) {
      mem.set(design.columns[j].subarray(i0, i0 + len), j * stride);
      if (even > len) mem[j * stride + len] = 0;
    }
  }

  pass(theta: Float64Array, family: BlockLikelihood, wants: PassWants, out: PassOutput): number {
    if (this.E === 1 && wants !== "information") return this.fallback.pass(theta, family, wants, out);
    const mem = this.prepare();
    if (!mem) return this.fallback.pass(theta, family, wants, out);
    const { q, E, stride, at, wasm } = this;
    const pairs = pairCount(E);
    const n = this.design.rows;
    const score = wants !== "value";
    const info = wants === "information";
    mem.set(theta.subarray(0, E * q), at.theta);
    const eta = mem.subarray(at.eta, at.eta + E * stride);
    const residual = mem.subarray(at.residual, at.residual + E * stride);
    const weights = mem.subarray(at.weights, at.weights + pairs * stride);
    let logLikelihood = 0;
    for (let i0 = 0; i0 < n; i0 += stride) {
      const len = Math.min(stride, n - i0);
      const even = len + (len & 1);
      this.copyBlock(mem, i0, len, even);
      wasm.scaleBlock(at.z, q, even, stride, at.ones, at.centre, at.factor, 0, 0);
      wasm.predictors(at.z, q, even, stride, at.theta, E, at.eta);
      logLikelihood += family.block(i0, len, eta, score ? residual : null, info ? weights : null, stride);
      if (even > len) {
        for (let e = 0; e < E; e++) residual[e * stride + len] = 0;
        for (let p = 0; p < pairs; p++) weights[p * stride + len] = 0;
      }
      if (score) wasm.crossSums(at.z, q, even, stride, at.residual, E, at.score);
      if (!info) continue;
      if (E === 1) {
        for (let r = 0; r < even; r++) mem[at.root + r] = Math.sqrt(weights[r]);
        wasm.scaleBlock(at.z, q, even, stride, at.root, at.zeros, at.unit, 0, 0);
        wasm.gram(at.z, paddedColumns(q), even, stride, at.sums);
      } else {
        wasm.weightedGrams(at.z, q, even, at.weights, stride, pairs, at.sums);
      }
    }
    if (score) out.score.set(mem.subarray(at.score, at.score + E * q));
    if (info && E === 1) unpadGram(mem.subarray(at.sums, at.end), paddedColumns(q), q, out.information);
    else if (info) assembleInformation(mem.subarray(at.sums, at.end), q, E, out.information);
    return logLikelihood;
  }

  gram(w: Float64Array, out: Float64Array): Float64Array {
    const mem = this.prepare();
    if (!mem) return this.fallback.gram(w, out);
    const { q, stride, at, wasm } = this;
    const n = this.design.rows;
    for (let i0 = 0; i0 < n; i0 += stride) {
      const len = Math.min(stride, n - i0);
      const even = len + (len & 1);
      this.copyBlock(mem, i0, len, even);
      for (let r = 0; r < len; r++) mem[at.root + r] = Math.sqrt(w[i0 + r]);
      if (even > len) mem[at.root + len] = 0;
      wasm.scaleBlock(at.z, q, even, stride, at.root, at.centre, at.factor, 0, 0);
      wasm.gram(at.z, paddedColumns(q), even, stride, at.sums);
    }
    return unpadGram(mem.subarray(at.sums, at.end), paddedColumns(q), q, out);
  }
}
