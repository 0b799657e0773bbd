/**
 * Detection of complete and quasi-complete separation in binary data, apart from convergence.
 *
 * Definitions (Albert & Anderson 1984; Santner & Duffy 1986): the data are separated when some
 * direction d gives (2 y_i - 1) x_i'd >= 0 for every row with at least one such inequality strict.
 * If every inequality is strict the separation is complete, otherwise quasi-complete. In both
 * cases maximum-likelihood estimates do not exist: the likelihood keeps rising along d.
 * A grouped row holding both successes and failures can only satisfy x_i'd = 0.
 *
 * Two checks, both of which produce a certificate (the direction and the rows it separates):
 * 1. Univariate, per column: separation by a single column with a threshold (max of x over rows with
 *    failures <= min of x over rows with successes, or the reverse). Cheap and exact.
 * 2. Multivariate, from the Newton iterates: when the fit drives probabilities towards 0 or 1, the
 *    last Newton step points along the diverging direction; it is accepted only after checking the
 *    inequalities above on every row (with a small relative tolerance), as suggested by the
 *    geometry in Albert & Anderson (1984). Columns with non-negligible weight in the direction
 *    (on the standardized scale) are named.
 * References: A. Albert & J. A. Anderson, "On the existence of maximum likelihood estimates in
 * logistic regression models", Biometrika 71 (1984); T. J. Santner & D. E. Duffy, Biometrika 73
 * (1986); the glm.fit check for fitted probabilities numerically 0 or 1.
 */

/** A certified separation finding. Row indices are into the arrays passed in. */
export interface SeparationFinding {
  /** True when every row with positive weight is strictly on its side (complete separation). */
  complete: boolean;
  /** Column indices (into the columns passed in) that carry the separating direction. */
  columns: number[];
  /** Rows strictly separated by the direction (their fitted probabilities run to 0 or 1). */
  rows: number[];
}

/** Response of a binary fit after row screening: successes of trials per row (t = 1 for 0/1 data). */
export interface BinaryResponse {
  rows: number;
  successes: Float64Array;
  trials: Float64Array;
}

/** Rows with at least one success and rows with at least one failure (ascending). */
export interface ResponseSides {
  successRows: Int32Array;
  failureRows: Int32Array;
}

/** Rows scanned from each side between the overlap checks of univariateSeparation. */
const SEPARATION_CHUNK = 1024;

/**
 * The rows of a binary response with a success and those with a failure (a grouped row with
 * both is in both), computed once and shared by the univariate checks of every column.
 */
export function responseSides(r: BinaryResponse): ResponseSides {
  let ns = 0;
  let nf = 0;
  for (let i = 0; i < r.rows; i++) {
    if (r.successes[i] > 0) ns++;
    if (r.trials[i] - r.successes[i] > 0) nf++;
  }
  const successRows = new Int32Array(ns);
  const failureRows = new Int32Array(nf);
  ns = 0;
  nf = 0;
  for (let i = 0; i < r.rows; i++) {
    if (r.successes[i] > 0) successRows[ns++] = i;
    if (r.trials[i] - r.successes[i] > 0) failureRows[nf++] = i;
  }
  return { successRows, failureRows };
}

/**
 * Univariate separation check of one column: is there a threshold c such that every row with a
 * failure has x <= c and every row with a success has x >= c (or the mirror image)?
 * Returns the finding (rows strictly on their side) or null. Exact; O(rows). `sides` may be passed
 * when several columns share the response (see responseSides).
 * Reference: Albert & Anderson (1984), separation by a single covariate.
 */
export function univariateSeparation(
  x: Float64Array,
  r: BinaryResponse,
  sides: ResponseSides = responseSides(r),
): { direction: 1 | -1; threshold: number; complete: boolean; rows: number[] } | null {
  // Ranges of x over the rows with a success and over those with a failure, a chunk of each at a
  // time; once the two ranges overlap both ways no threshold can exist and the scan stops (for
  // data without separation that is usually within the first chunk).
  const { successRows, failureRows } = sides;
  let maxFail = -Infinity;
  let minFail = Infinity;
  let maxSucc = -Infinity;
  let minSucc = Infinity;
  for (let s0 = 0, f0 = 0; s0 < successRows.length || f0 < failureRows.length; s0 += SEPARATION_CHUNK, f0 += SEPARATION_CHUNK) {
    const s1 = Math.min(s0 + SEPARATION_CHUNK, successRows.length);
    for (let t = s0; t < s1; t++) {
      const v = x[successRows[t]];
      maxSucc = Math.max(maxSucc, v);
      minSucc = Math.min(minSucc, v);
    }
    const f1 = Math.min(f0 + SEPARATION_CHUNK, failureRows.length);
    for (let t = f0; t < f1; t++) {
      const v = x[failureRows[t]];
      maxFail = Math.max(maxFail, v);
      minFail = Math.min(minFail, v);
    }
    if (maxFail > minSucc && maxSucc > minFail) return null;
  }
  let direction: 1 | -1;
  let threshold: number;
  if (maxFail <= minSucc) {
    direction = 1;
    threshold = maxFail === minSucc ? maxFail : 0.5 * (maxFail + minSucc);
  } else if (maxSucc <= minFail) {
    direction = -1;
    threshold = maxSucc === minFail ? maxSucc : 0.5 * (maxSucc + minFail);
  } else {
    return null;
  }
  const rows: number[] = [];
  for (let i = 0; i < r.rows; i++) {
    if (direction * (x[i] - threshold) !== 0) rows.push(i);
  }
  if (rows.length === 0) return null; // constant column: no direction at all
  return { direction, threshold, complete: rows.length === r.rows, rows };
}

