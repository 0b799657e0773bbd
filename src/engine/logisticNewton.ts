/**
 * The Newton-Raphson (equivalently IRLS) core of the binary logistic fit, on columns that the
 * caller has already centred and scaled. Kept apart from fitBinaryModel so the profile-likelihood
 * and null-model fits reuse exactly the same loop.
 *
 * Objective (minimized):  F(g) = -l(g) + (1/2) sum_j pen_j g_j^2 - [firth] (1/2) log det I(g),
 * with l(g) = sum_i w_i [ y_i log mu_i + (t_i - y_i) log(1 - mu_i) ], mu_i = sigmoid(offset_i + z_i'g).
 * Step: g <- g + I_pen^{-1} U, I_pen = Z'WZ + diag(pen), W_i = w_i t_i mu_i (1 - mu_i), U the
 * (modified) score. The step is halved while F does not decrease sufficiently (Armijo's rule; glm.fit
 * halves on divergence in the same spirit).
 * Convergence: |D - D_old| / (0.1 w + |D|) < tol with D = 2F (the penalized deviance up to a
 * constant), the rule of R's glm.fit (R Core Team, src/library/stats/R/glm.R) with its floor 0.1
 * scaled by the mean case weight w, so that rescaling every weight (say to 1e-12) changes nothing;
 * capped by maxIterations;
 * Firth fits additionally need the largest relative step below 1e-11. A warm start with an
 * approximate information (NewtonProblem.startInformation) iterates with it first and stops on the
 * Newton decrement instead (see there); the information returned is always the exact one.
 * Layout: the kernels run over row blocks of ROW_BLOCK rows, forming the centred and scaled
 * columns of a block in a small buffer (no scaled copy of the design); mostly-zero columns may be
 * handled through their non-zero rows (NewtonProblem.sparseRows).
 * References: P. McCullagh & J. A. Nelder, Generalized Linear Models, 2nd ed. (1989), ch. 2 (IRLS);
 * Firth (1993) and Heinze & Schemper (2002) for the modified score (see firth.ts).
 */

import { addFirthScoreAdjustment, hatValues, logDetFromCholesky } from "./firth";
import { wasmKernels, type WasmKernels } from "./kernels/wasmKernels";
import { accumulateBlockCrossProduct, accumulateBlockGram, cholesky, choleskySolve, mirrorUpper, subMatrix, type SquareMatrix } from "./linalg";

/** Everything the Newton core needs, in the fitting (centred and scaled) coordinates. */
export interface NewtonProblem {
  rows: number;
  /** k design columns, intercept (all ones) first when present. */
  columns: Float64Array[];
  /** Successes per row (0/1 for ungrouped data). */
  successes: Float64Array;
  /** Trials per row (1 for ungrouped data). */
  trials: Float64Array;
  /** Case weights per row (> 0). */
  weights: Float64Array;
  /** Offset per row. */
  offset: Float64Array;
  /** Ridge penalty per column, >= 0 (0 for the intercept). */
  penalty: Float64Array;
  firth: boolean;
  maxIterations: number;
  tolerance: number;
  /** Starting coefficients (length k); default: intercept at the logit of the pooled rate, rest 0. */
  start?: Float64Array | null;
  /** Keep every iterate (used by the separation check). */
  keepHistory?: boolean;
  /**
   * Which coefficients are estimated (1) or held at their start value (0) [all free]. The
   * information (and Firth's penalty) still uses every column: this is how a Firth model with some
   * coefficients fixed at 0 is fitted (Heinze & Schemper 2002, penalized LR tests).
   */
  free?: Uint8Array | null;
  /**
   * Z' diag(w t) Z for these columns, when the caller has it already: if every starting
   * probability is the same (constant offset), the first information is mu0 (1 - mu0) times it,
   * which saves one pass of p(p+1)/2 dot products.
   */
  unitGram?: SquareMatrix | null;
  /**
   * Optional centring and scaling applied on the fly: when given, `columns` hold the original
   * values and fitting column j is (columns[j] - centre[j]) / scale[j], formed a row block at a
   * time into a small buffer (no full scaled copy of the design). Firth fits, whose hat values need
   * whole columns, form the scaled copy once at the start.
   */
  centre?: Float64Array | null;
  scale?: Float64Array | null;
  /**
   * An approximation of the information at `start` (for a warm start: the information of a fit on
   * a subsample, scaled up to the full weight). The first iterations use it, refined by a BFGS
   * update along each step, in place of Z'WZ (each then costs one pass over the data, evaluation and score together, instead of a full
   * cross-product); once their predicted relative deviance change (the Newton decrement U'H^{-1}U;
   * Boyd & Vandenberghe, Convex Optimization, 2004, sec. 9.5.1) is below the tolerance, or after
   * MAX_APPROXIMATE_STEPS, the exact information is formed and the iterations finish as
   * Newton-Raphson under the usual rule: the exact step that follows changes the deviance by less
   * than the tolerance, and being quadratically convergent it leaves a change of about its square,
   * as the last step of a fit from the usual start does. When the exact step predicts a change
   * below the squared tolerance (see exactDecrementBound) it is not taken. Either way the
   * information returned is the exact one at the returned estimate. Ignored for Firth fits and
   * fits with held coefficients.
   */
  startInformation?: SquareMatrix | null;
  /**
   * For columns that are mostly zero (such as 0/1 indicators of a text predictor's levels): the
   * rows where the column is non-zero, ascending; null for an ordinary column. Z'WZ then takes
   * such a column's entries from sums over its non-zero rows with the centring applied
   * algebraically (see sparseCrossProducts), instead of a pass over every row per pair.
   */
  sparseRows?: (Int32Array | null)[] | null;
}

/** What the Newton core returns. */
export interface NewtonResult {
  coefficients: Float64Array;
  /** Objective F at the estimate (see the file comment). */
  objective: number;
  /** Kernel log-likelihood l(g) at the estimate (no binomial-coefficient term). */
  logLikelihood: number;
  /** Unpenalized Fisher information Z'WZ at the estimate (k*k). */
  information: SquareMatrix;
  /** I_pen = information + diag(pen), the matrix whose inverse is the covariance (unpenalized fit). */
  penalizedInformation: SquareMatrix;
  /** Linear predictor and fitted probability per row at the estimate. */
  eta: Float64Array;
  mu: Float64Array;
  iterations: number;
  converged: boolean;
  /** Last relative change of the deviance. */
  lastChange: number;
  /** True when a Cholesky factorization failed (information singular at the tolerance). */
  singular: boolean;
  /** Coefficients after each accepted iteration (only with keepHistory). */
  history: Float64Array[];
  /** Total number of step halvings taken (0 when every full Newton step improved F). */
  halvings: number;
}

/** Firth fits also need the largest relative step below this (see the loop). */
const FIRTH_STEP_TOLERANCE = 1e-11;

/** Steps taken with the approximate (warm-start) information before the exact one is formed. */
const MAX_APPROXIMATE_STEPS = 12;

/**
 * The first exact step after the approximate phase is skipped only when its predicted relative
 * deviance change (the Newton decrement) is below the square of the tolerance. The usual rule
 * stops after a Newton step whose change was below the tolerance, and that last quadratically
 * convergent step leaves a change of about its square: an estimate accepted without the step is
 * held to the same closeness to the optimum.
 */
