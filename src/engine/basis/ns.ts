/**
 * Natural cubic spline basis of one column, matching R's splines::ns (and predict on new rows).
 *
 * Method (de Boor 1978/2001, A Practical Guide to Splines, ch. IX-X; Hastie, Tibshirani & Friedman,
 * The Elements of Statistical Learning, 2nd ed., sec. 5.2.1):
 * 1. Boundary knots are the training range; interior knots are type-7 quantiles of the training
 *    values at probabilities 1/(m+1), ..., m/(m+1) with m = df - 1 interior knots (or given knots).
 * 2. The cubic B-spline basis on the knot sequence (boundary knots repeated 4 times) is evaluated by
 *    the Cox-de Boor recursion; the first basis function is dropped (no intercept).
 * 3. "Natural" = second derivative zero at both boundary knots: the B-spline coefficients are
 *    projected onto the null space of the 2 x nb matrix of boundary second derivatives, using the
 *    same Householder QR (LINPACK dqrdc2 conventions) R uses, so columns agree with R to rounding.
 * 4. Beyond the boundary knots each basis function continues linearly (value and slope at the
 *    boundary), as ns does; such rows are valid and get no note.
 * State: boundary knots and interior knots (as R stores them in the "ns" object).
 */
import { problem } from "../messages";
import { type BasisBlock, type BasisColumn, finiteValues, formatForName, quantile7, readNumbers, sortedCopy } from "./common";

/** Stored state of a natural-spline basis. */
export interface NsState {
  kind: "ns";
  source: string;
  /** Interior knots, ascending, strictly inside the boundary knots. */
  knots: number[];
  /** Boundary knots [lower, upper]. */
  boundary: [number, number];
  names: string[];
}

/** Options of {@link fitNs}: give `df` (interior knots at quantiles) or explicit `knots`. */
export interface NsOptions {
  /** Degrees of freedom = number of columns (>= 1); df - 1 interior knots at quantiles. */
  df?: number;
  /** Explicit interior knots (overrides df). */
  knots?: number[];
  /** Explicit boundary knots [lower, upper] (default: training minimum and maximum). */
  boundary?: [number, number];
}

/** Largest df accepted (more columns than this is rarely sensible for one predictor). */
export const MAX_NS_DF = 20;

const ORDER = 4; // cubic

/**
 * Smallest gap between knots, as a share of the boundary width, that the basis can resolve: the
 * boundary second derivatives divide by two knot gaps (in unit coordinates), which overflows for
 * gaps below about 1e-154.
 */
const KNOT_GAP_SHARE = 1e-150;

/**
 * Values (deriv = 0) or derivatives of all B-splines of order `ORDER` on knot sequence `t` at x.
 * x must lie in [t[ORDER-1], t[nb]]; at the right end the last non-empty interval is used (left
 * limit), as R's splineDesign does.
 */
export function bsplineRow(t: readonly number[], x: number, deriv: number): Float64Array {
  const nb = t.length - ORDER;
  // Span mu: t[mu] <= x < t[mu+1], searched among the non-empty intervals.
  let mu = -1;
  for (let i = nb - 1; i >= ORDER - 1; i--) {
    if (t[i] < t[i + 1] && t[i] <= x) {
      mu = i;
      break;
    }
  }
  const out = new Float64Array(nb);
  if (mu < 0) return out;
  // b[i] = B_{i,r}(x) for the current order r, indices 0..t.length-2.
  let b = new Float64Array(t.length - 1);
  b[mu] = 1;
  const valueOrder = ORDER - deriv;
  for (let r = 2; r <= valueOrder; r++) {
    const next = new Float64Array(t.length - 1);
    for (let i = 0; i + r < t.length; i++) {
      const d1 = t[i + r - 1] - t[i];
      const d2 = t[i + r] - t[i + 1];
      const a = d1 > 0 ? ((x - t[i]) / d1) * b[i] : 0;
      const c = d2 > 0 ? ((t[i + r] - x) / d2) * b[i + 1] : 0;
      next[i] = a + c;
    }
    b = next;
  }
  // Raise the order with the derivative recursion
  // D B_{i,r} = (r-1) [B_{i,r-1} / (t_{i+r-1} - t_i) - B_{i+1,r-1} / (t_{i+r} - t_{i+1})].
  for (let r = valueOrder + 1; r <= ORDER; r++) {
    const next = new Float64Array(t.length - 1);
    for (let i = 0; i + r < t.length; i++) {
      const d1 = t[i + r - 1] - t[i];
      const d2 = t[i + r] - t[i + 1];
      next[i] = (r - 1) * ((d1 > 0 ? b[i] / d1 : 0) - (d2 > 0 ? b[i + 1] / d2 : 0));
    }
    b = next;
  }
  for (let i = 0; i < nb; i++) out[i] = b[i];
  return out;
}

