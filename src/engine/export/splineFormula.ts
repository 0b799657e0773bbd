/**
 * Natural cubic spline columns (ns, as R's splines::ns) as formulas. Each column is a cubic spline
 * in u = (x - lo) / (hi - lo) with knots 0 = t_0 < t_1 < ... < t_m+1 = 1 (the boundary and interior
 * knots on that scale), linear beyond the boundary knots, so it is exactly
 *   f(u) = a + b u + sum_j w_j max(u - t_j, 0)^3
 * (the truncated power form of a cubic spline whose second derivative vanishes at 0), with
 * a = f(0), b = f'(0) and w_j = (jump of f''' at t_j) / 6, f''' being 0 outside [0, 1]. Beyond 1 the
 * cubic and quadratic parts cancel because f''(1) = 0, which leaves the linear continuation.
 * Reference: de Boor, A Practical Guide to Splines (2001), ch. VIII (truncated power basis);
 * Hastie, Tibshirani & Friedman, The Elements of Statistical Learning, 2nd ed., sec. 5.2.1.
 */
import { nsColumnsAtUnit, type NsState } from "../basis/ns";
import { numberLiteral } from "./formulaLiteral";
import { formula, type Formula, type FormulaPart } from "./formulaTemplate";

/** The truncated power coefficients of every column of a natural-spline basis. */
export interface SplinePowerForm {
  /** Knots on the unit scale, boundary knots included (0 first, 1 last). */
  knots: number[];
  /** Per column: value and slope at u = 0, and the weight of each knot's cubic. */
  columns: { a: number; b: number; w: number[] }[];
}

/**
 * The truncated power form of a fitted natural-spline basis (rule in the file comment).
 * @example splinePowerForm(fitNs(col, { df: 3 })).columns.length // 3
 */
export function splinePowerForm(state: NsState): SplinePowerForm {
  const [lo, hi] = state.boundary;
  const h = hi - lo;
  const knots = [0, ...state.knots.map((v) => (v - lo) / h), 1];
  const value = nsColumnsAtUnit(state, 0, 0);
  const slope = nsColumnsAtUnit(state, 0, 1);
  // Third derivative on each interval (constant there), evaluated at its middle.
  const third: Float64Array[] = [];
  for (let j = 0; j + 1 < knots.length; j++) third.push(nsColumnsAtUnit(state, (knots[j] + knots[j + 1]) / 2, 3));
  const columns = Array.from(value, (a, k) => {
    const w = knots.map((_, j) => {
      const right = j < third.length ? third[j][k] : 0;
      const left = j > 0 ? third[j - 1][k] : 0;
      return (right - left) / 6;
    });
    return { a, b: slope[k], w };
  });
  return { knots, columns };
}

/**
 * Formula of column k of a natural-spline basis over the numeric cell `x`.
 * @example nsColumnFormula(state, form, 0, x) // 0.1+0.5*((x-20)/40)+...*MAX(((x-20)/40)-0.33,0)^3...
 */
export function nsColumnFormula(state: NsState, form: SplinePowerForm, k: number, x: Formula): Formula {
  const [lo, hi] = state.boundary;
  const u = formula("((", x, `-${numberLiteral(lo)})/${numberLiteral(hi - lo)})`);
  const { a, b, w } = form.columns[k];
  // The columns vanish at the lower boundary knot (a = 0 up to rounding): a zero is left out.
  const parts: FormulaPart[] = a === 0 ? [numberLiteral(b), "*", ...u] : [numberLiteral(a), "+", numberLiteral(b), "*", ...u];
  form.knots.forEach((t, j) => {
    if (w[j] === 0) return;
    const shifted = t === 0 ? u : formula("(", u, `-${numberLiteral(t)})`);
    parts.push("+", numberLiteral(w[j]), "*MAX(", ...shifted, ",0)^3");
  });
  return parts;
}
