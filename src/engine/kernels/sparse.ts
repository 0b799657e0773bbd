/**
 * The sparse indicator path (one equation): columns that are mostly zero, such as the 0/1
 * indicators of a text predictor's levels, enter the sums through their non-zero rows, with their
 * centring applied algebraically; the other columns, with a column of ones, go through a dense
 * kernel (kernels/blocks.ts or wasmPath.ts). With z_j = (x_j - c_j) / s_j, W the weights, r the
 * residuals and S_j the non-zero rows of a sparse column j:
 *   eta_i   += sum_j (theta_j / s_j) x_ij over S_j, minus the constant sum_j theta_j c_j / s_j,
 *   z_j'r    = (sum_{S_j} r x_j - c_j sum r) / s_j,
 *   z_j'W z_l = (sum_{S_j} W x_j z_l - c_j sum W z_l) / s_j                          (l dense),
 *   z_j'W z_l = (sum_{S_j and S_l} W x_j x_l - c_l sum_{S_j} W x_j - c_j sum_{S_l} W x_l
 *               + c_j c_l sum W) / (s_j s_l)                                           (l sparse),
 * the sums over rows non-zero in both taken row by row from a compressed-row index. The information
 * then costs about (non-zero entries) x (columns) instead of rows x columns^2 / 2. For a mostly-zero
 * column |c_j| / s_j is small (about sqrt(f / (1 - f)) for a share f of non-zero rows), so the
 * algebraic centring loses no accuracy to cancellation.
 * Reference: S. Pissanetzky, Sparse Matrix Technology (1984), ch. 1 (compressed-row storage);
 * McCullagh & Nelder (1989), ch. 2.
 */
import type { BlockLikelihood, Kernel, KernelDesign, PassOutput, PassWants } from "./types";

/** Designs with at least this many rows look for mostly-zero columns (see sparseRowLists). */
export const SPARSE_MIN_ROWS = 10000;
/** A column counts as mostly zero when at most this share of its rows is non-zero. */
export const SPARSE_MAX_SHARE = 0.1;

/**
 * For each column, its non-zero rows (ascending) when they are at most SPARSE_MAX_SHARE of the
 * rows, else null; null overall when no column qualifies or the design has fewer than `minRows` rows.
 */
export function sparseRowLists(columns: readonly Float64Array[], n: number, minRows = SPARSE_MIN_ROWS): (Int32Array | null)[] | null {
  if (n < minRows || n === 0) return null;
  const limit = Math.floor(SPARSE_MAX_SHARE * n);
  let any = false;
  const lists = columns.map((x) => {
    let count = 0;
    for (let i = 0; i < n && count <= limit; i++) if (x[i] !== 0) count++;
    if (count > limit) return null;
    const rows = new Int32Array(count);
    let r = 0;
    for (let i = 0; i < n; i++) if (x[i] !== 0) rows[r++] = i;
    any = true;
    return rows;
  });
  return any ? lists : null;
}

/**
 * The family seen by the dense kernel: its linear predictors get the sparse columns' part added
 * before the real family's block runs, and the residuals and weights are kept for every row (the
 * sparse sums need them after the pass).
 */
class WithSparsePart implements BlockLikelihood {
  readonly equations = 1;
  inner: BlockLikelihood | null = null;
  constructor(
    readonly sparseEta: Float64Array,
    readonly residual: Float64Array,
    readonly weights: Float64Array,
  ) {}

  block(i0: number, len: number, eta: Float64Array, residual: Float64Array | null, weights: Float64Array | null, stride: number): number {
    for (let r = 0; r < len; r++) eta[r] += this.sparseEta[i0 + r];
    const ll = this.inner!.block(i0, len, eta, residual, weights, stride);
    if (residual) for (let r = 0; r < len; r++) this.residual[i0 + r] = residual[r];
    if (weights) for (let r = 0; r < len; r++) this.weights[i0 + r] = weights[r];
    return ll;
  }
}

