/**
 * The JavaScript tile kernels of the block path (kernels/blocks.ts): sums over one block of rows
 * held in a buffer, column j at [j * stride, j * stride + len). Written for speed, not for reading:
 * each inner loop keeps a small tile of independent sums in registers (several columns against
 * several vectors), so that one pass loads each number once for several multiply-adds and the
 * additions do not wait on each other. kernels/reference.ts computes the same sums plainly and the
 * tests compare the two. See kernels/index.ts for the other speed habits of this folder.
 * Reference: G. H. Golub & C. F. Van Loan, Matrix Computations, 4th ed. (2013), sec. 1.5 (blocked
 * matrix products for the memory hierarchy).
 */

/**
 * eta[e * stride + r] = sum_j theta[e q + j] z_j[r] for e < E, r < len: two equations and four
 * columns per pass over the block (each column value loaded once for two equations, each eta
 * loaded and stored once per four columns).
 */
export function linearPredictors(z: Float64Array, q: number, len: number, stride: number, theta: Float64Array, E: number, eta: Float64Array): void {
  eta.fill(0, 0, E * stride);
  let e = 0;
  for (; e + 2 <= E; e += 2) {
    const oa = e * stride;
    const ob = oa + stride;
    const ta = e * q;
    const tb = ta + q;
    let j = 0;
    for (; j + 4 <= q; j += 4) {
      const a0 = theta[ta + j];
      const a1 = theta[ta + j + 1];
      const a2 = theta[ta + j + 2];
      const a3 = theta[ta + j + 3];
      const b0 = theta[tb + j];
      const b1 = theta[tb + j + 1];
      const b2 = theta[tb + j + 2];
      const b3 = theta[tb + j + 3];
      const z0 = j * stride;
      const z1 = z0 + stride;
      const z2 = z1 + stride;
      const z3 = z2 + stride;
      for (let r = 0; r < len; r++) {
        const x0 = z[z0 + r];
        const x1 = z[z1 + r];
        const x2 = z[z2 + r];
        const x3 = z[z3 + r];
        eta[oa + r] += a0 * x0 + a1 * x1 + a2 * x2 + a3 * x3;
        eta[ob + r] += b0 * x0 + b1 * x1 + b2 * x2 + b3 * x3;
      }
    }
    for (; j < q; j++) {
      const ca = theta[ta + j];
      const cb = theta[tb + j];
      const zj = j * stride;
      for (let r = 0; r < len; r++) {
        const x = z[zj + r];
        eta[oa + r] += ca * x;
        eta[ob + r] += cb * x;
      }
    }
  }
  for (; e < E; e++) {
    const o = e * stride;
    const t = e * q;
    let j = 0;
    for (; j + 4 <= q; j += 4) {
      const a0 = theta[t + j];
      const a1 = theta[t + j + 1];
      const a2 = theta[t + j + 2];
      const a3 = theta[t + j + 3];
      const z0 = j * stride;
      const z1 = z0 + stride;
      const z2 = z1 + stride;
      const z3 = z2 + stride;
      for (let r = 0; r < len; r++) eta[o + r] += a0 * z[z0 + r] + a1 * z[z1 + r] + a2 * z[z2 + r] + a3 * z[z3 + r];
    }
    for (; j < q; j++) {
      const c = theta[t + j];
      const zj = j * stride;
      for (let r = 0; r < len; r++) eta[o + r] += c * z[zj + r];
    }
  }
}

/**
 * out[k q + j] += sum_{r < len} z_j[r] u_k[r] for j < q, k < m (u_k at k * stride): four vectors per
 * pass over a column, so each column value is loaded once for four products.
 */
export function accumulateCrossProducts(z: Float64Array, q: number, len: number, stride: number, u: Float64Array, m: number, out: Float64Array): void {
  for (let j = 0; j < q; j++) {
    const zj = j * stride;
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
      for (let r = 0; r < len; r++) {
        const x = z[zj + r];
        s0 += x * u[u0 + r];
        s1 += x * u[u1 + r];
        s2 += x * u[u2 + r];
        s3 += x * u[u3 + r];
      }
      out[k * q + j] += s0;
      out[(k + 1) * q + j] += s1;
      out[(k + 2) * q + j] += s2;
      out[(k + 3) * q + j] += s3;
    }
    for (; k < m; k++) {
      const u0 = k * stride;
      let s0 = 0;
      let s1 = 0;
      let r = 0;
      for (; r + 1 < len; r += 2) {
        s0 += z[zj + r] * u[u0 + r];
        s1 += z[zj + r + 1] * u[u0 + r + 1];
      }
      for (; r < len; r++) s0 += z[zj + r] * u[u0 + r];
      out[k * q + j] += s0 + s1;
    }
  }
}

