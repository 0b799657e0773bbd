/**
 * Profile-likelihood confidence intervals for the coefficients of an unpenalized binary logistic
 * fit. For coefficient j the interval is { c : 2 [ l(b^) - max_{b: b_j = c} l(b) ] <= q }, with q
 * the chi-square(1) quantile at the level (Venzon & Moolgavkar 1988; Agresti 2013, ch. 1). We solve
 * for the two ends of the signed root r(c) = sign(c - b^_j) sqrt(2 [l(b^) - l_j(c)]) = +/- z,
 * which is close to linear in c, by bracketing from the Wald end and then the Illinois variant of
 * regula falsi; each evaluation refits the other coefficients with b_j fixed (c x_j enters the
 * offset) by the same Newton core, warm-started from the previous point.
 * This solves the ends to ~1e-9 in r, rather than interpolating a spline through a coarse profile
 * as MASS's profile.glm (behind R's confint on a glm) does, so agreement with confint() is to its
 * interpolation accuracy, and with an exact root of R's own profile to ~1e-8.
 * References: D. M. Venzon & S. H. Moolgavkar, "A method for computing profile-likelihood-based
 * confidence intervals", Applied Statistics 37 (1988); A. Agresti, Categorical Data Analysis (2013).
 */

import { criticalZ } from "./distributions";
import type { Interval } from "./inference";
import { fitBinomial, type BinomialProblem } from "./glm/binomialFit";

/** Data of the fitted model on the original scale (rows already screened, zero weights removed). */
export interface ProfileData {
  rows: number;
  /** Kept (non-aliased) predictor columns, original scale, without the intercept. */
  columns: Float64Array[];
  intercept: boolean;
  successes: Float64Array;
  trials: Float64Array;
  weights: Float64Array;
  offset: Float64Array;
  /** Estimates on the original scale, intercept first when present (length = parameters). */
  estimate: Float64Array;
  /** Their Wald standard errors (starting brackets). */
  standardError: Float64Array;
  /** Kernel log-likelihood at the estimate. */
  logLikelihood: number;
  maxIterations: number;
  tolerance: number;
}

/** One profile interval; `open` lists the ends that were not found (then NaN). */
export interface ProfileInterval extends Interval {
  open: ("lower" | "upper")[];
}

/** How far (in Wald half-widths) the bracket search goes before declaring an end open. */
export const PROFILE_SEARCH_LIMIT = 64;
/** Root accuracy on the signed-root scale. */
const ROOT_TOLERANCE = 1e-10;

/** Centre and scale one set of columns for the Newton core (intercept column first if wanted). */
function prepare(columns: Float64Array[], intercept: boolean, rows: number, a: Float64Array): { z: Float64Array[]; centre: number[]; scale: number[] } {
  const z: Float64Array[] = [];
  const centre: number[] = [];
  const scale: number[] = [];
  let sa = 0;
  for (let i = 0; i < rows; i++) sa += a[i];
  if (intercept) z.push(new Float64Array(rows).fill(1));
  for (const x of columns) {
    let m = 0;
    for (let i = 0; i < rows; i++) m += a[i] * x[i];
    m /= sa;
    let v = 0;
    for (let i = 0; i < rows; i++) v += a[i] * (intercept ? (x[i] - m) * (x[i] - m) : x[i] * x[i]);
    let s = Math.sqrt(v / sa);
    if (!(s > 0)) s = 1;
    const c = intercept ? m : 0;
    const col = new Float64Array(rows);
    for (let i = 0; i < rows; i++) col[i] = (x[i] - c) / s;
    z.push(col);
    centre.push(c);
    scale.push(s);
  }
  return { z, centre, scale };
}

/**
 * Profile-likelihood intervals for every coefficient (intercept first when present).
 * @param data - the fitted model's data and estimates
 * @param level - two-sided level in (0, 1)
 */