/**
 * Householder QR of an n x p matrix (column-major `a`, modified in place) with LINPACK's dqrdc
 * sign convention; returns qraux. Then {@link applyQt} applies Q' to a vector as dqrsl does.
 */
function householderQr(a: Float64Array[], n: number): number[] {
  const p = a.length;
  const qraux = new Array<number>(p).fill(0);
  for (let l = 0; l < Math.min(p, n - 1); l++) {
    const col = a[l];
    let nrm = 0;
    for (let i = l; i < n; i++) nrm += col[i] * col[i];
    nrm = Math.sqrt(nrm);
    if (nrm === 0) continue;
    if (col[l] !== 0) nrm = Math.sign(col[l]) * Math.abs(nrm);
    const inv = 1 / nrm;
    for (let i = l; i < n; i++) col[i] *= inv;
    col[l] = 1 + col[l];
    for (let j = l + 1; j < p; j++) {
      let dot = 0;
      for (let i = l; i < n; i++) dot += col[i] * a[j][i];
      const tt = -dot / col[l];
      for (let i = l; i < n; i++) a[j][i] += tt * col[i];
    }
    qraux[l] = col[l];
    col[l] = -nrm;
  }
  return qraux;
}

function applyQt(a: Float64Array[], qraux: number[], n: number, y: Float64Array): void {
  for (let j = 0; j < Math.min(a.length, n - 1); j++) {
    if (qraux[j] === 0) continue;
    const v = a[j];
    const v0 = qraux[j];
    let dot = v0 * y[j];
    for (let i = j + 1; i < n; i++) dot += v[i] * y[i];
    const tt = -dot / v0;
    y[j] += tt * v0;
    for (let i = j + 1; i < n; i++) y[i] += tt * v[i];
  }
}

/** Names "ns(x)1", ..., "ns(x)df". */
export function nsNames(source: string, df: number): string[] {
  return Array.from({ length: df }, (_, k) => `ns(${source})${k + 1}`);
}

/**
 * Fit a natural cubic spline basis: choose the knots from the training values.
 * @throws OddsmithError BASIS_TOO_FEW_VALUES when the quantile knots coincide or the training
 *   values have no spread; RECIPE_BAD_PARAMETER for knots outside the boundary.
 * @example fitNs({ name: "age", values: ages }, { df: 3 }).knots // the 1/3 and 2/3 quantiles
 */
export function fitNs(column: BasisColumn, options: NsOptions): NsState {
  const x = sortedCopy(finiteValues(readNumbers(column, "ns", null, true)));
  const label = options.knots ? "ns(knots=...)" : `ns(${options.df})`;
  let boundary: [number, number];
  if (options.boundary) {
    boundary = [Math.min(...options.boundary), Math.max(...options.boundary)];
  } else {
    if (x.length === 0) {
      throw problem("BASIS_TOO_FEW_VALUES", { transform: label, column: column.name, needed: 2, found: 0, hint: "Add training rows with numbers." });
    }
    boundary = [x[0], x[x.length - 1]];
  }
  if (!(boundary[1] > boundary[0])) {
    throw problem("BASIS_TOO_FEW_VALUES", {
      transform: label,
      column: column.name,
      needed: 2,
      found: 1,
      hint: "A spline needs training values that differ.",
    });
  }
  let knots: number[];
  if (options.knots) {
    knots = [...options.knots].sort((a, b) => a - b);
    for (const k of knots) {
      if (!(k > boundary[0] && k < boundary[1])) {
        throw problem("RECIPE_BAD_PARAMETER", {
          step: `${column.name}: ns`,
          name: "knots",
          value: formatForName(k),
          expected: `Knots must lie strictly between the boundary knots ${formatForName(boundary[0])} and ${formatForName(boundary[1])}.`,
        });
      }
    }
  } else {
    const df = options.df ?? 1;
    const m = Math.max(0, df - 1);
    const inside = x.filter((v) => v >= boundary[0] && v <= boundary[1]);
    const by = 1 / (m + 1);
    knots = [];
    for (let j = 1; j <= m; j++) knots.push(quantile7(inside, j * by));
  }
  // Knots closer than KNOT_GAP_SHARE of the boundary width coincide for the B-spline recursion (the
  // divisions by knot gaps overflow): values 0 and 5e-323 beside 1 gave NaN columns.
  const minGap = KNOT_GAP_SHARE * (boundary[1] - boundary[0]);
  for (let j = 0; j < knots.length; j++) {
    const clash =
      (j > 0 && !(knots[j] - knots[j - 1] > minGap)) || !(knots[j] - boundary[0] > minGap) || !(boundary[1] - knots[j] > minGap);
    if (clash) {
      throw problem("BASIS_TOO_FEW_VALUES", {
        transform: label,
        column: column.name,
        needed: knots.length + 2,
        found: new Set(x).size,
        hint: "Its quantile knots coincide because many values are tied: use a smaller df, explicit knots, or bins.",
      });
    }
  }
  return { kind: "ns", source: column.name, knots, boundary, names: nsNames(column.name, knots.length + 1) };
}