/**
 * Upper triangle (3 x 3 tiles on and above the diagonal) of one block's Gram matrix A'A added to
 * out (k x k, k a multiple of 3: pad with zero columns): out[j k + l] += sum_r a_j[r] a_l[r]. With
 * a = sqrt(W) Z this accumulates Z'WZ from one buffer; nine independent sums per six loads. Entries
 * below the diagonal inside the diagonal tiles are written too and must be overwritten by mirroring.
 */
export function accumulateBlockGram(a: Float64Array, k: number, len: number, stride: number, out: Float64Array): void {
  for (let j = 0; j + 2 < k; j += 3) {
    const a0 = j * stride;
    const a1 = a0 + stride;
    const a2 = a1 + stride;
    for (let l = j; l + 2 < k; l += 3) {
      const b0 = l * stride;
      const b1 = b0 + stride;
      const b2 = b1 + stride;
      let s00 = 0;
      let s01 = 0;
      let s02 = 0;
      let s10 = 0;
      let s11 = 0;
      let s12 = 0;
      let s20 = 0;
      let s21 = 0;
      let s22 = 0;
      for (let r = 0; r < len; r++) {
        const x0 = a[a0 + r];
        const x1 = a[a1 + r];
        const x2 = a[a2 + r];
        const y0 = a[b0 + r];
        const y1 = a[b1 + r];
        const y2 = a[b2 + r];
        s00 += x0 * y0;
        s01 += x0 * y1;
        s02 += x0 * y2;
        s10 += x1 * y0;
        s11 += x1 * y1;
        s12 += x1 * y2;
        s20 += x2 * y0;
        s21 += x2 * y1;
        s22 += x2 * y2;
      }
      const o = j * k + l;
      out[o] += s00;
      out[o + 1] += s01;
      out[o + 2] += s02;
      out[o + k] += s10;
      out[o + k + 1] += s11;
      out[o + k + 2] += s12;
      out[o + 2 * k] += s20;
      out[o + 2 * k + 1] += s21;
      out[o + 2 * k + 2] += s22;
    }
  }
}

/**
 * out[(a q + b) m + k] += sum_{r < len} z_a[r] z_b[r] v_k[r] for a <= b (v_k at k * stride): the upper
 * triangles of m weighted Gram matrices at once, in tiles of two columns (a, a + 1) against four
 * weight vectors (seven loads for eight multiply-adds), then two and one. Entries with a = b + 1
 * are written too (lower triangle; never read).
 */
export function accumulateWeightedGrams(z: Float64Array, q: number, len: number, stride: number, v: Float64Array, m: number, out: Float64Array): void {
  for (let b = 0; b < q; b++) {
    const zb = b * stride;
    for (let a = 0; a <= b; a += 2) {
      const a1 = a + 1 < q ? a + 1 : a;
      const za = a * stride;
      const zc = a1 * stride;
      const o0 = (a * q + b) * m;
      const o1 = (a1 * q + b) * m;
      const both = a1 !== a;
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
        for (let r = 0; r < len; r++) {
          const xb = z[zb + r];
          const t0 = z[za + r] * xb;
          const t1 = z[zc + r] * xb;
          const w0 = v[v0 + r];
          const w1 = v[v1 + r];
          const w2 = v[v2 + r];
          const w3 = v[v3 + r];
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
        if (both) {
          out[o1 + k] += s10;
          out[o1 + k + 1] += s11;
          out[o1 + k + 2] += s12;
          out[o1 + k + 3] += s13;
        }
      }
      for (; k < m; k++) {
        const v0 = k * stride;
        let s0 = 0;
        let s1 = 0;
        for (let r = 0; r < len; r++) {
          const xb = z[zb + r] * v[v0 + r];
          s0 += z[za + r] * xb;
          s1 += z[zc + r] * xb;
        }
        out[o0 + k] += s0;
        if (both) out[o1 + k] += s1;
      }
    }
  }
}