export function profileIntervals(data: ProfileData, level: number): ProfileInterval[] {
  const n = data.rows;
  const p = data.estimate.length;
  const zCrit = criticalZ(level);
  const a = new Float64Array(n);
  for (let i = 0; i < n; i++) a[i] = data.weights[i] * data.trials[i];
  const out: ProfileInterval[] = [];
  const ones = new Float64Array(n).fill(1);
  for (let j = 0; j < p; j++) {
    const isIntercept = data.intercept && j === 0;
    const colIndex = data.intercept ? j - 1 : j;
    const xj = isIntercept ? ones : data.columns[colIndex];
    const others = data.columns.filter((_, t) => t !== colIndex || isIntercept);
    const withIntercept = data.intercept && !isIntercept;
    const prep = prepare(isIntercept ? data.columns : others, withIntercept, n, a);
    const offset = new Float64Array(n);
    const problem: BinomialProblem = {
      rows: n,
      columns: prep.z,
      successes: data.successes,
      trials: data.trials,
      weights: data.weights,
      offset,
      penalty: new Float64Array(prep.z.length),
      firth: false,
      maxIterations: data.maxIterations,
      tolerance: Math.min(data.tolerance, 1e-12),
      start: null,
    };
    // Warm start: the full estimate's other coefficients mapped to the reduced fitting coordinates.
    const startFull = new Float64Array(prep.z.length);
    {
      // other original coefficients (intercept first if kept)
      const orig: number[] = [];
      for (let t = 0; t < p; t++) if (t !== j) orig.push(data.estimate[t]);
      let off = 0;
      let b0 = 0;
      if (withIntercept) {
        b0 = orig[0];
        off = 1;
      }
      for (let t = 0; t < prep.scale.length; t++) {
        startFull[(withIntercept ? 1 : 0) + t] = orig[off + t] * prep.scale[t];
        b0 += orig[off + t] * prep.centre[t];
      }
      if (withIntercept) startFull[0] = b0;
    }
    let warm = Float64Array.from(startFull);
    const bHat = data.estimate[j];
    const signedRoot = (c: number): number => {
      for (let i = 0; i < n; i++) offset[i] = data.offset[i] + c * xj[i];
      problem.start = warm;
      const r = fitBinomial(problem);
      if (r.converged && !r.singular) warm = Float64Array.from(r.coefficients);
      const dev = 2 * (data.logLikelihood - r.logLikelihood);
      const root = Math.sqrt(Math.max(0, dev));
      return c >= bHat ? root : -root;
    };
    out.push(findProfileEnds(bHat, data.standardError[j], zCrit, signedRoot, () => {
      warm = Float64Array.from(startFull);
    }));
  }
  return out;
}


/**
 * Solve r(c) = -z and r(c) = +z for a signed-root profile r (increasing through 0 at the estimate):
 * bracket by walking out from the estimate in steps of z se (doubling, up to
 * PROFILE_SEARCH_LIMIT half-widths), then Illinois regula falsi. `reset` runs before each side
 * (the evaluator's warm start goes back to the estimate).
 */
function findProfileEnds(bHat: number, se: number, zCrit: number, signedRoot: (c: number) => number, reset: () => void): ProfileInterval {
  const half = zCrit * (Number.isFinite(se) && se > 0 ? se : Math.max(1, Math.abs(bHat)));
  const ends: number[] = [];
  const open: ("lower" | "upper")[] = [];
  for (const side of [-1, 1] as const) {
    reset();
    const target = side * zCrit;
    let cIn = bHat;
    let rIn = 0;
    let step = half;
    let cOut = bHat + side * step;
    let rOut = signedRoot(cOut);
    let found = side * rOut >= zCrit;
    while (!found && step < PROFILE_SEARCH_LIMIT * half) {
      cIn = cOut;
      rIn = rOut;
      step *= 2;
      cOut = bHat + side * step;
      rOut = signedRoot(cOut);
      found = side * rOut >= zCrit;
    }
    if (!found || !Number.isFinite(rOut)) {
      ends.push(NaN);
      open.push(side < 0 ? "lower" : "upper");
      continue;
    }
    // Illinois regula falsi on f(c) = r(c) - target within [cIn, cOut].
    let fIn = rIn - target;
    let fOut = rOut - target;
    let c = cOut;
    let lastSide = 0;
    for (let it = 0; it < 100; it++) {
      c = cOut - (fOut * (cOut - cIn)) / (fOut - fIn);
      const f = signedRoot(c) - target;
      if (Math.abs(f) < ROOT_TOLERANCE || Math.abs(cOut - cIn) < 1e-14 * (1 + Math.abs(c))) break;
      if (f * fOut < 0) {
        cIn = cOut;
        fIn = fOut;
        cOut = c;
        fOut = f;
        lastSide = 0;
      } else {
        cOut = c;
        fOut = f;
        if (lastSide === 1) fIn *= 0.5;
        lastSide = 1;
      }
    }
    ends.push(c);
  }
  return { lower: ends[0], upper: ends[1], open };
}

