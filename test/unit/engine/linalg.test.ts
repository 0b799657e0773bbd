import {
  cholesky,
  choleskyInverse,
  choleskySolve,
  congruence,
  invertSymmetric,
  mirrorUpper,
  multiplyVector,
  quadraticForm,
  accumulateBlockGram,
  rankRevealingCholesky,
  RANK_PROOF_MARGIN,
  RANK_TOLERANCE,
  solveSymmetric,
  subsampleProvesFullRank,
  subMatrix,
  weightedCrossProduct,
  weightedCrossVector,
} from "../../../src/engine/linalg";

/** Well-conditioned small systems: results are exact to a few ulps times the condition number. */
const TOL = 1e-12;

/** A fixed, symmetric positive-definite 3x3 (a hand-made example; eigenvalues all positive). */
const A3 = new Float64Array([4, 12, -16, 12, 37, -43, -16, -43, 98]);

describe("cholesky", () => {
  test("factors the textbook 3x3 example into integer L (L = [2,0,0; 6,1,0; -8,5,3])", () => {
    // Worked example widely used for Cholesky, checked by hand: L L' reproduces A3.
    const c = cholesky(A3, 3);
    expect(c.ok).toBe(true);
    expect(Array.from(c.factor)).toEqual([2, 0, 0, 6, 1, 0, -8, 5, 3]);
  });
  test("reports failure (not an exception) for an indefinite matrix and names the column", () => {
    const c = cholesky(new Float64Array([1, 2, 2, 1]), 2);
    expect(c.ok).toBe(false);
    expect(c.failedColumn).toBe(1);
  });
  test("reports failure for a singular matrix judged with the relative tolerance", () => {
    // [[1, 1], [1, 1 + d]] has second pivot d: 1e-15 is below the default 1e-13, 1e-6 is above it
    // but below a caller's 1e-5.
    const a = new Float64Array([1, 1, 1, 1 + 1e-15]);
    expect(cholesky(a, 2).ok).toBe(false);
    expect(cholesky(new Float64Array([1, 1, 1, 1 + 1e-6]), 2).ok).toBe(true);
    expect(cholesky(new Float64Array([1, 1, 1, 1 + 1e-6]), 2, 1e-5).ok).toBe(false);
  });
  test("solve and inverse reproduce the identity", () => {
    const b = [1, -2, 3];
    const x = solveSymmetric(A3, 3, b)!;
    const back = multiplyVector(A3, 3, x);
    for (let i = 0; i < 3; i++) expect(Math.abs(back[i] - b[i])).toBeLessThan(TOL * 100);
    const inv = invertSymmetric(A3, 3)!;
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 3; j++) {
        let s = 0;
        for (let k = 0; k < 3; k++) s += A3[i * 3 + k] * inv[k * 3 + j];
        expect(Math.abs(s - (i === j ? 1 : 0))).toBeLessThan(TOL * 100);
      }
    }
    // exactly symmetric
    expect(inv[1]).toBe(inv[3]);
    expect(invertSymmetric(new Float64Array([1, 1, 1, 1]), 2)).toBeNull();
    expect(solveSymmetric(new Float64Array([1, 1, 1, 1]), 2, [1, 1])).toBeNull();
  });
  test("choleskySolve may write into its right-hand side", () => {
    const c = cholesky(A3, 3);
    const b = new Float64Array([1, 2, 3]);
    const expected = choleskySolve(c.factor, 3, b);
    choleskySolve(c.factor, 3, b, b);
    expect(Array.from(b)).toEqual(Array.from(expected));
    expect(choleskyInverse(c.factor, 3).length).toBe(9);
  });
});

