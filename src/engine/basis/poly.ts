/**
 * Polynomial basis of one column: raw powers x, x^2, ..., x^d, or orthogonal polynomials that match
 * R's stats::poly (and its predict method on new rows).
 *
 * Orthogonal method: the columns are the monic polynomials orthogonal over the training values,
 * built by the three-term (Stieltjes) recurrence
 *   p_0 = 1, p_1 = x - alpha_1, p_{k+1} = (x - alpha_{k+1}) p_k - (norm2_{k+1} / norm2_k) p_{k-1},
 * with alpha_{k+1} = sum(x p_k^2) / sum(p_k^2) and norm2 = (1, n, |p_1|^2, ..., |p_d|^2), each
 * column divided by its norm. The stored state is exactly R's `coefs` list (alpha, norm2), so new
 * rows are evaluated with the same recurrence R's predict.poly uses.
 * Reference: Kennedy & Gentle (1980), Statistical Computing, sec. 8.7 (orthogonal polynomials by
 * recurrence); R Core, stats::poly source (alpha/norm2 definition).
 */
import { problem } from "../messages";
import {
  type BasisBlock,
  type BasisColumn,
  distinctCount,
  finiteValues,
  readNumbers,
  sortedCopy,
} from "./common";

/** Stored state of a polynomial basis. */
export interface PolyState {
  kind: "poly";
  source: string;
  degree: number;
  orthogonal: boolean;
  /** Orthogonal only: recurrence shifts alpha_1..alpha_d (R's coefs$alpha). */
  alpha: number[];
  /** Orthogonal only: (1, n, |p_1|^2, ..., |p_d|^2) (R's coefs$norm2). */
  norm2: number[];
  /**
   * Orthogonal only: the unit x is measured in for alpha and norm2 (absent = 1, R's convention).
   * Values beyond about 1e100 or below 1e-100 in magnitude are divided by their largest magnitude
   * first, since |p_d|^2 would overflow or underflow; orthonormal columns do not change with the unit.
   */
  unit?: number;
  names: string[];
}

/** Options of {@link fitPoly}. */
export interface PolyOptions {
  /** Highest power, an integer >= 1. */
  degree: number;
  /** Orthogonal polynomials (true) or raw powers (false). */
  orthogonal: boolean;
}

/** Largest degree accepted; higher raw powers overflow and are numerically useless. */
export const MAX_POLY_DEGREE = 10;

/** Names: raw "x", "x^2", ...; orthogonal "opoly(x)1", "opoly(x)2", .... */
export function polyNames(source: string, degree: number, orthogonal: boolean): string[] {
  const names: string[] = [];
  for (let k = 1; k <= degree; k++) {
    names.push(orthogonal ? `opoly(${source})${k}` : k === 1 ? source : `${source}^${k}`);
  }
  return names;
}

/**
 * Fit a polynomial basis on the training values of `column` (blank rows are skipped).
 * @throws OddsmithError BASIS_TOO_FEW_VALUES when the degree is not below the number of distinct
 *   values (orthogonal), BASIS_NEEDS_NUMBERS when the column holds text.
 * @example fitPoly({ name: "x", values: [1, 2, 3, 4] }, { degree: 2, orthogonal: true }).alpha // [2.5, 2.5]
 */
export function fitPoly(column: BasisColumn, options: PolyOptions): PolyState {
  const { degree, orthogonal } = options;
  const transform = orthogonal ? "opoly" : "poly";
  const x = finiteValues(readNumbers(column, transform, null, true));
  const state: PolyState = {
    kind: "poly",
    source: column.name,
    degree,
    orthogonal,
    alpha: [],
    norm2: [],
    names: polyNames(column.name, degree, orthogonal),
  };
  const distinct = distinctCount(sortedCopy(x));
  if (distinct < (orthogonal ? degree + 1 : 1)) {
    throw problem("BASIS_TOO_FEW_VALUES", {
      transform: `${transform}(${degree})`,
      column: column.name,
      needed: orthogonal ? degree + 1 : 1,
      found: distinct,
      hint: "Lower the degree or use more training rows.",
    });
  }
  if (!orthogonal) return state;

  const unit = polynomialUnit(x);
  if (unit !== 1) {
    state.unit = unit;
    for (let i = 0; i < x.length; i++) x[i] /= unit;
  }
  // Centre first (as R does) so the sums below do not lose digits to a large mean.
  const n = x.length;
  let mean = 0;
  for (const v of x) mean += v;
  mean /= n;
  const xc = x.map((v) => v - mean);
  let prev = new Float64Array(n); // p_{k-1}
  let cur = new Float64Array(n).fill(1); // p_k
  const norm2 = [1, n];
  const alpha: number[] = [];
  for (let k = 0; k < degree; k++) {
    let sxp2 = 0;
    let sp2 = 0;
    for (let i = 0; i < n; i++) {
      const p2 = cur[i] * cur[i];
      sxp2 += xc[i] * p2;
      sp2 += p2;
    }
    const a = sxp2 / sp2;
    alpha.push(a + mean);
    const ratio = k === 0 ? 0 : norm2[k + 1] / norm2[k];
    const next = new Float64Array(n);
    let nn = 0;
    for (let i = 0; i < n; i++) {
      next[i] = (xc[i] - a) * cur[i] - ratio * prev[i];
      nn += next[i] * next[i];
    }
    norm2.push(nn);
    prev = cur;
    cur = next;
  }
  state.alpha = alpha;
  state.norm2 = norm2;
  return state;
}

/** Largest magnitude of `x` when it lies outside [1e-100, 1e100] (then x is measured in it), else 1. */
function polynomialUnit(x: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < x.length; i++) m = Math.max(m, Math.abs(x[i]));
  return m > 1e100 || (m > 0 && m < 1e-100) ? m : 1;
}

/**
 * Apply a fitted polynomial basis to rows. Blank or text cells give NaN in that row and a row note.
 * Orthogonal columns use R's predict.poly recurrence with the stored alpha and norm2.
 */
export function applyPoly(state: PolyState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const x = readNumbers(column, state.orthogonal ? "opoly" : "poly", notes);
  const n = x.length;
  const d = state.degree;
  const columns = Array.from({ length: d }, () => new Float64Array(n));
  if (!state.orthogonal) {
    // Math.pow (not repeated products) so powers agree with R's `^` to the last bit.
    for (let i = 0; i < n; i++) for (let k = 0; k < d; k++) columns[k][i] = Math.pow(x[i], k + 1);
  } else {
    const { alpha, norm2 } = state;
    const unit = state.unit ?? 1;
    for (let i = 0; i < n; i++) {
      const xi = x[i] / unit;
      let pPrev = 1;
      let pCur = xi - alpha[0];
      columns[0][i] = pCur / Math.sqrt(norm2[2]);
      for (let k = 2; k <= d; k++) {
        const pNext = (xi - alpha[k - 1]) * pCur - (norm2[k] / norm2[k - 1]) * pPrev;
        pPrev = pCur;
        pCur = pNext;
        columns[k - 1][i] = pCur / Math.sqrt(norm2[k + 1]);
      }
    }
  }
  return { names: [...state.names], columns, notes };
}
