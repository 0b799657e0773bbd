/**
 * Large binary fits (40,000 rows and more) start from a fit on a systematic subsample and iterate
 * first with that subsample's information scaled up (see subsampleWarmStart in binary.ts and
 * NewtonProblem.startInformation). The warm start may only change where the iterations begin:
 * these tests check the estimate, standard errors and log-likelihood against the same data given
 * as half as many rows with case weight 2, which is below the warm-start size and so fitted from
 * the usual start. Frequency weights make the two likelihoods identical (McCullagh & Nelder 1989,
 * ch. 4), so they must agree to rounding and the convergence rule. Data: invented, seeded LCG.
 */
import { fitBinaryModel, SPARSE_MIN_ROWS, WARM_START_MIN_ROWS } from "../../../src/engine/binary";
import type { BinaryFitOptions, DesignMatrix, ModelFit } from "../../../src/engine/types";

/** Both fits stop by the 1e-10 deviance rule from different starts: estimates agree to ~1e-9. */
const SAME_FIT_TOL = 1e-7;
/** Log-likelihoods are sums over 40,000 rows: agreement to 1e-12 relative is rounding. */
const LOGLIK_REL_TOL = 1e-12;

function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return (s + 0.5) / 4294967296;
  };
}

interface Data {
  distinct: DesignMatrix;
  y: Float64Array;
}

/** `rows` distinct rows: a normal column, a column far from 0 (tests centring), a 0/1 indicator. */
function makeData(rows: number, seed: number, slopes = [0.8, -0.5, 1.2]): Data {
  const u = lcg(seed);
  const normal = () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
  const a = new Float64Array(rows);
  const b = new Float64Array(rows);
  const c = new Float64Array(rows);
  const y = new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    a[i] = normal();
    b[i] = 5000 + 3 * normal();
    c[i] = u() < 0.3 ? 1 : 0;
    const eta = -0.4 + slopes[0] * a[i] + slopes[1] * (b[i] - 5000) / 3 + slopes[2] * c[i];
    y[i] = u() < 1 / (1 + Math.exp(-eta)) ? 1 : 0;
  }
  return { distinct: { rows, columns: [a, b, c], names: ["a", "b", "c"] }, y };
}

/** Every row twice (rows i and i + n are the same). */
function doubled(d: Data): { X: DesignMatrix; y: Float64Array } {
  const twice = (v: Float64Array) => {
    const out = new Float64Array(2 * v.length);
    out.set(v);
    out.set(v, v.length);
    return out;
  };
  return { X: { rows: 2 * d.distinct.rows, columns: d.distinct.columns.map(twice), names: d.distinct.names }, y: twice(d.y) };
}

function expectSameFit(big: ModelFit, weighted: ModelFit): void {
  expect(big.converged).toBe(true);
  expect(weighted.converged).toBe(true);
  for (let t = 0; t < big.table.length; t++) {
    if (weighted.aliased[t]) {
      expect(big.aliased[t]).toBe(true);
      continue;
    }
    const scale = 1 + Math.abs(weighted.table[t].estimate);
    expect(Math.abs(big.table[t].estimate - weighted.table[t].estimate) / scale).toBeLessThan(SAME_FIT_TOL);
    expect(Math.abs(big.table[t].standardError / weighted.table[t].standardError - 1)).toBeLessThan(SAME_FIT_TOL);
  }
  expect(Math.abs(big.logLikelihood / weighted.logLikelihood - 1)).toBeLessThan(LOGLIK_REL_TOL);
  expect(Math.abs(big.nullLogLikelihood / weighted.nullLogLikelihood - 1)).toBeLessThan(LOGLIK_REL_TOL);
}

