/**
 * The JavaScript block path: the sums of kernels/types.ts taken a block of rows at a time. Each
 * block's fitting columns are formed once in a small buffer (centred and scaled), which then stays
 * in cache while the linear predictors, the family's block, the score and the information are
 * taken from it (one read of the stored design per pass). The sums themselves are the tile
 * kernels of kernels/tiles.ts. With one equation the information is the Gram matrix of the block
 * with each row scaled by sqrt(W_i) (one buffer instead of a weighted and an unweighted copy).
 * Reference: Golub & Van Loan (2013), sec. 1.5 (blocked products); McCullagh & Nelder (1989), ch. 2.
 */
import { mirrorUpper } from "../linalg";
import { accumulateBlockGram, accumulateCrossProducts, accumulateWeightedGrams, linearPredictors } from "./tiles";
import { pairCount, type BlockLikelihood, type Kernel, type KernelDesign, type PassOutput, type PassWants } from "./types";

/**
 * Rows per block: the block's columns, predictors, residuals and weights stay in the second-level
 * cache (21 columns of 512 rows with one equation, or of 256 rows with five classes, under 100 KB).
 */
export function blockRows(equations: number): number {
  return equations === 1 ? 512 : 256;
}

/** Columns of the Gram buffer: q rounded up to a multiple of 3 (the 3 x 3 tiles), at least 3. */
export function paddedColumns(q: number): number {
  return Math.max(3, 3 * Math.ceil(q / 3));
}

/**
 * Fitting columns of rows i0 .. i0 + len - 1 into z[j * stride ..]: (x - centre) / scale, multiplying
 * by the reciprocal unless it overflows (then dividing), or the stored column as it is.
 */
export function loadBlock(design: KernelDesign, i0: number, len: number, z: Float64Array, stride: number): void {
  const q = design.columns.length;
  for (let j = 0; j < q; j++) {
    const x = design.columns[j];
    const base = j * stride - i0;
    if (!design.centre || !design.scale) {
      for (let i = i0; i < i0 + len; i++) z[base + i] = x[i];
      continue;
    }
    const c = design.centre[j];
    const s = design.scale[j];
    const inv = 1 / s;
    if (Number.isFinite(inv)) {
      for (let i = i0; i < i0 + len; i++) z[base + i] = (x[i] - c) * inv;
    } else {
      for (let i = i0; i < i0 + len; i++) z[base + i] = (x[i] - c) / s;
    }
  }
}

/** Rows of the block scaled by the square roots of their weights (q columns, in place). */
function rootWeightRows(z: Float64Array, q: number, len: number, stride: number, w: Float64Array, root: Float64Array): void {
  for (let r = 0; r < len; r++) root[r] = Math.sqrt(w[r]);
  for (let j = 0; j < q; j++) {
    const base = j * stride;
    for (let r = 0; r < len; r++) z[base + r] *= root[r];
  }
}

/**
 * The full information (M x M, M = E q) from its packed upper-triangle blocks
 * blocks[(a q + b) pairs + pair(e, f)], a <= b, e <= f (as the tile and WebAssembly kernels write them).
 */
export function assembleInformation(blocks: Float64Array, q: number, E: number, out: Float64Array): Float64Array {
  const M = E * q;
  const pairs = pairCount(E);
  out.fill(0);
  let pr = 0;
  for (let e = 0; e < E; e++) {
    for (let f = e; f < E; f++) {
      for (let a = 0; a < q; a++) {
        for (let b = a; b < q; b++) {
          const val = blocks[(a * q + b) * pairs + pr];
          out[(e * q + a) * M + f * q + b] = val;
          out[(e * q + b) * M + f * q + a] = val;
        }
      }
      pr++;
    }
  }
  return mirrorUpper(out, M);
}

/** The upper triangle of a padded Gram sum (kp x kp) as a full symmetric q x q matrix. */
export function unpadGram(acc: Float64Array, kp: number, q: number, out: Float64Array): Float64Array {
  for (let j = 0; j < q; j++) for (let l = j; l < q; l++) out[j * q + l] = acc[j * kp + l];
  return mirrorUpper(out, q);
}

/** The JavaScript block kernel of one design (see the file comment). */
export class BlockKernel implements Kernel {
  readonly name = "blocks";
  private readonly q: number;
  private readonly E: number;
  private readonly pairs: number;
  private readonly stride: number;
  private readonly kp: number;
  private readonly z: Float64Array;
  private readonly eta: Float64Array;
  private readonly residual: Float64Array;
  private readonly weights: Float64Array;
  private readonly root: Float64Array;
  private readonly gramSums: Float64Array;
  private readonly blockSums: Float64Array;

  constructor(
    private readonly design: KernelDesign,
    equations: number,
  ) {
    this.q = design.columns.length;
    this.E = equations;
    this.pairs = pairCount(equations);
    this.stride = blockRows(equations);
    this.kp = paddedColumns(this.q);
    this.z = new Float64Array(this.kp * this.stride);
    this.eta = new Float64Array(this.E * this.stride);
    this.residual = new Float64Array(this.E * this.stride);
    this.weights = new Float64Array(this.pairs * this.stride);
    this.root = new Float64Array(this.stride);
    this.gramSums = new Float64Array(this.kp * this.kp);
    this.blockSums = equations === 1 ? new Float64Array(0) : new Float64Array(this.q * this.q * this.pairs);
  }

  pass(theta: Float64Array, family: BlockLikelihood, wants: PassWants, out: PassOutput): number {
    const { design, q, E, stride, z, eta, residual, weights } = this;
    const n = design.rows;
    const score = wants !== "value";
    const info = wants === "information";
    if (score) out.score.fill(0, 0, E * q);
    if (info) (E === 1 ? this.gramSums : this.blockSums).fill(0);
    let logLikelihood = 0;
    for (let i0 = 0; i0 < n; i0 += stride) {
      const len = Math.min(stride, n - i0);
      loadBlock(design, i0, len, z, stride);
      linearPredictors(z, q, len, stride, theta, E, eta);
      logLikelihood += family.block(i0, len, eta, score ? residual : null, info ? weights : null, stride);
      if (score) accumulateCrossProducts(z, q, len, stride, residual, E, out.score);
      if (!info) continue;
      if (E === 1) {
        rootWeightRows(z, q, len, stride, weights, this.root);
        accumulateBlockGram(z, this.kp, len, stride, this.gramSums);
      } else {
        accumulateWeightedGrams(z, q, len, stride, weights, this.pairs, this.blockSums);
      }
    }
    if (info && E === 1) unpadGram(this.gramSums, this.kp, q, out.information);
    else if (info) assembleInformation(this.blockSums, q, E, out.information);
    return logLikelihood;
  }

  gram(w: Float64Array, out: Float64Array): Float64Array {
    const { design, q, stride, z } = this;
    const n = design.rows;
    this.gramSums.fill(0);
    for (let i0 = 0; i0 < n; i0 += stride) {
      const len = Math.min(stride, n - i0);
      loadBlock(design, i0, len, z, stride);
      rootWeightRows(z, q, len, stride, w.subarray(i0, i0 + len), this.root);
      accumulateBlockGram(z, this.kp, len, stride, this.gramSums);
    }
    return unpadGram(this.gramSums, this.kp, q, out);
  }
}