/** The knot sequence on the unit scale and the QR of the boundary constraints of a fitted basis. */
interface NsProjection {
  /** Knot sequence in u = (x - lo) / (hi - lo): boundary knots 0 and 1 repeated ORDER times. */
  t: number[];
  qrCols: Float64Array[];
  qraux: number[];
  /** B-splines after dropping the first (no intercept). */
  nbc: number;
  /** Columns of the basis. */
  df: number;
}

function nsProjection(state: NsState): NsProjection {
  const [lo, hi] = state.boundary;
  const h = hi - lo;
  const t = [0, 0, 0, 0, ...state.knots.map((v) => (v - lo) / h), 1, 1, 1, 1];
  const nbc = t.length - ORDER - 1; // first B-spline dropped (no intercept)
  // Constraint matrix t(const): nbc rows x 2 columns (second derivatives at lo and hi), column-major.
  const c0 = bsplineRow(t, 0, 2).subarray(1);
  const c1 = bsplineRow(t, 1, 2).subarray(1);
  const qrCols = [Float64Array.from(c0), Float64Array.from(c1)];
  const qraux = householderQr(qrCols, nbc);
  return { t, qrCols, qraux, nbc, df: nbc - 2 };
}

/** The basis columns from one row of B-spline values (or derivatives), projected onto the natural null space. */
function projectRow(p: NsProjection, row: Float64Array, y: Float64Array): Float64Array {
  for (let j = 0; j < p.nbc; j++) y[j] = row[j + 1];
  applyQt(p.qrCols, p.qraux, p.nbc, y);
  return y.subarray(2, 2 + p.df);
}

/**
 * The columns of a fitted natural-spline basis (deriv 0), or their derivatives of order `deriv`
 * with respect to u = (x - lo) / (hi - lo), at u in [0, 1] (inside the boundary knots). At a knot
 * the interval to its right is used (the left limit at u = 1). Used to write the basis as formulas.
 * @example nsColumnsAtUnit(state, 0, 0) // the columns at the lower boundary knot
 */
export function nsColumnsAtUnit(state: NsState, u: number, deriv: 0 | 1 | 2 | 3): Float64Array {
  const p = nsProjection(state);
  return Float64Array.from(projectRow(p, bsplineRow(p.t, u, deriv), new Float64Array(p.nbc)));
}

/**
 * Apply a fitted natural-spline basis to rows (blank/text cells: NaN and a row note). Values beyond
 * the boundary knots are extrapolated linearly, as R's ns does.
 */
export function applyNs(state: NsState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const x = readNumbers(column, "ns", notes);
  const [lo, hi] = state.boundary;
  // Work on u = (x - lo) / (hi - lo), boundary knots 0 and 1: B-splines are invariant under this
  // affine map and the second-derivative constraints only scale by (hi - lo)^-2 (same null space,
  // same Householder reflections), so the values are those on the x scale, while data near 1e300
  // or 1e-300 no longer over- or underflow in the derivatives (which gave wrong columns or none).
  const h = hi - lo;
  const unit = (v: number) => (v - lo) / h;
  const p = nsProjection(state);
  const nb = p.t.length - ORDER;
  // Value and slope at each boundary, for linear extrapolation.
  const atLo = [bsplineRow(p.t, 0, 0), bsplineRow(p.t, 0, 1)];
  const atHi = [bsplineRow(p.t, 1, 0), bsplineRow(p.t, 1, 1)];
  const columns = Array.from({ length: p.df }, () => new Float64Array(x.length));
  const y = new Float64Array(p.nbc);
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i])) {
      for (const col of columns) col[i] = NaN;
      continue;
    }
    const v = unit(x[i]);
    let row: Float64Array;
    if (v < 0 || v > 1) {
      const [b, db] = v < 0 ? atLo : atHi;
      const dx = v - (v < 0 ? 0 : 1);
      row = new Float64Array(nb);
      for (let j = 0; j < nb; j++) row[j] = b[j] + dx * db[j];
    } else {
      row = bsplineRow(p.t, v, 0);
    }
    const out = projectRow(p, row, y);
    for (let k = 0; k < p.df; k++) columns[k][i] = out[k];
  }
  return { names: [...state.names], columns, notes };
}
