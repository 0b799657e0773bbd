/**
 * Orthogonal polynomial columns (opoly, as R's poly) as formulas. A column of degree k is the monic
 * polynomial p_k of the three-term recurrence divided by its norm; a monic polynomial is the
 * product of (x - r) over its k real roots, so the formula is (x-r1)*(x-r2)*...*(x-rk)/norm: short,
 * needs no helper column, and keeps the digits that an expansion into powers of x would lose.
 *
 * Roots: p_k's roots are the eigenvalues of the k x k Jacobi matrix of the recurrence, all real and
 * simple, and they interlace p_{k-1}'s (Szego, Orthogonal Polynomials, 4th ed., 1975, theorems 3.3.1
 * and 3.3.2), so each lies in a known bracket: (lower bound, first root of p_{k-1}), between
 * consecutive roots of p_{k-1}, (last root, upper bound), with the bounds from Gershgorin's circles
 * of the Jacobi matrix. Each root is found by bisection on p_k evaluated by the same recurrence the
 * basis uses, to the last representable digit.
 */
import type { PolyState } from "../basis/poly";

/** Value of the monic p_k at x by the recurrence of applyPoly (alpha 0-based, norm2 as stored). */
function monicValue(state: PolyState, k: number, x: number): number {
  const { alpha, norm2 } = state;
  if (k === 0) return 1;
  let prev = 1;
  let cur = x - alpha[0];
  for (let j = 2; j <= k; j++) {
    const next = (x - alpha[j - 1]) * cur - (norm2[j] / norm2[j - 1]) * prev;
    prev = cur;
    cur = next;
  }
  return cur;
}

/** Gershgorin bounds of the eigenvalues of the k x k Jacobi matrix (alpha on the diagonal). */
function rootBounds(state: PolyState, k: number): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  const off = (j: number) => (j >= 2 && j <= k ? Math.sqrt(state.norm2[j] / state.norm2[j - 1]) : 0);
  for (let i = 1; i <= k; i++) {
    const r = off(i) + off(i + 1);
    lo = Math.min(lo, state.alpha[i - 1] - r);
    hi = Math.max(hi, state.alpha[i - 1] + r);
  }
  const pad = 1e-9 * Math.max(1, Math.abs(lo), Math.abs(hi));
  return [lo - pad, hi + pad];
}

/** The root of p_k in (a, b), where p_k changes sign, by bisection to the last digit. */
function bisect(state: PolyState, k: number, a: number, b: number): number {
  let fa = monicValue(state, k, a);
  for (let it = 0; it < 2000; it++) {
    const m = a + (b - a) / 2;
    if (m <= a || m >= b) break;
    const fm = monicValue(state, k, m);
    if (fm === 0) return m;
    if (fm < 0 === fa < 0) {
      a = m;
      fa = fm;
    } else b = m;
  }
  return a + (b - a) / 2;
}

/**
 * The roots of the monic orthogonal polynomial of each degree 1..state.degree (on the unit scale of
 * the state), ascending.
 * @example orthogonalRoots(fitPoly(col, { degree: 2, orthogonal: true }))[0] // [alpha_1]
 */
export function orthogonalRoots(state: PolyState): number[][] {
  const out: number[][] = [];
  let previous: number[] = [];
  for (let k = 1; k <= state.degree; k++) {
    const [lo, hi] = rootBounds(state, k);
    const edges = [lo, ...previous, hi];
    const roots: number[] = [];
    for (let j = 0; j + 1 < edges.length; j++) roots.push(bisect(state, k, edges[j], edges[j + 1]));
    out.push(roots);
    previous = roots;
  }
  return out;
}