/**
 * Profile penalized-likelihood intervals for a Firth fit: { c : 2 [ l*(b*) - max_{b_j = c} l*(b) ]
 * <= q } with l* = l + (1/2) log det I and I computed from the FULL design at every point (the
 * definition of Heinze & Schemper 2002, which keeps the intervals finite under separation and
 * makes them asymmetric where Wald intervals are not). Coordinates: the intercept and each column
 * divided by its root mean square (not centred, so every original coefficient is one coordinate);
 * the fixed coordinate is held by the Newton core's `free` mask while the others are refitted.
 * `data.logLikelihood` is not used: the maximum of l* is recomputed in these coordinates.
 */
export function firthProfileIntervals(data: ProfileData, level: number): ProfileInterval[] {
  const n = data.rows;
  const p = data.estimate.length;
  const zCrit = criticalZ(level);
  const a = new Float64Array(n);
  let sa = 0;
  for (let i = 0; i < n; i++) {
    a[i] = data.weights[i] * data.trials[i];
    sa += a[i];
  }
  const columns: Float64Array[] = [];
  const scale: number[] = [];
  if (data.intercept) {
    columns.push(new Float64Array(n).fill(1));
    scale.push(1);
  }
  for (const x of data.columns) {
    let ms = 0;
    for (let i = 0; i < n; i++) ms += a[i] * x[i] * x[i];
    let s = Math.sqrt(ms / sa);
    if (!(s > 0) || !Number.isFinite(s)) s = 1;
    columns.push(Float64Array.from(x, (v) => v / s));
    scale.push(s);
  }
  // gamma_t = b_t * scale_t in these coordinates.
  const gammaHat = Float64Array.from(data.estimate, (b, t) => b * scale[t]);
  const problem: BinomialProblem = {
    rows: n,
    columns,
    successes: data.successes,
    trials: data.trials,
    weights: data.weights,
    offset: data.offset,
    penalty: new Float64Array(p),
    firth: true,
    maxIterations: data.maxIterations,
    tolerance: Math.min(data.tolerance, 1e-12),
    start: gammaHat,
  };
  const best = fitBinomial(problem);
  const fMin = best.objective;
  const out: ProfileInterval[] = [];
  const free = new Uint8Array(p);
  for (let j = 0; j < p; j++) {
    free.fill(1);
    free[j] = 0;
    let warm = Float64Array.from(best.coefficients);
    const bHat = best.coefficients[j] / scale[j];
    const signedRoot = (c: number): number => {
      const start = Float64Array.from(warm);
      start[j] = c * scale[j];
      const r = fitBinomial({ ...problem, start, free });
      if (r.converged && !r.singular) warm = Float64Array.from(r.coefficients);
      const root = Math.sqrt(Math.max(0, 2 * (r.objective - fMin)));
      return c >= bHat ? root : -root;
    };
    out.push(
      findProfileEnds(bHat, data.standardError[j], zCrit, signedRoot, () => {
        warm = Float64Array.from(best.coefficients);
      }),
    );
  }
  return out;
}