/** Compressed rows of the sparse columns: for row i, the sparse slots non-zero there are slot[start[i] .. start[i+1]). */
function compressedRows(lists: readonly Int32Array[], n: number): { start: Int32Array; slot: Int32Array } {
  const start = new Int32Array(n + 1);
  for (const rows of lists) for (let r = 0; r < rows.length; r++) start[rows[r] + 1]++;
  for (let i = 0; i < n; i++) start[i + 1] += start[i];
  const fill = start.slice(0, n);
  const slot = new Int32Array(start[n]);
  lists.forEach((rows, t) => {
    for (let r = 0; r < rows.length; r++) slot[fill[rows[r]]++] = t;
  });
  return { start, slot };
}

/** The sparse kernel of one design with one equation (see the file comment). */
export class SparseKernel implements Kernel {
  readonly name = "sparse";
  private readonly q: number;
  private readonly denseCols: number[] = [];
  private readonly sparseCols: number[] = [];
  private readonly lists: Int32Array[] = [];
  private readonly index: { start: Int32Array; slot: Int32Array };
  private readonly dense: Kernel;
  private readonly wrapper: WithSparsePart;
  private readonly denseTheta: Float64Array;
  private readonly denseOut: PassOutput;

  constructor(
    private readonly design: KernelDesign,
    sparseRows: readonly (Int32Array | null)[],
    makeDense: (design: KernelDesign, equations: number) => Kernel,
  ) {
    const n = design.rows;
    this.q = design.columns.length;
    for (let j = 0; j < this.q; j++) {
      const rows = sparseRows[j];
      if (rows) {
        this.sparseCols.push(j);
        this.lists.push(rows);
      } else {
        this.denseCols.push(j);
      }
    }
    this.index = compressedRows(this.lists, n);
    const m = this.denseCols.length + 1;
    this.dense = makeDense(
      {
        rows: n,
        columns: [new Float64Array(n).fill(1), ...this.denseCols.map((j) => design.columns[j])],
        centre: Float64Array.from([0, ...this.denseCols.map((j) => this.centre(j))]),
        scale: Float64Array.from([1, ...this.denseCols.map((j) => this.scale(j))]),
      },
      1,
    );
    this.wrapper = new WithSparsePart(new Float64Array(n), new Float64Array(n), new Float64Array(n));
    this.denseTheta = new Float64Array(m);
    this.denseOut = { score: new Float64Array(m), information: new Float64Array(m * m) };
  }

  private centre(j: number): number {
    return this.design.centre && this.design.scale ? this.design.centre[j] : 0;
  }

  private scale(j: number): number {
    return this.design.centre && this.design.scale ? this.design.scale[j] : 1;
  }

  /** The sparse columns' part of every linear predictor (see the file comment). */
  private sparseLinearPredictors(theta: Float64Array, eta: Float64Array): void {
    let constant = 0;
    for (const j of this.sparseCols) constant -= (theta[j] * this.centre(j)) / this.scale(j);
    eta.fill(constant);
    this.sparseCols.forEach((j, t) => {
      const f = theta[j] / this.scale(j);
      if (f === 0) return;
      const x = this.design.columns[j];
      const rows = this.lists[t];
      for (let r = 0; r < rows.length; r++) eta[rows[r]] += f * x[rows[r]];
    });
  }

  pass(theta: Float64Array, family: BlockLikelihood, wants: PassWants, out: PassOutput): number {
    this.sparseLinearPredictors(theta, this.wrapper.sparseEta);
    this.denseTheta[0] = 0;
    this.denseCols.forEach((j, a) => (this.denseTheta[a + 1] = theta[j]));
    this.wrapper.inner = family;
    const ll = this.dense.pass(this.denseTheta, this.wrapper, wants, this.denseOut);
    this.wrapper.inner = null;
    if (wants !== "value") this.sparseScore(out.score);
    if (wants === "information") this.crossProducts(this.wrapper.weights, this.denseOut.information, out.information);
    return ll;
  }