function exactDecrementBound(tolerance: number): number {
  return tolerance * tolerance;
}

/** Halvings tried before a step is declared unable to improve the objective. */
const MAX_HALVINGS = 30;

/** Rows per block of the blocked kernels: k columns of this many rows (80 KB at k = 20) stay in the L2 cache. */
export const ROW_BLOCK = 512;

/** The part of a problem the blocked kernels read: the columns and their on-the-fly scaling. */
export type BlockDesign = Pick<NewtonProblem, "rows" | "columns" | "centre" | "scale" | "sparseRows">;

/** Scratch of the blocked kernels: the fitting columns of one row block, and a weighted copy. */
interface BlockBuffers {
  z: Float64Array;
  wz: Float64Array;
  /** Per-column multipliers of the fused evaluation (length k). */
  multipliers: Float64Array;
  /** denseCrossProducts only, made on first use: the sqrt(W)-scaled block, its Gram sums, the root weights. */
  gramBlock: Float64Array | null;
  gramOut: Float64Array | null;
  rootWeights: Float64Array | null;
  /** Sparse columns only: a column of ones (length rows), made on first use. */
  ones: Float64Array | null;
}

/**
 * Every field is present from the start (null until first use): objects that gain properties later
 * get maps that V8 may collect between fits, which discards the optimized code of the kernels that
 * saw them (a "weak objects" deoptimization) and makes the fit after a garbage collection slower.
 */
function blockBuffers(k: number): BlockBuffers {
  return {
    z: new Float64Array(Math.max(k, 1) * ROW_BLOCK),
    wz: new Float64Array(Math.max(k, 1) * ROW_BLOCK),
    multipliers: new Float64Array(k),
    gramBlock: null,
    gramOut: null,
    rootWeights: null,
    ones: null,
  };
}

/**
 * Fitting column j for rows i0 .. i0+len-1 into z[j*ROW_BLOCK ..]: the column itself, or
 * (x - centre) / scale (multiplying by the reciprocal unless it overflows, as the caller's scaled
 * copy would).
 */
function fillBlock(p: BlockDesign, i0: number, len: number, z: Float64Array, slots: readonly number[] | null = null): void {
  const k = slots ? slots.length : p.columns.length;
  for (let t = 0; t < k; t++) {
    const j = slots ? slots[t] : t;
    const x = p.columns[j];
    const base = t * ROW_BLOCK - i0;
    if (!p.centre || !p.scale) {
      for (let i = i0; i < i0 + len; i++) z[base + i] = x[i];
      continue;
    }
    const c = p.centre[j];
    const sc = p.scale[j];
    const inv = 1 / sc;
    if (Number.isFinite(inv)) {
      for (let i = i0; i < i0 + len; i++) z[base + i] = (x[i] - c) * inv;
    } else {
      for (let i = i0; i < i0 + len; i++) z[base + i] = (x[i] - c) / sc;
    }
  }
}

/** sum_r v[i0 + r] z[base + r] for r < len, in two partial sums (independent additions). */
function blockDot(v: Float64Array, i0: number, z: Float64Array, base: number, len: number): number {
  let s0 = 0;
  let s1 = 0;
  let r = 0;
  for (; r + 1 < len; r += 2) {
    s0 += v[i0 + r] * z[base + r];
    s1 += v[i0 + r + 1] * z[base + r + 1];
  }
  for (; r < len; r++) s0 += v[i0 + r] * z[base + r];
  return s0 + s1;
}

/**
 * Z' diag(weights) Z of the problem's fitting columns (k*k, exactly symmetric), accumulated a row
 * block at a time (see accumulateBlockCrossProduct); with `residual`, also Z'residual into
 * `vectorOut` in the same pass over the data.
 */
function crossProducts(
  p: BlockDesign,
  weights: Float64Array,
  out: SquareMatrix,
  buffers: BlockBuffers,
  residual: Float64Array | null = null,
  vectorOut: Float64Array | null = null,
): SquareMatrix {
  if (p.sparseRows && p.sparseRows.some((r) => r !== null)) return sparseCrossProducts(p, weights, out, buffers, residual, vectorOut);
  if (fusedScalesOk(p)) return denseCrossProducts(p, weights, out, buffers, residual, vectorOut);
  const n = p.rows;
  const k = p.columns.length;
  const { z, wz } = buffers;
  out.fill(0);
  if (vectorOut) vectorOut.fill(0);
  for (let i0 = 0; i0 < n; i0 += ROW_BLOCK) {
    const len = Math.min(ROW_BLOCK, n - i0);
    fillBlock(p, i0, len, z);
    for (let j = 0; j < k; j++) {
      const base = j * ROW_BLOCK;
      for (let r = 0; r < len; r++) wz[base + r] = weights[i0 + r] * z[base + r];
      if (residual && vectorOut) vectorOut[j] += blockDot(residual, i0, z, base, len);
    }
    accumulateBlockCrossProduct(wz, z, k, len, ROW_BLOCK, out);
  }
  return mirrorUpper(out, k);
}

/** True when every column's scale lies in [FUSED_MIN, FUSED_MAX] (see fusedMultipliers). */
function fusedScalesOk(p: BlockDesign): boolean {
  if (!p.centre || !p.scale) return true;
  for (let j = 0; j < p.columns.length; j++) {
    const s = p.scale[j];
    if (!(s >= FUSED_MIN && s <= FUSED_MAX)) return false;
  }
  return true;
}

/**
 * crossProducts for a design without sparse columns and with scales in the fused range: each row
 * block is formed once as sqrt(W_i) z_ij (the weights are >= 0) in a buffer padded with zero
 * columns to a multiple of 3, and its Gram matrix accumulated by accumulateBlockGram; the score
 * part z_j'residual is taken from the original columns with the centring fused, as in
 * evaluateDense. One buffer instead of a weighted and an unweighted copy halves the block's
 * memory traffic. Rounding: sqrt(W)^2 differs from W by at most an ulp, below the sums' own.
 * With the WebAssembly kernels (wasmKernels.ts) the same sums run there (denseCrossProductsWasm).
 */
function denseCrossProducts(
  p: BlockDesign,
  weights: Float64Array,
  out: SquareMatrix,
  buffers: BlockBuffers,
  residual: Float64Array | null,
  vectorOut: Float64Array | null,
): SquareMatrix {
  const n = p.rows;
  const k = p.columns.length;
  const kp = 3 * Math.ceil(k / 3);
  const cols = p.columns;
  const centre = p.centre && p.scale ? p.centre : null;
  const scale = p.scale;
  const wasm = wasmKernels();
  if (wasm) {
    const done = denseCrossProductsWasm(p, weights, out, residual, vectorOut, wasm);
    if (done) return done;
  }
  const z = buffers.gramBlock ?? (buffers.gramBlock = new Float64Array(Math.max(kp, 3) * ROW_BLOCK));
  const acc = buffers.gramOut ?? (buffers.gramOut = new Float64Array(kp * kp));
  const sw = buffers.rootWeights ?? (buffers.rootWeights = new Float64Array(ROW_BLOCK));
  acc.fill(0);
  z.fill(0);
  if (vectorOut) vectorOut.fill(0);
  for (let i0 = 0; i0 < n; i0 += ROW_BLOCK) {
    const len = Math.min(ROW_BLOCK, n - i0);
    for (let r = 0; r < len; r++) sw[r] = Math.sqrt(weights[i0 + r]);
    for (let j = 0; j < k; j++) {
      const x = cols[j];
      const c = centre ? centre[j] : 0;
      const inv = centre && scale ? 1 / scale[j] : 1;
      const base = j * ROW_BLOCK;
      for (let r = 0; r < len; r++) z[base + r] = sw[r] * ((x[i0 + r] - c) * inv);
      if (residual && vectorOut) {
        let s0 = 0;
        for (let r = 0; r < len; r++) s0 += residual[i0 + r] * (x[i0 + r] - c);
        vectorOut[j] += s0 * inv;
      }
    }
    accumulateBlockGram(z, kp, len, ROW_BLOCK, acc);
  }
  for (let j = 0; j < k; j++) for (let l = j; l < k; l++) out[j * k + l] = acc[j * kp + l];
  return mirrorUpper(out, k);
}