describe("weighted cross products", () => {
  test("X'WX is exactly symmetric and equals the direct sum", () => {
    const x1 = new Float64Array([1, 2, 3, 4]);
    const x2 = new Float64Array([0.5, -1, 2, 0]);
    const w = new Float64Array([1, 2, 0, 3]);
    const out = weightedCrossProduct([x1, x2], w, 4, new Float64Array(4));
    expect(out[0]).toBe(1 + 8 + 0 + 48);
    expect(out[1]).toBe(0.5 - 4 + 0 + 0);
    expect(out[2]).toBe(out[1]);
    expect(out[3]).toBe(0.25 + 2 + 0 + 0);
    const v = weightedCrossVector([x1, x2], null, new Float64Array([1, 1, 1, 1]), 4, new Float64Array(2));
    expect(Array.from(v)).toEqual([10, 1.5]);
  });
  test("the unrolled X'WX kernel equals the plain triple loop for every column count and row parity", () => {
    for (let p = 1; p <= 7; p++) {
      for (let n = 1; n <= 9; n++) {
        const cols = Array.from({ length: p }, (_, j) => Float64Array.from({ length: n }, (_, i) => Math.sin(1 + i * 7 + j * 3)));
        const w = Float64Array.from({ length: n }, (_, i) => 0.5 + Math.cos(i) ** 2);
        const got = weightedCrossProduct(cols, w, n, new Float64Array(p * p));
        for (let a = 0; a < p; a++) {
          for (let b = 0; b < p; b++) {
            let s = 0;
            for (let i = 0; i < n; i++) s += w[i] * cols[a][i] * cols[b][i];
            expect(Math.abs(got[a * p + b] - s)).toBeLessThan(1e-13);
          }
        }
      }
    }
  });
  test("mirrorUpper copies the upper triangle down", () => {
    expect(Array.from(mirrorUpper(new Float64Array([1, 2, 99, 3]), 2))).toEqual([1, 2, 2, 3]);
  });
});

describe("rankRevealingCholesky", () => {
  test("names the later column of an exact linear dependence x3 = x1 + 2 x2", () => {
    const n = 50;
    const ones = new Float64Array(n).fill(1);
    const x1 = new Float64Array(n);
    const x2 = new Float64Array(n);
    const x3 = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x1[i] = Math.sin(i);
      x2[i] = Math.cos(3 * i) * 10;
      x3[i] = x1[i] + 2 * x2[i];
    }
    const g = weightedCrossProduct([ones, x1, x2, x3], null, n, new Float64Array(16));
    const r = rankRevealingCholesky(g, 4);
    expect(r.rank).toBe(3);
    expect(r.dependent).toEqual([3]);
    expect(r.independent).toEqual([0, 1, 2]);
    expect(r.residualShare[3]).toBeLessThan(1e-12);
  });
  test("keeps a nearly but not exactly dependent column (1 - R^2 = 1e-6 > tolerance)", () => {
    const n = 40;
    const x1 = new Float64Array(n);
    const x2 = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x1[i] = i % 2 === 0 ? 1 : -1;
      x2[i] = x1[i] + (i % 4 < 2 ? 1e-3 : -1e-3);
    }
    const g = weightedCrossProduct([x1, x2], null, n, new Float64Array(4));
    const r = rankRevealingCholesky(g, 2);
    expect(r.rank).toBe(2);
    expect(Math.abs(r.residualShare[1] - 1e-6 / (1 + 1e-6))).toBeLessThan(1e-9);
    expect(rankRevealingCholesky(g, 2, 1e-5).dependent).toEqual([1]);
  });
  test("an all-zero column is dependent", () => {
    const g = new Float64Array([2, 0, 0, 0]);
    const r = rankRevealingCholesky(g, 2);
    expect(r.dependent).toEqual([1]);
    expect(r.residualShare[1]).toBeNaN();
  });
});

describe("small helpers", () => {
  test("subMatrix, quadraticForm and congruence", () => {
    expect(Array.from(subMatrix(A3, 3, [0, 2]))).toEqual([4, -16, -16, 98]);
    expect(quadraticForm(A3, 3, [1, 0, 1])).toBe(4 - 32 + 98);
    // T = diag(2, 1, 1): T A T' scales row and column 0 by 2.
    const t = new Float64Array([2, 0, 0, 0, 1, 0, 0, 0, 1]);
    const b = congruence(t, A3, 3);
    expect(b[0]).toBe(16);
    expect(b[1]).toBe(24);
    expect(b[3]).toBe(24);
    expect(b[8]).toBe(98);
  });
});

/** Columns of `rows` values from a fixed sine/cosine recipe (deterministic, not collinear). */
function testColumns(k: number, rows: number): Float64Array[] {
  return Array.from({ length: k }, (_, j) => Float64Array.from({ length: rows }, (_, i) => Math.sin(0.37 * i * (j + 1) + j) + 0.1 * j));
}

