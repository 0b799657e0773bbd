/**
 * Cache-blocked accumulation of weighted cross products over a block of rows, the inner kernel of
 * the multi-class information matrix and score.
 *
 * For a block of L rows (columns z_0..z_{q-1} read at offset r0) and m weight vectors v_0..v_{m-1}
 * (stored one after another in a buffer, `stride` doubles apart), the weighted cross products are
 *   S[a, b, k] = sum_{i < L} z_a[r0 + i] z_b[r0 + i] v_k[i],   a <= b,
 * the upper triangles of m weighted Gram matrices at once. This is the row-block ("tiled")
 * formulation of X' diag(v_k) X used by dense linear algebra libraries (G. H. Golub and C. F. Van
 * Loan, Matrix Computations, 4th ed., 2013, §1.5, blocking for the memory hierarchy): the rows of a
 * block (q columns plus m weights, a few tens of kilobytes) stay in the first-level cache while every
 * product is formed, and each inner loop keeps a 2 x 4 tile of sums (two columns a against four
 * weight vectors) in registers, so one pass loads 7 numbers for 8 multiply-adds (the last one to
 * three weight vectors in 2 x 2 and 2 x 1 tiles).
 */

/**
 * Add one row block's weighted cross products to `out`.
 *
 * out[(a * q + b) * m + k] += sum_{i < L} z[a][r0 + i] * z[b][r0 + i] * v[k * stride + i] for a <= b.
 * Entries with a = b + 1 may also be written (the tiles cover two columns at a time); they belong
 * to the lower triangle and must not be read. Nothing is allocated.
 *
 * @param z - columns (each at least r0 + L long)
 * @param r0 - first row of the block
 * @param L - rows in the block (at most `stride`)
 * @param v - weight vectors, v_k at offset k * stride
 * @param stride - distance between two weight vectors in `v`
 * @param m - number of weight vectors
 * @param out - q * q * m accumulators (q = z.length)
 *
 * Reference: Golub & Van Loan, Matrix Computations, 4th ed. (2013), §1.5 (blocked matrix products).
 */
export function accumulateWeightedGrams(
  z: readonly Float64Array[],
  r0: number,
  L: number,
  v: Float64Array,
  stride: number,
  m: number,
  out: Float64Array,
): void {
  const q = z.length;
  for (let b = 0; b < q; b++) {
    const zb = z[b];
    for (let a = 0; a <= b; a += 2) {
      const za = z[a];
      // The second column of the tile: a + 1 (an unused lower-triangle entry when a + 1 > b),
      // or the first column again at the last column.
      const a1 = a + 1 < q ? a + 1 : a;
      const zc = z[a1];
      const o0 = (a * q + b) * m;
      const o1 = (a1 * q + b) * m;
      let k = 0;
      for (; k + 4 <= m; k += 4) {
        const v0 = k * stride;
        const v1 = v0 + stride;
        const v2 = v1 + stride;
        const v3 = v2 + stride;
        let s00 = 0;
        let s01 = 0;
        let s02 = 0;
        let s03 = 0;
        let s10 = 0;
        let s11 = 0;
        let s12 = 0;
        let s13 = 0;
        for (let i = 0; i < L; i++) {
          const xb = zb[r0 + i];
          const t0 = za[r0 + i] * xb;
          const t1 = zc[r0 + i] * xb;
          const w0 = v[v0 + i];
          const w1 = v[v1 + i];
          const w2 = v[v2 + i];
          const w3 = v[v3 + i];
          s00 += t0 * w0;
          s01 += t0 * w1;
          s02 += t0 * w2;
          s03 += t0 * w3;
          s10 += t1 * w0;
          s11 += t1 * w1;
          s12 += t1 * w2;
          s13 += t1 * w3;
        }
        out[o0 + k] += s00;
        out[o0 + k + 1] += s01;
        out[o0 + k + 2] += s02;
        out[o0 + k + 3] += s03;
        if (a1 !== a) {
          out[o1 + k] += s10;
          out[o1 + k + 1] += s11;
          out[o1 + k + 2] += s12;
          out[o1 + k + 3] += s13;
        }
      }
      if (k + 2 <= m) {
        const v0 = k * stride;
        const v1 = v0 + stride;
        let s00 = 0;
        let s01 = 0;
        let s10 = 0;
        let s11 = 0;
        for (let i = 0; i < L; i++) {
          const xb = zb[r0 + i];
          const t0 = za[r0 + i] * xb;
          const t1 = zc[r0 + i] * xb;
          const w0 = v[v0 + i];
          const w1 = v[v1 + i];
          s00 += t0 * w0;
          s01 += t0 * w1;
          s10 += t1 * w0;
          s11 += t1 * w1;
        }
        out[o0 + k] += s00;
        out[o0 + k + 1] += s01;
        if (a1 !== a) {
          out[o1 + k] += s10;
          out[o1 + k + 1] += s11;
        }
        k += 2;
      }
      if (k < m) {
        const v0 = k * stride;
        let s0 = 0;
        let s1 = 0;
        for (let i = 0; i < L; i++) {
          const xb = zb[r0 + i] * v[v0 + i];
          s0 += za[r0 + i] * xb;
          s1 += zc[r0 + i] * xb;
        }
        out[o0 + k] += s0;
        if (a1 !== a) out[o1 + k] += s1;
      }
    }
  }
}

/**
 * Add one row block's cross products of the columns with m vectors to `out`:
 * out[k * q + j] += sum_{i < L} z[j][r0 + i] * u[k * stride + i] (e.g. the score X' r_k per equation).
 * Four vectors per pass over a column, so each column value is loaded once for four products.
 *
 * Reference: Golub & Van Loan, Matrix Computations, 4th ed. (2013), §1.5 (blocked matrix products).
 */
export function accumulateCrossProducts(
  z: readonly Float64Array[],
  r0: number,
  L: number,
  u: Float64Array,
  stride: number,
  m: number,
  out: Float64Array,
): void {
  const q = z.length;
  for (let j = 0; j < q; j++) {
    const zj = z[j];
    let k = 0;
    for (; k + 4 <= m; k += 4) {
      const u0 = k * stride;
      const u1 = u0 + stride;
      const u2 = u1 + stride;
      const u3 = u2 + stride;
      let s0 = 0;
      let s1 = 0;
      let s2 = 0;
      let s3 = 0;
      for (let i = 0; i < L; i++) {
        const x = zj[r0 + i];
        s0 += x * u[u0 + i];
        s1 += x * u[u1 + i];
        s2 += x * u[u2 + i];
        s3 += x * u[u3 + i];
      }
      out[k * q + j] += s0;
      out[(k + 1) * q + j] += s1;
      out[(k + 2) * q + j] += s2;
      out[(k + 3) * q + j] += s3;
    }
    for (; k < m; k++) {
      const u0 = k * stride;
      let s = 0;
      for (let i = 0; i < L; i++) s += zj[r0 + i] * u[u0 + i];
      out[k * q + j] += s;
    }
  }
}