/**
 * denseCrossProducts on the WebAssembly kernels: each block's columns are copied as they are into
 * the kernels' memory (a plain copy), where scaleBlock centres, scales and weights them in place
 * (taking the score part on the way) and gram accumulates the block's Gram matrix. Null when the
 * kernels' memory cannot hold the block (the caller then uses its JavaScript loop).
 * Memory (doubles): block [0, kp ROW_BLOCK), Gram sums (kp kp), sqrt(W) and residuals (ROW_BLOCK
 * each), centres, reciprocal scales and score sums (k each).
 */
function denseCrossProductsWasm(
  p: BlockDesign,
  weights: Float64Array,
  out: SquareMatrix,
  residual: Float64Array | null,
  vectorOut: Float64Array | null,
  wasm: WasmKernels,
): SquareMatrix | null {
  const n = p.rows;
  const k = p.columns.length;
  const kp = 3 * Math.ceil(k / 3);
  const cols = p.columns;
  const accAt = kp * ROW_BLOCK;
  const swAt = accAt + kp * kp;
  const uAt = swAt + ROW_BLOCK;
  const cAt = uAt + ROW_BLOCK;
  const fAt = cAt + k;
  const sAt = fAt + k;
  const mem = wasm.reserve(sAt + k);
  if (!mem) return null;
  const centred = !!(p.centre && p.scale);
  for (let j = 0; j < k; j++) {
    mem[cAt + j] = centred ? p.centre![j] : 0;
    mem[fAt + j] = centred ? 1 / p.scale![j] : 1;
  }
  mem.fill(0, 0, accAt); // the padding columns k .. kp-1 stay zero
  mem.fill(0, accAt, swAt);
  mem.fill(0, sAt, sAt + k);
  const withScore = !!(residual && vectorOut);
  for (let i0 = 0; i0 < n; i0 += ROW_BLOCK) {
    const len = Math.min(ROW_BLOCK, n - i0);
    // Rows in pairs: an odd block ends with a zero row (weight 0 and residual 0, so it adds nothing).
    const even = len + (len & 1);
    for (let j = 0; j < k; j++) {
      mem.set(cols[j].subarray(i0, i0 + len), j * ROW_BLOCK);
      if (even > len) mem[j * ROW_BLOCK + len] = 0;
    }
    rootWeights(weights, i0, len, mem, swAt);
    if (even > len) mem[swAt + len] = 0;
    if (withScore) {
      mem.set(residual!.subarray(i0, i0 + len), uAt);
      if (even > len) mem[uAt + len] = 0;
    }
    wasm.scaleBlock(0, k, even, ROW_BLOCK, swAt, cAt, fAt, withScore ? uAt : 0, sAt);
    wasm.gram(0, kp, even, ROW_BLOCK, accAt);
  }
  if (withScore) for (let j = 0; j < k; j++) vectorOut![j] = mem[sAt + j] * mem[fAt + j];
  for (let j = 0; j < k; j++) for (let l = j; l < k; l++) out[j * k + l] = mem[accAt + j * kp + l];
  return mirrorUpper(out, k);
}

/** out[at + r] = sqrt(weights[i0 + r]) for r < len. */
function rootWeights(weights: Float64Array, i0: number, len: number, out: Float64Array, at: number): void {
  for (let r = 0; r < len; r++) out[at + r] = Math.sqrt(weights[i0 + r]);
}

/**
 * crossProducts for a design with sparse columns. With z_j = (x_j - c_j) / s_j and W the weights:
 * the dense columns (and a column of ones, which gives sum W and sum_i W_i z_il) go through the
 * blocked kernel; for a sparse column j (non-zero rows S_j)
 *   z_j'W z_l = (sum_{S_j} W x_j z_l - c_j sum W z_l) / s_j                      (l dense),
 *   z_j'W z_l = (sum_{S_j and S_l} W x_j x_l - c_l sum_{S_j} W x_j - c_j sum_{S_l} W x_l
 *               + c_j c_l sum W) / (s_j s_l)                                     (l sparse),
 * the sums over rows non-zero in both taken row by row from a compressed-row index. For a mostly-zero column
 * |c_j| / s_j is small (at most about sqrt(f / (1 - f)) for a share f of non-zero rows), so the
 * algebraic centring loses no accuracy to cancellation.
 */