describe("large fits (warm start from a subsample) give the full-data maximum likelihood fit", () => {
  const half = WARM_START_MIN_ROWS / 2;

  test("estimates, standard errors and log-likelihood equal those of the same data as weight-2 rows", () => {
    const d = makeData(half, 11);
    const { X, y } = doubled(d);
    const big = fitBinaryModel(X, y);
    const weighted = fitBinaryModel(d.distinct, d.y, { weights: new Float64Array(half).fill(2) });
    expect(big.rowsUsed).toBe(2 * half);
    expectSameFit(big, weighted);
  });

  test("with an offset and case weights the warm-started fit still equals the weighted one", () => {
    const d = makeData(half, 23);
    const u = lcg(5);
    const offset = Float64Array.from({ length: half }, () => u() - 0.5);
    const w = Float64Array.from({ length: half }, () => 1 + Math.floor(3 * u()));
    const { X, y } = doubled(d);
    const opts = (o: Float64Array, ww: Float64Array): BinaryFitOptions => ({ offset: o, weights: ww });
    const twice = (v: Float64Array) => Float64Array.from({ length: 2 * v.length }, (_, i) => v[i % v.length]);
    const big = fitBinaryModel(X, y, opts(twice(offset), twice(w)));
    const weighted = fitBinaryModel(d.distinct, d.y, opts(offset, w.map((v) => 2 * v)));
    expectSameFit(big, weighted);
  });

  test("a ridge-penalized large fit equals the weighted one (the penalty is not scaled by the row count)", () => {
    const d = makeData(half, 37);
    const { X, y } = doubled(d);
    const big = fitBinaryModel(X, y, { penalty: 5 });
    const weighted = fitBinaryModel(d.distinct, d.y, { penalty: 5, weights: new Float64Array(half).fill(2) });
    for (let t = 0; t < big.table.length; t++) {
      expect(Math.abs(big.table[t].estimate - weighted.table[t].estimate) / (1 + Math.abs(weighted.table[t].estimate))).toBeLessThan(SAME_FIT_TOL);
    }
    expect(Math.abs(big.logLikelihood / weighted.logLikelihood - 1)).toBeLessThan(LOGLIK_REL_TOL);
  });

  test("a column that is non-zero on a few rows only (absent from the subsample) still gets the full-data fit", () => {
    const d = makeData(half, 41);
    // Three rows of a rare indicator, none on the subsample's every-stride-th rows.
    const rare = new Float64Array(half);
    rare[1] = 1;
    rare[3] = 1;
    rare[5] = 1;
    d.distinct.columns.push(rare);
    d.distinct.names.push("rare");
    const { X, y } = doubled(d);
    const big = fitBinaryModel(X, y);
    const weighted = fitBinaryModel(d.distinct, d.y, { weights: new Float64Array(half).fill(2) });
    expectSameFit(big, weighted);
  });

  test("an exactly dependent column in large data is reported aliased, as in the weighted small fit", () => {
    const d = makeData(half, 53);
    const a = d.distinct.columns[0];
    d.distinct.columns.push(a.map((v, i) => 2 * v - 3 * d.distinct.columns[2][i]));
    d.distinct.names.push("dependent");
    const { X, y } = doubled(d);
    const big = fitBinaryModel(X, y);
    const weighted = fitBinaryModel(d.distinct, d.y, { weights: new Float64Array(half).fill(2) });
    expect(big.aliased).toEqual([false, false, false, false, true]);
    expect(weighted.aliased).toEqual(big.aliased);
    expectSameFit(big, weighted);
  });

  test("a column dependent on the subsample's rows only is kept, as in the weighted small fit", () => {
    // The copy of `a` differs only on some odd rows; the subsample takes every 8th row (40,000 rows,
    // 5,000-row subsample), so on it the copy is exactly `a` and cannot prove full rank. The
    // full-data check then decides, and keeps the column.
    const d = makeData(half, 59);
    const a = d.distinct.columns[0];
    const u = lcg(17);
    d.distinct.columns.push(a.map((v, i) => (i % 2 === 1 && u() < 0.02 ? v + 1 : v)));
    d.distinct.names.push("nearCopy");
    const { X, y } = doubled(d);
    const big = fitBinaryModel(X, y);
    const weighted = fitBinaryModel(d.distinct, d.y, { weights: new Float64Array(half).fill(2) });
    expect(big.aliased).toEqual([false, false, false, false, false]);
    expectSameFit(big, weighted);
  });

  test("complete separation in large data is still reported, with no estimates", () => {
    const rows = WARM_START_MIN_ROWS + 1000;
    const u = lcg(3);
    const x = Float64Array.from({ length: rows }, () => u() * 2 - 1);
    const y = x.map((v) => (v > 0 ? 1 : 0));
    const fit = fitBinaryModel({ rows, columns: [x], names: ["x"] }, y);
    expect(fit.diagnostics.map((dg) => dg.code)).toContain("SEPARATION_COMPLETE");
    expect(Number.isNaN(fit.table[1].estimate)).toBe(true);
  });
});