  gram(w: Float64Array, out: Float64Array): Float64Array {
    const m = this.denseCols.length + 1;
    const denseGram = this.dense.gram(w, new Float64Array(m * m));
    return this.crossProducts(w, denseGram, out);
  }

  /** Score entries: dense ones from the dense pass, sparse ones from their non-zero rows. */
  private sparseScore(score: Float64Array): void {
    const dense = this.denseOut.score;
    const sumR = dense[0];
    this.denseCols.forEach((j, a) => (score[j] = dense[a + 1]));
    const r = this.wrapper.residual;
    this.sparseCols.forEach((j, t) => {
      const x = this.design.columns[j];
      const rows = this.lists[t];
      let s = 0;
      for (let k = 0; k < rows.length; k++) s += r[rows[k]] * x[rows[k]];
      score[j] = (s - this.centre(j) * sumR) / this.scale(j);
    });
  }

  /** Z' diag(W) Z from the dense part's Gram matrix (ones first) and the sparse sums (file comment). */
  private crossProducts(W: Float64Array, denseGram: Float64Array, out: Float64Array): Float64Array {
    const { q, denseCols, sparseCols } = this;
    const m = denseCols.length + 1;
    const sumW = denseGram[0];
    for (let a = 0; a < denseCols.length; a++) {
      for (let b = 0; b < denseCols.length; b++) out[denseCols[a] * q + denseCols[b]] = denseGram[(a + 1) * m + b + 1];
    }
    const { cross, swx } = this.sparsePairSums(W);
    const ns = sparseCols.length;
    for (let t = 0; t < ns; t++) {
      const j = sparseCols[t];
      const cj = this.centre(j);
      const sj = this.scale(j);
      out[j * q + j] = (cross[t * ns + t] - 2 * cj * swx[t] + cj * cj * sumW) / (sj * sj);
      for (let a = 0; a < denseCols.length; a++) {
        const l = denseCols[a];
        const v = ((this.sparseDenseSum(W, t, l) - this.centre(l) * swx[t]) / this.scale(l) - cj * denseGram[a + 1]) / sj;
        out[j * q + l] = v;
        out[l * q + j] = v;
      }
      for (let u = t + 1; u < ns; u++) {
        const l = sparseCols[u];
        const cl = this.centre(l);
        const v = (cross[t * ns + u] - cl * swx[t] - cj * swx[u] + cj * cl * sumW) / (sj * this.scale(l));
        out[j * q + l] = v;
        out[l * q + j] = v;
      }
    }
    return out;
  }

  /** sum over S_t of W x_t x_l (raw values) for a sparse slot t and a dense column l. */
  private sparseDenseSum(W: Float64Array, t: number, l: number): number {
    const x = this.design.columns[this.sparseCols[t]];
    const xl = this.design.columns[l];
    const rows = this.lists[t];
    let s = 0;
    for (let k = 0; k < rows.length; k++) {
      const i = rows[k];
      s += W[i] * x[i] * xl[i];
    }
    return s;
  }

  /**
   * cross[t ns + u] = sum over rows non-zero in both of W x_t x_u (t <= u) and swx[t] = sum_{S_t} W x_t,
   * row by row through the compressed rows, so the pairs cost (non-zeros per row)^2 per row.
   */
  private sparsePairSums(W: Float64Array): { cross: Float64Array; swx: Float64Array } {
    const { start, slot } = this.index;
    const ns = this.sparseCols.length;
    const cols = this.sparseCols.map((j) => this.design.columns[j]);
    const cross = new Float64Array(ns * ns);
    const swx = new Float64Array(ns);
    for (let i = 0; i < this.design.rows; i++) {
      const e = start[i + 1];
      for (let a = start[i]; a < e; a++) {
        const t = slot[a];
        const v = W[i] * cols[t][i];
        swx[t] += v;
        for (let b = a; b < e; b++) cross[t * ns + slot[b]] += v * cols[slot[b]][i];
      }
    }
    return { cross, swx };
  }
}