function sparseCrossProducts(
  p: BlockDesign,
  weights: Float64Array,
  out: SquareMatrix,
  buffers: BlockBuffers,
  residual: Float64Array | null,
  vectorOut: Float64Array | null,
): SquareMatrix {
  const n = p.rows;
  const k = p.columns.length;
  const S = p.sparseRows!;
  const centreOf = (j: number) => (p.centre && p.scale ? p.centre[j] : 0);
  const scaleOf = (j: number) => (p.centre && p.scale ? p.scale[j] : 1);
  const dense: number[] = [];
  const sparse: number[] = [];
  for (let j = 0; j < k; j++) (S[j] ? sparse : dense).push(j);
  const ones = buffers.ones ?? (buffers.ones = new Float64Array(n).fill(1));
  const m = dense.length + 1;
  const denseDesign: BlockDesign = {
    rows: n,
    columns: [ones, ...dense.map((j) => p.columns[j])],
    centre: Float64Array.from([0, ...dense.map(centreOf)]),
    scale: Float64Array.from([1, ...dense.map(scaleOf)]),
  };
  const outD = new Float64Array(m * m);
  const vecD = residual && vectorOut ? new Float64Array(m) : null;
  crossProducts(denseDesign, weights, outD, buffers, residual, vecD);
  const sumW = outD[0];
  for (let a = 0; a < dense.length; a++) {
    for (let b = 0; b < dense.length; b++) out[dense[a] * k + dense[b]] = outD[(a + 1) * m + b + 1];
    if (vecD && vectorOut) vectorOut[dense[a]] = vecD[a + 1];
  }
  // Sparse columns by row (compressed rows; within a row in increasing sparse index), so the
  // sums over S_j and S_l together cost (non-zeros per row)^2 per row, not a pass per pair.
  const ns = sparse.length;
  const start = new Int32Array(n + 1);
  for (let t = 0; t < ns; t++) {
    const rows = S[sparse[t]]!;
    for (let r = 0; r < rows.length; r++) start[rows[r] + 1]++;
  }
  for (let i = 0; i < n; i++) start[i + 1] += start[i];
  const fillAt = start.slice(0, n);
  const slot = new Int32Array(start[n]);
  for (let t = 0; t < ns; t++) {
    const rows = S[sparse[t]]!;
    for (let r = 0; r < rows.length; r++) slot[fillAt[rows[r]]++] = t;
  }
  // cross[t][u] = sum over rows non-zero in both of W x_t x_u (t <= u); swx[t] = sum_{S_t} W x_t.
  const cross = new Float64Array(ns * ns);
  const swx = new Float64Array(ns);
  for (let i = 0; i < n; i++) {
    const e = start[i + 1];
    for (let a = start[i]; a < e; a++) {
      const t = slot[a];
      const v = weights[i] * p.columns[sparse[t]][i];
      swx[t] += v;
      for (let b = a; b < e; b++) cross[t * ns + slot[b]] += v * p.columns[sparse[slot[b]]][i];
    }
  }
  for (let t = 0; t < ns; t++) {
    const j = sparse[t];
    const rows = S[j]!;
    const x = p.columns[j];
    const cj = centreOf(j);
    const sj = scaleOf(j);
    out[j * k + j] = (cross[t * ns + t] - 2 * cj * swx[t] + cj * cj * sumW) / (sj * sj);
    for (let a = 0; a < dense.length; a++) {
      const l = dense[a];
      const xl = p.columns[l];
      let sx = 0;
      for (let r = 0; r < rows.length; r++) {
        const i = rows[r];
        sx += weights[i] * x[i] * xl[i];
      }
      // sum_{S_j} W x_j z_l = (sum_{S_j} W x_j x_l - c_l sum_{S_j} W x_j) / s_l
      const v = ((sx - centreOf(l) * swx[t]) / scaleOf(l) - cj * outD[a + 1]) / sj;
      out[j * k + l] = v;
      out[l * k + j] = v;
    }
    for (let u = t + 1; u < ns; u++) {
      const l = sparse[u];
      const cl = centreOf(l);
      const v = (cross[t * ns + u] - cl * swx[t] - cj * swx[u] + cj * cl * sumW) / (sj * scaleOf(l));
      out[j * k + l] = v;
      out[l * k + j] = v;
    }
    if (vecD && vectorOut && residual) {
      let sr = 0;
      for (let r = 0; r < rows.length; r++) sr += residual[rows[r]] * x[rows[r]];
      vectorOut[j] = (sr - cj * vecD[0]) / sj;
    }
  }
  return out;
}

/** Z'v of the problem's fitting columns into out (length k), a row block at a time. */
function crossVector(p: BlockDesign, v: Float64Array, out: Float64Array, buffers: BlockBuffers): Float64Array {
  const n = p.rows;
  const k = p.columns.length;
  const z = buffers.z;
  out.fill(0);
  for (let i0 = 0; i0 < n; i0 += ROW_BLOCK) {
    const len = Math.min(ROW_BLOCK, n - i0);
    fillBlock(p, i0, len, z);
    for (let j = 0; j < k; j++) out[j] += blockDot(v, i0, z, j * ROW_BLOCK, len);
  }
  return out;
}

/**
 * Z' diag(weights) Z of a problem's fitting columns (k*k, exactly symmetric), computed a row block
 * at a time with the problem's centring and scaling applied on the fly; the weighted Gram matrix
 * of the IRLS step (McCullagh & Nelder 1989, ch. 2) for given weights.
 */
export function problemGram(p: BlockDesign, weights: Float64Array, out: SquareMatrix = new Float64Array(p.columns.length ** 2)): SquareMatrix {
  const design: BlockDesign = { rows: p.rows, columns: p.columns, centre: p.centre ?? null, scale: p.scale ?? null, sparseRows: p.sparseRows ?? null };
  return crossProducts(design, weights, out, blockBuffers(p.columns.length));
}

/**
 * The problem as an object of one fixed shape (every optional field present, null when absent).
 * Callers build problems by spreading and adding fields, which gives objects maps that V8 may
 * collect between fits; the kernels' optimized code would then be discarded after each garbage
 * collection (see blockBuffers). One literal here keeps one map for every fit.
 */
function stableProblem(q: NewtonProblem): NewtonProblem {
  return {
    rows: q.rows,
    columns: q.columns,
    successes: q.successes,
    trials: q.trials,
    weights: q.weights,
    offset: q.offset,
    penalty: q.penalty,
    firth: q.firth,
    maxIterations: q.maxIterations,
    tolerance: q.tolerance,
    start: q.start ?? null,
    keepHistory: q.keepHistory ?? false,
    free: q.free ?? null,
    unitGram: q.unitGram ?? null,
    centre: q.centre ?? null,
    scale: q.scale ?? null,
    startInformation: q.startInformation ?? null,
    sparseRows: q.sparseRows ?? null,
  };
}

/**
 * The fitting columns of a problem as whole columns: the columns themselves, or their centred and
 * scaled copies (x - centre) / scale when the problem centres and scales on the fly (the
 * standardization of McCullagh & Nelder 1989, sec. 2.5, kept apart from the data).
 */
export function fittingColumns(p: BlockDesign): Float64Array[] {
  if (!p.centre || !p.scale) return p.columns;
  const n = p.rows;
  return p.columns.map((x, j) => {
    const col = new Float64Array(n);
    const c = p.centre![j];
    const sc = p.scale![j];
    const inv = 1 / sc;
    if (Number.isFinite(inv)) {
      for (let i = 0; i < n; i++) col[i] = (x[i] - c) * inv;
    } else {
      for (let i = 0; i < n; i++) col[i] = (x[i] - c) / sc;
    }
    return col;
  });
}

/** Indices of the columns without a sparse row list. */
function denseSlots(sparse: readonly (Int32Array | null)[]): number[] {
  const slots: number[] = [];
  for (let j = 0; j < sparse.length; j++) if (!sparse[j]) slots.push(j);
  return slots;
}

/**
 * eta = offset + sum over sparse columns j of g_j (x_j - c_j) / s_j, taken as
 * (g_j / s_j) x_j on the non-zero rows plus the constant -sum_j g_j c_j / s_j.
 */
function sparseLinearPredictor(p: NewtonProblem, sparse: readonly (Int32Array | null)[], g: Float64Array, eta: Float64Array): void {
  const n = p.rows;
  let constant = 0;
  for (let j = 0; j < sparse.length; j++) {
    if (sparse[j] && p.centre && p.scale) constant -= (g[j] * p.centre[j]) / p.scale[j];
  }
  for (let i = 0; i < n; i++) eta[i] = p.offset[i] + constant;
  for (let j = 0; j < sparse.length; j++) {
    const rows = sparse[j];
    if (!rows || g[j] === 0) continue;
    const x = p.columns[j];
    const f = p.centre && p.scale ? g[j] / p.scale[j] : g[j];
    for (let r = 0; r < rows.length; r++) eta[rows[r]] += f * x[rows[r]];
  }
}