/**
 * Mostly-zero columns (at most 10% non-zero, designs of 10,000 rows or more) enter the information
 * matrix through sums over their non-zero rows with the centring applied algebraically. Check:
 * replacing an indicator x by its complement 1 - x (90% non-zero, so an ordinary column) only
 * reparametrizes the model with an intercept (McCullagh & Nelder 1989, ch. 3): the slope changes
 * sign, its standard error and every other slope, standard error and the log-likelihood stay.
 */
describe("designs with mostly-zero (indicator) columns", () => {
  /** Two fits of the same model from different parametrizations: rounding and convergence rule. */
  const REPARAM_TOL = 1e-8;

  function indicatorData(rows: number, seed: number) {
    const u = lcg(seed);
    const normal = () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
    // Levels of a text predictor with unequal frequencies (two rare ones) plus one number column.
    const share = [0.06, 0.05, 0.03, 0.004];
    const levels = share.map(() => new Float64Array(rows));
    const num = new Float64Array(rows);
    const y = new Float64Array(rows);
    for (let i = 0; i < rows; i++) {
      num[i] = 10 + 2 * normal();
      let v = u();
      let eta = 0.3 * (num[i] - 10) - 0.2;
      for (let l = 0; l < share.length; l++) {
        if (v >= 0 && v < share[l]) {
          levels[l][i] = 1;
          eta += [1, -0.8, 0.5, 1.5][l];
        }
        v -= share[l];
      }
      y[i] = u() < 1 / (1 + Math.exp(-eta)) ? 1 : 0;
    }
    return { levels, num, y };
  }

  test.each([
    ["above the sparse size, with the warm start", WARM_START_MIN_ROWS + 2000],
    ["above the sparse size, without the warm start", SPARSE_MIN_ROWS + 500],
  ])("an indicator and its complement give the same fit up to the sign of its slope (%s)", (_label, rows) => {
    const d = indicatorData(rows, 99);
    const names = ["num", "L1", "L2", "L3", "L4"];
    const sparse = fitBinaryModel({ rows, columns: [d.num, ...d.levels], names }, d.y);
    const flipped = d.levels.map((c, l) => (l === 0 ? c.map((v) => 1 - v) : c));
    const dense = fitBinaryModel({ rows, columns: [d.num, ...flipped], names }, d.y);
    expect(sparse.converged).toBe(true);
    expect(dense.converged).toBe(true);
    for (let t = 1; t < sparse.table.length; t++) {
      const sign = t === 2 ? -1 : 1; // L1 is term 2 (after the intercept and num)
      expect(Math.abs(sparse.table[t].estimate - sign * dense.table[t].estimate)).toBeLessThan(REPARAM_TOL * (1 + Math.abs(dense.table[t].estimate)));
      expect(Math.abs(sparse.table[t].standardError / dense.table[t].standardError - 1)).toBeLessThan(REPARAM_TOL);
    }
    expect(Math.abs(sparse.logLikelihood / dense.logLikelihood - 1)).toBeLessThan(LOGLIK_REL_TOL);
  });

  test("an all-zero indicator column among mostly-zero ones is reported aliased, as in a small design", () => {
    const rows = SPARSE_MIN_ROWS + 500;
    const d = indicatorData(rows, 7);
    const empty = new Float64Array(rows);
    const fit = fitBinaryModel({ rows, columns: [d.num, ...d.levels, empty], names: ["num", "L1", "L2", "L3", "L4", "none"] }, d.y);
    expect(fit.aliased).toEqual([false, false, false, false, false, false, true]);
    expect(fit.converged).toBe(true);
  });
});

describe("large fits with a constant or nearly constant column", () => {
  test("a constant column is aliased with the intercept, as in a small fit (never proved independent)", () => {
    const rows = WARM_START_MIN_ROWS + 1000;
    const u = lcg(71);
    const x = Float64Array.from({ length: rows }, () => u() * 2 - 1);
    const constant = new Float64Array(rows).fill(1234.5);
    const y = x.map((v) => (u() < 1 / (1 + Math.exp(-v)) ? 1 : 0));
    const fit = fitBinaryModel({ rows, columns: [x, constant], names: ["x", "constant"] }, y);
    expect(fit.aliased).toEqual([false, false, true]);
    expect(fit.converged).toBe(true);
  });
});