/** Relative tolerance of the multivariate certificate on (2y - 1) x'd / max |x'd|. */
export const SEPARATION_TOLERANCE = 1e-5;
/** Relative weight (on the standardized scale) above which a column is named as separating. */
export const SEPARATING_COLUMN_WEIGHT = 1e-3;

/**
 * Certify a candidate separating direction d over all rows: pure-success rows need x'd >= -tol,
 * pure-failure rows x'd <= tol, mixed grouped rows |x'd| <= tol, with x'd scaled by its maximum
 * absolute value. Returns the finding or null when d does not separate.
 * @param columns - design columns (standardized scale), parallel to d
 * @param d - candidate direction
 * @param interceptIndex - index of the intercept column in `columns`, or -1 (never named)
 */
export function certifyDirection(
  columns: readonly Float64Array[],
  d: Float64Array,
  r: BinaryResponse,
  interceptIndex: number,
  tol = SEPARATION_TOLERANCE,
): SeparationFinding | null {
  const n = r.rows;
  const s = new Float64Array(n);
  for (let j = 0; j < columns.length; j++) {
    const dj = d[j];
    if (dj === 0) continue;
    const zj = columns[j];
    for (let i = 0; i < n; i++) s[i] += dj * zj[i];
  }
  let maxAbs = 0;
  for (let i = 0; i < n; i++) maxAbs = Math.max(maxAbs, Math.abs(s[i]));
  if (!(maxAbs > 0) || !Number.isFinite(maxAbs)) return null;
  const rows: number[] = [];
  for (let i = 0; i < n; i++) {
    const v = s[i] / maxAbs;
    const hasSucc = r.successes[i] > 0;
    const hasFail = r.trials[i] - r.successes[i] > 0;
    if (hasSucc && hasFail) {
      if (Math.abs(v) > tol) return null;
    } else if (hasSucc) {
      if (v < -tol) return null;
      if (v > tol) rows.push(i);
    } else {
      if (v > tol) return null;
      if (v < -tol) rows.push(i);
    }
  }
  if (rows.length === 0) return null;
  let maxD = 0;
  for (let j = 0; j < columns.length; j++) if (j !== interceptIndex) maxD = Math.max(maxD, Math.abs(d[j]));
  const named: number[] = [];
  for (let j = 0; j < columns.length; j++) {
    if (j !== interceptIndex && Math.abs(d[j]) > SEPARATING_COLUMN_WEIGHT * maxD) named.push(j);
  }
  return { complete: rows.length === n, columns: named, rows };
}

/**
 * Multivariate check from the iterates of an unpenalized Newton fit: when the last step is not
 * negligible (|step|_inf > 1e-3 on the standardized scale) and the fit pushed probabilities
 * towards 0/1 (|eta| > 15) or stopped at its iteration cap, take the last step as the candidate
 * direction and certify it on every row.
 * @param columns - the fitting columns, or a function forming them (called only when a candidate
 *   direction is certified)
 * @param history - coefficients after each accepted iteration (standardized scale)
 * @param eta - final linear predictor
 */
export function separationFromIterates(
  columns: readonly Float64Array[] | (() => readonly Float64Array[]),
  history: readonly Float64Array[],
  eta: Float64Array,
  r: BinaryResponse,
  interceptIndex: number,
  converged = true,
): SeparationFinding | null {
  if (history.length < 2) return null;
  const last = history[history.length - 1];
  const prev = history[history.length - 2];
  const d = new Float64Array(last.length);
  let stepMax = 0;
  for (let j = 0; j < d.length; j++) {
    d[j] = last[j] - prev[j];
    stepMax = Math.max(stepMax, Math.abs(d[j]));
  }
  let maxEta = 0;
  for (let i = 0; i < r.rows; i++) maxEta = Math.max(maxEta, Math.abs(eta[i]));
  // A regular fit ends with steps far below 1e-3; extreme fitted probabilities (|eta| > 15, i.e.
  // p < 3e-7) without a shrinking step are the symptom glm.fit warns about. A fit stopped by the
  // iteration cap is checked whatever its probabilities. The certificate below decides either way.
  if (!(stepMax > 1e-3 && (maxEta > 15 || !converged))) return null;
  return certifyDirection(typeof columns === "function" ? columns() : columns, d, r, interceptIndex);
}