/** Score entries z_j'(w (y - t mu)) of the sparse columns: (sum over non-zero rows of r x_j - c_j sum r) / s_j. */
function sparseScore(p: NewtonProblem, sparse: readonly (Int32Array | null)[], mu: Float64Array, scoreOut: Float64Array): void {
  const n = p.rows;
  const w = p.weights;
  const y = p.successes;
  const t = p.trials;
  let sumR = 0;
  for (let i = 0; i < n; i++) sumR += w[i] * (y[i] - t[i] * mu[i]);
  for (let j = 0; j < sparse.length; j++) {
    const rows = sparse[j];
    if (!rows) continue;
    const x = p.columns[j];
    let s = 0;
    for (let r = 0; r < rows.length; r++) {
      const i = rows[r];
      s += w[i] * (y[i] - t[i] * mu[i]) * x[i];
    }
    scoreOut[j] = p.centre && p.scale ? (s - p.centre[j] * sumR) / p.scale[j] : s;
  }
}

/**
 * Fitted probabilities mu_i and the weighted kernel log-likelihood of rows i0 .. i1-1 from their
 * linear predictors, with one exp and one log1p per row: with u = exp(-|e|) and
 * L = log(1 + u) = log1pExp(-|e|), sigmoid(e) = 1/(1+u) or u/(1+u), log sigmoid(e) = -L or e - L,
 * log sigmoid(-e) = -e - L or -L (the same stable forms as numerics.ts, written out because this
 * loop dominates the fit).
 */
function blockLogLikelihood(p: NewtonProblem, eta: Float64Array, mu: Float64Array, i0: number, i1: number): number {
  const y = p.successes;
  const t = p.trials;
  const w = p.weights;
  let ll = 0;
  for (let i = i0; i < i1; i++) {
    const e = eta[i];
    const u = Math.exp(-Math.abs(e));
    const L = Math.log1p(u);
    const yi = y[i];
    const fi = t[i] - yi;
    let li = 0;
    if (e >= 0) {
      mu[i] = 1 / (1 + u);
      if (yi !== 0) li -= yi * L;
      if (fi !== 0) li -= fi * (e + L);
    } else {
      mu[i] = u / (1 + u);
      if (yi !== 0) li += yi * (e - L);
      if (fi !== 0) li -= fi * L;
    }
    ll += w[i] * li;
  }
  return ll;
}

/**
 * Evaluate l(g) into eta/mu buffers; returns the kernel log-likelihood (sum over rows). Works a
 * row block at a time: the block's fitting columns give its linear predictor, then its fitted
 * probabilities and log-likelihood terms, and with `scoreOut` also its part of the score's
 * Z'(w (y - t mu)), so a step that is accepted has its score from the same pass. No allocation.
 */
function evaluate(
  p: NewtonProblem,
  g: Float64Array,
  eta: Float64Array,
  mu: Float64Array,
  buffers: BlockBuffers,
  scoreOut: Float64Array | null = null,
): number {
  const n = p.rows;
  const z = buffers.z;
  // Sparse columns (see NewtonProblem.sparseRows) are added to eta over their non-zero rows first,
  // with their centring as one constant; the block loop then handles the other columns.
  const sparse = p.sparseRows && p.sparseRows.some((r) => r !== null) ? p.sparseRows : null;
  if (!sparse) {
    const f = fusedMultipliers(p, g, buffers.multipliers);
    if (f) return evaluateDense(p, f, eta, mu, buffers.wz, scoreOut);
  }
  const slots = sparse ? denseSlots(sparse) : null;
  const k = slots ? slots.length : p.columns.length;
  if (sparse) sparseLinearPredictor(p, sparse, g, eta);
  const y = p.successes;
  const t = p.trials;
  const w = p.weights;
  const off = p.offset;
  const res = buffers.wz; // residual w (y - t mu) of the block (first ROW_BLOCK entries)
  if (scoreOut) scoreOut.fill(0);
  let ll = 0;
  for (let i0 = 0; i0 < n; i0 += ROW_BLOCK) {
    const len = Math.min(ROW_BLOCK, n - i0);
    const i1 = i0 + len;
    fillBlock(p, i0, len, z, slots);
    if (!sparse) for (let i = i0; i < i1; i++) eta[i] = off[i];
    // Three columns per pass over the block of eta (fewer loads and stores of eta).
    let j = 0;
    for (; j + 2 < k; j += 3) {
      const ga = g[slots ? slots[j] : j];
      const gb = g[slots ? slots[j + 1] : j + 1];
      const gc = g[slots ? slots[j + 2] : j + 2];
      const a = j * ROW_BLOCK - i0;
      const b = a + ROW_BLOCK;
      const c = b + ROW_BLOCK;
      for (let i = i0; i < i1; i++) eta[i] += ga * z[a + i] + gb * z[b + i] + gc * z[c + i];
    }
    for (; j < k; j++) {
      const gj = g[slots ? slots[j] : j];
      if (gj === 0) continue;
      const a = j * ROW_BLOCK - i0;
      for (let i = i0; i < i1; i++) eta[i] += gj * z[a + i];
    }
    ll += blockLogLikelihood(p, eta, mu, i0, i1);
    if (scoreOut) {
      for (let i = i0; i < i1; i++) res[i - i0] = w[i] * (y[i] - t[i] * mu[i]);
      for (let jj = 0; jj < k; jj++) {
        const base = jj * ROW_BLOCK;
        let s0 = 0;
        let s1 = 0;
        let r = 0;
        for (; r + 1 < len; r += 2) {
          s0 += res[r] * z[base + r];
          s1 += res[r + 1] * z[base + r + 1];
        }
        for (; r < len; r++) s0 += res[r] * z[base + r];
        scoreOut[slots ? slots[jj] : jj] += s0 + s1;
      }
    }
  }
  if (scoreOut && sparse) sparseScore(p, sparse, mu, scoreOut);
  return ll;
}

/**
 * Per-column multipliers of the fused evaluation (evaluateDense): f_j = g_j / s_j, so that
 * g_j z_ij = f_j (x_ij - c_j). Null when some column's scale or multiplier lies outside
 * [FUSED_MIN, FUSED_MAX] (data near the ends of the double range, or a diverged g), where the block
 * path, which forms z_ij first, keeps its accuracy.
 */
function fusedMultipliers(p: NewtonProblem, g: Float64Array, out: Float64Array): Float64Array | null {
  const k = p.columns.length;
  for (let j = 0; j < k; j++) {
    const s = p.centre && p.scale ? p.scale[j] : 1;
    const f = g[j] / s;
    if (!(s >= FUSED_MIN && s <= FUSED_MAX)) return null;
    const af = Math.abs(f);
    if (f !== 0 && !(af >= FUSED_MIN && af <= FUSED_MAX)) return null;
    out[j] = f;
  }
  return out;
}

/** Range of scales and multipliers the fused evaluation accepts (far from overflow and subnormals). */
const FUSED_MIN = 1e-250;
const FUSED_MAX = 1e250;

/**
 * evaluate for a design without sparse columns, with the centring and scaling fused into the row
 * loops instead of forming each block's fitting columns: eta_i = offset_i + sum_j f_j (x_ij - c_j)
 * with f_j = g_j / s_j, and the score's z_j'res = (sum_i res_i (x_ij - c_j)) / s_j. The same
 * arithmetic as the block path up to the order of two roundings, with one pass over each column
 * per block for eta and one for the score. Row blocks keep a block's slices of the columns in
 * cache between the two.
 */