describe("accumulateBlockGram", () => {
  test("accumulates the same Gram matrix as the column-pair sums, block by block, up to rounding", () => {
    const k = 6;
    const rows = 700;
    const stride = 512;
    const cols = testColumns(k, rows);
    const expected = weightedCrossProduct(cols, null, rows, new Float64Array(k * k));
    const out = new Float64Array(k * k);
    const block = new Float64Array(k * stride);
    for (let r0 = 0; r0 < rows; r0 += stride) {
      const len = Math.min(stride, rows - r0);
      for (let j = 0; j < k; j++) for (let r = 0; r < len; r++) block[j * stride + r] = cols[j][r0 + r];
      accumulateBlockGram(block, k, len, stride, out);
    }
    mirrorUpper(out, k);
    for (let t = 0; t < k * k; t++) expect(Math.abs(out[t] - expected[t])).toBeLessThan(TOL * Math.abs(expected[t]) + 1e-12);
  });
});

describe("subsampleProvesFullRank", () => {
  const rows = 4000;
  const every = 10;
  function gramOf(cols: Float64Array[], pick: (i: number) => boolean): Float64Array {
    const idx = Array.from({ length: rows }, (_, i) => i).filter(pick);
    const sub = cols.map((c) => Float64Array.from(idx, (i) => c[i]));
    return weightedCrossProduct(sub, null, idx.length, new Float64Array(cols.length ** 2));
  }
  const diagonalOf = (g: Float64Array, p: number) => Float64Array.from({ length: p }, (_, j) => g[j * p + j]);

  test("independent columns: every 10th row proves what the full check finds (all kept)", () => {
    const cols = testColumns(4, rows);
    const full = gramOf(cols, () => true);
    expect(subsampleProvesFullRank(gramOf(cols, (i) => i % every === 0), 4, diagonalOf(full, 4), RANK_TOLERANCE)).toBe(true);
    expect(rankRevealingCholesky(full, 4).dependent).toEqual([]);
  });

  test("a column equal to another on the subset's rows only: no proof (the full check must decide)", () => {
    const cols = testColumns(3, rows);
    cols[2] = cols[1].map((v, i) => (i % every === 0 ? v : v + Math.cos(i)));
    const full = gramOf(cols, () => true);
    expect(subsampleProvesFullRank(gramOf(cols, (i) => i % every === 0), 3, diagonalOf(full, 3), RANK_TOLERANCE)).toBe(false);
    expect(rankRevealingCholesky(full, 3).dependent).toEqual([]);
  });

  test("a column nearly dependent on the full data (1 - R^2 about 1e-12) is never proved independent", () => {
    const cols = testColumns(3, rows);
    cols[2] = cols[1].map((v, i) => v + 1e-6 * Math.sin(7.1 * i));
    const full = gramOf(cols, () => true);
    expect(rankRevealingCholesky(full, 3).dependent).toEqual([2]);
    expect(subsampleProvesFullRank(gramOf(cols, (i) => i % every === 0), 3, diagonalOf(full, 3), RANK_TOLERANCE)).toBe(false);
  });

  test("the margin is what separates proof from doubt: a share just above the tolerance is not enough", () => {
    // Two columns with 1 - R^2 = 1e-7 on every row: above the tolerance (kept by the full check) but
    // below RANK_PROOF_MARGIN x tolerance, so the subset (a tenth of the rows) cannot prove it.
    const x1 = Float64Array.from({ length: rows }, (_, i) => (i % 2 === 0 ? 1 : -1));
    const x2 = x1.map((v, i) => v + (i % 4 < 2 ? 3.2e-4 : -3.2e-4));
    const full = gramOf([x1, x2], () => true);
    expect(rankRevealingCholesky(full, 2).dependent).toEqual([]);
    expect(RANK_PROOF_MARGIN * RANK_TOLERANCE).toBeGreaterThan(1e-7);
    expect(subsampleProvesFullRank(gramOf([x1, x2], (i) => i % every === 0), 2, diagonalOf(full, 2), RANK_TOLERANCE)).toBe(false);
  });
});