function evaluateDense(
  p: NewtonProblem,
  f: Float64Array,
  eta: Float64Array,
  mu: Float64Array,
  res: Float64Array,
  scoreOut: Float64Array | null,
): number {
  const n = p.rows;
  const k = p.columns.length;
  const cols = p.columns;
  const centre = p.centre && p.scale ? p.centre : null;
  const y = p.successes;
  const t = p.trials;
  const w = p.weights;
  const off = p.offset;
  if (scoreOut) scoreOut.fill(0);
  let ll = 0;
  for (let i0 = 0; i0 < n; i0 += ROW_BLOCK) {
    const i1 = Math.min(i0 + ROW_BLOCK, n);
    for (let i = i0; i < i1; i++) eta[i] = off[i];
    // Six columns, then three, per pass over the block's eta (fewer loads and stores of eta).
    let j = 0;
    for (; j + 5 < k; j += 6) {
      const xa = cols[j];
      const xb = cols[j + 1];
      const xc = cols[j + 2];
      const xd = cols[j + 3];
      const xe = cols[j + 4];
      const xf = cols[j + 5];
      const fa = f[j];
      const fb = f[j + 1];
      const fc = f[j + 2];
      const fd = f[j + 3];
      const fe = f[j + 4];
      const ff = f[j + 5];
      const ca = centre ? centre[j] : 0;
      const cb = centre ? centre[j + 1] : 0;
      const cc = centre ? centre[j + 2] : 0;
      const cd = centre ? centre[j + 3] : 0;
      const ce = centre ? centre[j + 4] : 0;
      const cf = centre ? centre[j + 5] : 0;
      for (let i = i0; i < i1; i++) {
        eta[i] += fa * (xa[i] - ca) + fb * (xb[i] - cb) + fc * (xc[i] - cc) + fd * (xd[i] - cd) + fe * (xe[i] - ce) + ff * (xf[i] - cf);
      }
    }
    for (; j + 2 < k; j += 3) {
      const xa = cols[j];
      const xb = cols[j + 1];
      const xc = cols[j + 2];
      const fa = f[j];
      const fb = f[j + 1];
      const fc = f[j + 2];
      const ca = centre ? centre[j] : 0;
      const cb = centre ? centre[j + 1] : 0;
      const cc = centre ? centre[j + 2] : 0;
      for (let i = i0; i < i1; i++) eta[i] += fa * (xa[i] - ca) + fb * (xb[i] - cb) + fc * (xc[i] - cc);
    }
    for (; j < k; j++) {
      const fj = f[j];
      if (fj === 0) continue;
      const x = cols[j];
      const cj = centre ? centre[j] : 0;
      for (let i = i0; i < i1; i++) eta[i] += fj * (x[i] - cj);
    }
    ll += blockLogLikelihood(p, eta, mu, i0, i1);
    if (!scoreOut) continue;
    const len = i1 - i0;
    for (let i = i0; i < i1; i++) res[i - i0] = w[i] * (y[i] - t[i] * mu[i]);
    j = 0;
    for (; j + 2 < k; j += 3) {
      const xa = cols[j];
      const xb = cols[j + 1];
      const xc = cols[j + 2];
      const ca = centre ? centre[j] : 0;
      const cb = centre ? centre[j + 1] : 0;
      const cc = centre ? centre[j + 2] : 0;
      let sa = 0;
      let sb = 0;
      let sc = 0;
      for (let r = 0; r < len; r++) {
        const v = res[r];
        const i = i0 + r;
        sa += v * (xa[i] - ca);
        sb += v * (xb[i] - cb);
        sc += v * (xc[i] - cc);
      }
      scoreOut[j] += sa;
      scoreOut[j + 1] += sb;
      scoreOut[j + 2] += sc;
    }
    for (; j < k; j++) {
      const x = cols[j];
      const cj = centre ? centre[j] : 0;
      let s0 = 0;
      for (let r = 0; r < len; r++) s0 += res[r] * (x[i0 + r] - cj);
      scoreOut[j] += s0;
    }
  }
  if (scoreOut && centre && p.scale) for (let j = 0; j < k; j++) scoreOut[j] /= p.scale[j];
  return ll;
}

/** I = Z'WZ (upper triangle then mirrored) with W_i = w_i t_i mu_i (1 - mu_i); fills fisherW. */
function information(p: NewtonProblem, mu: Float64Array, fisherW: Float64Array, buffers: BlockBuffers, out: SquareMatrix): SquareMatrix {
  const n = p.rows;
  for (let i = 0; i < n; i++) fisherW[i] = p.weights[i] * p.trials[i] * mu[i] * (1 - mu[i]);
  return crossProducts(p, fisherW, out, buffers);
}

/*
 * Row loops of newtonLogistic live in small functions of their own (below): if the loop's code is
 * discarded (V8 drops optimized code whose objects a garbage collection freed), loops inside it
 * would run unoptimized until recompiled; these functions keep their own optimized code.
 */

function sumOf(x: Float64Array, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i];
  return s;
}

/** Pooled success rate sum w y / sum w t. */
function pooledRate(p: NewtonProblem): number {
  let sy = 0;
  let st = 0;
  for (let i = 0; i < p.rows; i++) {
    sy += p.weights[i] * p.successes[i];
    st += p.weights[i] * p.trials[i];
  }
  return sy / st;
}

function allEqual(x: Float64Array, n: number): boolean {
  for (let i = 1; i < n; i++) if (x[i] !== x[0]) return false;
  return true;
}

/** W_i = w_i t_i v for one common variance v. */
function fisherWeights(p: NewtonProblem, v: number, out: Float64Array): void {
  for (let i = 0; i < p.rows; i++) out[i] = p.weights[i] * p.trials[i] * v;
}

/** w_i (y_i - t_i mu_i). */
function residuals(p: NewtonProblem, mu: Float64Array, out: Float64Array): void {
  for (let i = 0; i < p.rows; i++) out[i] = p.weights[i] * (p.successes[i] - p.trials[i] * mu[i]);
}

/**
 * The problem with some fields replaced, as an object of the one fixed shape of stableProblem.
 * Callers use this instead of spreading a problem and overriding fields (see stableProblem).
 */
export function withChanges(base: NewtonProblem, changes: Partial<NewtonProblem>): NewtonProblem {
  const pick = <K extends keyof NewtonProblem>(key: K): NewtonProblem[K] => (key in changes ? (changes[key] as NewtonProblem[K]) : base[key]);
  return stableProblem({
    rows: pick("rows"),
    columns: pick("columns"),
    successes: pick("successes"),
    trials: pick("trials"),
    weights: pick("weights"),
    offset: pick("offset"),
    penalty: pick("penalty"),
    firth: pick("firth"),
    maxIterations: pick("maxIterations"),
    tolerance: pick("tolerance"),
    start: pick("start"),
    keepHistory: pick("keepHistory"),
    free: pick("free"),
    unitGram: pick("unitGram"),
    centre: pick("centre"),
    scale: pick("scale"),
    startInformation: pick("startInformation"),
    sparseRows: pick("sparseRows"),
  });
}

/**
 * The information Z'WZ at the fitted probabilities mu (into info, with W into fisherW) and the
 * score's Z' part Z'(w (y - t mu)) (into score, with the residuals into work) in one pass over the
 * data. A module function, not a closure of newtonLogistic, so that its optimized code does not
 * depend on a per-fit closure object (see blockBuffers).
 */
function exactInformationAndScore(
  p: NewtonProblem,
  mu: Float64Array,
  fisherW: Float64Array,
  work: Float64Array,
  buffers: BlockBuffers,
  info: SquareMatrix,
  score: Float64Array,
): void {
  const n = p.rows;
  for (let i = 0; i < n; i++) {
    const m = mu[i];
    fisherW[i] = p.weights[i] * p.trials[i] * m * (1 - m);
    work[i] = p.weights[i] * (p.successes[i] - p.trials[i] * m);
  }
  crossProducts(p, fisherW, info, buffers, work, score);
}

function penaltyValue(p: NewtonProblem, g: Float64Array): number {
  let s = 0;
  for (let j = 0; j < g.length; j++) s += p.penalty[j] * g[j] * g[j];
  return 0.5 * s;
}

/**
 * Minimize the (penalized / bias-reduced) negative log-likelihood by Newton-Raphson with step
 * halving. Never throws: a singular information matrix ends the loop with singular = true.
 * @see file comment for the objective, step and convergence rule.
 * Reference: McCullagh & Nelder (1989), ch. 2 (Fisher scoring = Newton for the canonical logit link);
 * Firth (1993) for the bias-reduced objective.
 */
export function newtonLogistic(problem: NewtonProblem): NewtonResult {
  // Firth's hat values need whole fitting columns: form the scaled copy once.
  const p = problem.firth && problem.centre && problem.scale ? withChanges(problem, { columns: fittingColumns(problem), centre: null, scale: null }) : stableProblem(problem);
  const n = p.rows;
  const k = p.columns.length;
  const eta = new Float64Array(n);
  const mu = new Float64Array(n);
  const etaTry = new Float64Array(n);
  const muTry = new Float64Array(n);
  const fisherW = new Float64Array(n);
  const work = new Float64Array(n);
  const buffers = blockBuffers(k);
  const hat = p.firth ? new Float64Array(n) : work;
  const fisherWTry = p.firth ? new Float64Array(n) : work;
  const info = new Float64Array(k * k);
  const infoPen = new Float64Array(k * k);
  const score = new Float64Array(k);
  const step = new Float64Array(k);
  const gTry = new Float64Array(k);
  const scoreTry = new Float64Array(k);
  const scoreAtG = new Float64Array(k); // Z' part of the score at g (approximate phase)
  const curvature = new Float64Array(k);
  const prevStep = new Float64Array(k);
  let havePrevStep = false;
  const history: Float64Array[] = [];

  // The convergence floor (0.1 in glm.fit) in units of the mean case weight: see the file header.
  const weightSum = sumOf(p.weights, n);
  const floor = 0.1 * (n > 0 && weightSum > 0 ? weightSum / n : 1);
  const freeIdx = p.free ? Array.from({ length: k }, (_, j) => j).filter((j) => p.free![j]) : null;
  const g = new Float64Array(k);
  if (p.start) {
    g.set(p.start);
  } else if (k > 0 && isInterceptColumn(p, n) && (!p.free || p.free[0])) {
    const rate = Math.min(Math.max(pooledRate(p), 1e-8), 1 - 1e-8);
    g[0] = Math.log(rate / (1 - rate));
  }

  // State at g: log-likelihood, objective (needs log det I for Firth), information and its factor.
  // Warm start: iterate with the approximate information until the changes are small. The first
  // score comes with the evaluation at the start (no separate pass).
  let approximate = !!p.startInformation && !p.firth && !p.free;
  let ll = evaluate(p, g, eta, mu, buffers, score);
  let approximateSteps = 0;
  let checkDecrement = false; // after switching to the exact information: test the Newton decrement first
  const constantMu = !!p.unitGram && !approximate && allEqual(mu, n);
  if (approximate) {
    info.set(p.startInformation!);
  } else if (constantMu && n > 0) {
    const v = mu[0] * (1 - mu[0]);
    fisherWeights(p, v, fisherW);
    for (let j = 0; j < k * k; j++) info[j] = v * p.unitGram![j];
  } else {
    information(p, mu, fisherW, buffers, info);
  }
  let scoreReady = true; // true when the score's Z' part at g is already in `score`
  let factor = firthFactor(p, info, k);
  let singular = factor === null && p.firth;
  let objective = -ll + penaltyValue(p, g) - (p.firth && factor ? 0.5 * logDetFromCholesky(factor, k) : 0);


  let iterations = 0;
  let halvings = 0;
  let converged = false;
  let lastChange = NaN;
  while (!singular && iterations < p.maxIterations) {
    iterations++;
    // Score U = Z'(w (y - t mu)) - pen .* g  [+ Firth adjustment].
    if (!scoreReady) {
      residuals(p, mu, work);
      crossVector(p, work, score, buffers);
    }
    scoreReady = false;
    if (approximate) scoreAtG.set(score);
    for (let j = 0; j < k; j++) score[j] -= p.penalty[j] * g[j];
    if (p.firth && factor) {
      hatValues(p.columns, factor, fisherW, n, work, hat);
      addFirthScoreAdjustment(p.columns, hat, mu, n, score);
    }
    infoPen.set(info);
    for (let j = 0; j < k; j++) infoPen[j * k + j] += p.penalty[j];
    if (freeIdx) {
      // Newton step on the free coordinates only; the held ones do not move.
      const m = freeIdx.length;
      const sub = subMatrix(infoPen, k, freeIdx);
      const c = cholesky(sub, m);
      if (!c.ok) {
        singular = true;
        break;
      }
      const rhs = Float64Array.from(freeIdx, (j) => score[j]);
      const s = choleskySolve(c.factor, m, rhs);
      step.fill(0);
      for (let t = 0; t < m; t++) step[freeIdx[t]] = s[t];
    } else {
      const c = cholesky(infoPen, k);
      if (!c.ok) {
        singular = true;
        break;
      }
      choleskySolve(c.factor, k, score, step);
    }
    // Newton decrement: U' I^{-1} U ~ twice the predicted decrease of F.
    let decrement = 0;
    for (let j = 0; j < k; j++) decrement += score[j] * step[j];
    if (approximate) {
      // End of the approximate phase when its step predicts a change below the tolerance: the
      // exact Newton step that follows then finishes the fit (see NewtonProblem.startInformation).
      const predicted = decrement / (floor + Math.abs(2 * objective));
      if (predicted < p.tolerance || approximateSteps >= MAX_APPROXIMATE_STEPS) {
        iterations--;
        approximate = false;
        exactInformationAndScore(p, mu, fisherW, work, buffers, info, score);
        scoreReady = true;
        checkDecrement = true;
        continue;
      }
    }
    if (checkDecrement) {
      // First step with the exact information after the approximate phase: when it predicts a
      // negligible change, g is the estimate and `info` is already the information there.
      checkDecrement = false;
      const change = decrement / (floor + Math.abs(2 * objective));
      if (change < exactDecrementBound(p.tolerance)) {
        iterations--;
        lastChange = change;
        converged = true;
        break;
      }
    }

    let scale = 1;
    if (p.firth && havePrevStep) {
      // Firth's iteration uses I in place of the Hessian of the penalized objective, so it can
      // converge linearly with a negative ratio (overshooting back and forth). Estimate the ratio
      // r = step'prev / prev'prev and take step / (1 - r) when r < 0: Aitken's extrapolation for a
      // linearly convergent sequence (Aitken 1926), which lands on the fixed point for r = -1.
      let sp = 0;
      let pp = 0;
      for (let j = 0; j < k; j++) {
        sp += step[j] * prevStep[j];
        pp += prevStep[j] * prevStep[j];
      }
      const r = pp > 0 ? sp / pp : 0;
      if (r < 0) scale = 1 / (1 - Math.max(r, -1));
    }
    let accepted = false;
    let llTry = 0;
    let objTry = 0;
    let factorTry: SquareMatrix | null = null;
    const infoTry = infoPen; // reuse as scratch for the candidate's information (infoPen is consumed)
    for (let h = 0; h <= MAX_HALVINGS; h++) {
      for (let j = 0; j < k; j++) gTry[j] = g[j] + scale * step[j];
      llTry = evaluate(p, gTry, etaTry, muTry, buffers, approximate ? scoreTry : null);
      objTry = -llTry + penaltyValue(p, gTry);
      if (p.firth) {
        information(p, muTry, fisherWTry, buffers, infoTry);
        factorTry = firthFactor(p, infoTry, k);
        objTry = factorTry ? objTry - 0.5 * logDetFromCholesky(factorTry, k) : Infinity;
      }
      // Armijo's sufficient-decrease rule (Nocedal & Wright, Numerical Optimization, 2006, ch. 3): F must fall by at least
      // 1e-4 of the predicted decrease. A step that merely ties (an overshoot to the mirror point,
      // which Firth's approximate Hessian can produce) is halved instead of accepted. Once the
      // predicted decrease is below rounding of F, a non-increase is enough.
      const predicted = scale * decrement;
      const sufficient =
        predicted > 1e-14 * (floor + Math.abs(objective))
          ? objTry <= objective - 1e-4 * predicted
          : objTry <= objective + 1e-13 * Math.abs(objective);
      if (sufficient && Number.isFinite(objTry)) {
        accepted = true;
        break;
      }
      scale *= 0.5;
      halvings++;
    }
    if (!accepted && approximate) {
      // The approximate information gave no descent step: continue with the exact one.
      iterations--;
      approximate = false;
      exactInformationAndScore(p, mu, fisherW, work, buffers, info, score);
      scoreReady = true;
      continue;
    }
    if (!accepted) {
      // No decrease along the Newton direction: at the optimum up to rounding when the predicted
      // decrease is negligible; otherwise report non-convergence.
      const dev = 2 * objective;
      lastChange = decrement / (floor + Math.abs(dev));
      converged = lastChange < 10 * p.tolerance;
      break;
    }
    for (let j = 0; j < k; j++) prevStep[j] = gTry[j] - g[j];
    havePrevStep = true;
    g.set(gTry);
    eta.set(etaTry);
    mu.set(muTry);
    ll = llTry;
    const devOld = 2 * objective;
    objective = objTry;
    const dev = 2 * objective;
    lastChange = Math.abs(dev - devOld) / (floor + Math.abs(dev));
    if (p.keepHistory) history.push(Float64Array.from(g));
    if (p.firth) {
      // The accepted candidate's information, weights and factor are already at hand.
      info.set(infoTry);
      fisherW.set(fisherWTry);
      factor = factorTry;
      if (!factor) {
        singular = true;
        break;
      }
    } else if (approximate) {
      // The accepted candidate's score came with its evaluation.
      score.set(scoreTry);
      scoreReady = true;
      // Improve the approximate information with the curvature seen along the step: s = the step,
      // y = change of -Z'(w (y - t mu)) (the gradient of -l) along it.
      for (let j = 0; j < k; j++) curvature[j] = scoreAtG[j] - scoreTry[j];
      bfgsUpdate(info, k, prevStep, curvature, work.subarray(0, k));
      approximateSteps++;
      continue;
    } else {
      exactInformationAndScore(p, mu, fisherW, work, buffers, info, score);
      scoreReady = true;
    }
    // Firth's iteration uses I (not the Hessian of the penalized objective), so it converges only
    // linearly: a small change of the objective is not enough, the step must be negligible too.
    let stepMax = 0;
    for (let j = 0; j < k; j++) stepMax = Math.max(stepMax, Math.abs(scale * step[j]) / (1 + Math.abs(g[j])));
    if (lastChange < p.tolerance && (!p.firth || stepMax < FIRTH_STEP_TOLERANCE)) {
      converged = true;
      break;
    }
  }
  // The iteration cap can end the approximate phase: the information returned is the exact one.
  if (approximate) exactInformationAndScore(p, mu, fisherW, work, buffers, info, score);
  // Information at the final g (already current: it is refreshed after each accepted step).
  const penalizedInformation = Float64Array.from(info);
  for (let j = 0; j < k; j++) penalizedInformation[j * k + j] += p.penalty[j];
  return {
    coefficients: g,
    objective,
    logLikelihood: ll,
    information: Float64Array.from(info),
    penalizedInformation,
    eta,
    mu,
    iterations,
    converged,
    lastChange,
    singular,
    history,
    halvings,
  };
}

/**
 * BFGS update of a Hessian approximation H (k*k, in place; Nocedal & Wright, Numerical
 * Optimization, 2006, eq. 6.19): H <- H - (H s)(H s)' / (s'H s) + y y' / (y's), for a step s and
 * gradient change y. Skipped unless the curvature y's is clearly positive, so H stays positive
 * definite. `hs` is scratch of length k.
 */
function bfgsUpdate(h: SquareMatrix, k: number, s: Float64Array, y: Float64Array, hs: Float64Array): void {
  let ys = 0;
  let shs = 0;
  for (let i = 0; i < k; i++) {
    let v = 0;
    for (let j = 0; j < k; j++) v += h[i * k + j] * s[j];
    hs[i] = v;
    ys += y[i] * s[i];
    shs += s[i] * v;
  }
  if (!(ys > 0 && shs > 0)) return;
  for (let i = 0; i < k; i++) {
    for (let j = i; j < k; j++) {
      const v = h[i * k + j] - (hs[i] * hs[j]) / shs + (y[i] * y[j]) / ys;
      h[i * k + j] = v;
      h[j * k + i] = v;
    }
  }
}

function firthFactor(p: NewtonProblem, info: SquareMatrix, k: number): SquareMatrix | null {
  if (!p.firth) return null;
  const c = cholesky(info, k);
  return c.ok ? c.factor : null;
}

function isInterceptColumn(p: NewtonProblem, n: number): boolean {
  // With on-the-fly scaling the column is the intercept only when it is passed through unchanged.
  if (p.centre && p.scale && !(p.centre[0] === 0 && p.scale[0] === 1)) return false;
  const col = p.columns[0];
  for (let i = 0; i < n; i++) if (col[i] !== 1) return false;
  return n > 0;
}
