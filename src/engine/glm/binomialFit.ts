/**
 * A binomial (logistic) fit on the one Newton loop: the design's kernel, the binomial family,
 * Firth's hook when asked, the usual start (intercept at the logit of the pooled rate) and the
 * convergence floor in units of the mean case weight. Used by the binary fit, its warm start and
 * null model, and the profile intervals, so they all run exactly the same loop.
 * Reference: McCullagh & Nelder, Generalized Linear Models, 2nd ed. (1989), ch. 2 and 4; Firth (1993).
 */
import { BinomialLikelihood, FirthPenalty, type BinomialData } from "../families/binomial";
import { createKernel } from "../kernels";
import type { KernelDesign } from "../kernels/types";
import { runNewton, type NewtonOutcome } from "./newton";
import { pickRows, scaledCopy, subsampleWarmStart, type WarmStart, type WarmStartFamily } from "./warmStart";

/** A binomial fit in the fitting coordinates. */
export interface BinomialProblem extends BinomialData {
  /** k stored columns, the intercept (all ones, centre 0 and scale 1) first when present. */
  columns: Float64Array[];
  /** Centring and scaling applied on the fly: z_j = (x_j - centre_j) / scale_j; null: as stored. */
  centre?: Float64Array | null;
  scale?: Float64Array | null;
  /** Ridge penalty per column, >= 0 (0 for the intercept). */
  penalty: Float64Array;
  firth: boolean;
  maxIterations: number;
  tolerance: number;
  /** Starting coefficients; default: intercept at the logit of the pooled rate, the rest 0. */
  start?: Float64Array | null;
  /** Coefficients estimated (1) or held at their start (0); Firth's term still uses every column. */
  free?: Uint8Array | null;
  /** An approximate information at `start` (see the warm start in glm/newton.ts). */
  startInformation?: Float64Array | null;
  /** Keep every accepted iterate (for the separation check). */
  keepHistory?: boolean;
}

/** The loop's outcome with the linear predictors and fitted probabilities at the estimate. */
export interface BinomialOutcome extends NewtonOutcome {
  coefficients: Float64Array;
  eta: Float64Array;
  mu: Float64Array;
}

/**
 * Fitting columns as whole columns: (x - centre) / scale (multiplying by the reciprocal unless it
 * overflows, as the kernels do), or the stored columns.
 * Reference: McCullagh & Nelder (1989), sec. 2.5 (standardized columns).
 */
export function fittingColumns(design: KernelDesign): Float64Array[] {
  const { centre, scale } = design;
  if (!centre || !scale) return design.columns.slice();
  return design.columns.map((x, j) => {
    const inv = 1 / scale[j];
    return Float64Array.from(x, (v) => (Number.isFinite(inv) ? (v - centre[j]) * inv : (v - centre[j]) / scale[j]));
  });
}

/** True when column 0 is the intercept: all ones, passed through unchanged. */
function startsWithIntercept(p: BinomialProblem): boolean {
  if (p.columns.length === 0 || p.rows === 0) return false;
  if (p.centre && p.scale && !(p.centre[0] === 0 && p.scale[0] === 1)) return false;
  return p.columns[0].every((v) => v === 1);
}

/** The usual start: every coefficient 0 but a free intercept at the logit of the pooled rate sum w y / sum w t. */
function defaultStart(p: BinomialProblem): Float64Array {
  const g = new Float64Array(p.columns.length);
  if (!startsWithIntercept(p) || (p.free && !p.free[0])) return g;
  let sy = 0;
  let st = 0;
  for (let i = 0; i < p.rows; i++) {
    sy += p.weights[i] * p.successes[i];
    st += p.weights[i] * p.trials[i];
  }
  const rate = Math.min(Math.max(sy / st, 1e-8), 1 - 1e-8);
  g[0] = Math.log(rate / (1 - rate));
  return g;
}

/**
 * Maximize the binomial (penalized, or Firth's bias-reduced) log-likelihood with the one Newton loop.
 * Never throws: a singular information ends it with singular = true.
 * Reference: McCullagh & Nelder (1989), ch. 4; Firth (1993); Heinze & Schemper (2002).
 */
export function fitBinomial(p: BinomialProblem): BinomialOutcome {
  const design: KernelDesign = { rows: p.rows, columns: p.columns, centre: p.centre ?? null, scale: p.scale ?? null };
  const family = new BinomialLikelihood(p);
  let weightSum = 0;
  for (let i = 0; i < p.rows; i++) weightSum += p.weights[i];
  const outcome = runNewton({
    kernel: createKernel(design, 1),
    family,
    start: p.start ? Float64Array.from(p.start) : defaultStart(p),
    penalty: p.penalty,
    sumPenalty: null,
    free: p.free ?? null,
    hook: p.firth ? new FirthPenalty(fittingColumns(design), family) : null,
    startInformation: p.startInformation ?? null,
    maxIterations: p.maxIterations,
    tolerance: p.tolerance,
    floor: 0.1 * (p.rows > 0 && weightSum > 0 ? weightSum / p.rows : 1),
    keepHistory: p.keepHistory ?? false,
    passEconomy: false,
  });
  return { ...outcome, coefficients: outcome.theta, eta: family.eta, mu: family.mu };
}

/** A subsample fit with a fitted probability this far out (|eta| above it) may be near separation: no warm start. */
const WARM_START_MAX_ETA = 15;

/** The binomial family's part of the warm start (glm/warmStart.ts). */
const BINOMIAL_WARM_START: WarmStartFamily<BinomialProblem> = {
  subsample(p: BinomialProblem, stride: number): BinomialProblem {
    const successes = pickRows(p.successes, stride);
    return {
      rows: successes.length,
      successes,
      trials: pickRows(p.trials, stride),
      weights: pickRows(p.weights, stride),
      offset: pickRows(p.offset, stride),
      columns: p.columns.map((c) => pickRows(c, stride)),
      centre: p.centre ?? null,
      scale: p.scale ?? null,
      penalty: p.penalty,
      firth: p.firth,
      maxIterations: p.maxIterations,
      tolerance: p.tolerance,
      start: null,
      free: p.free ?? null,
      startInformation: null,
      keepHistory: false,
    };
  },
  weight(p: BinomialProblem): number {
    let total = 0;
    for (let i = 0; i < p.rows; i++) total += p.weights[i] * p.trials[i];
    return total;
  },
  fit(sub: BinomialProblem, settings: { tolerance: number; maxIterations: number; share: number }) {
    // One class only in the subsample: its estimate runs off to infinity.
    let successes = 0;
    for (let i = 0; i < sub.rows; i++) successes += sub.weights[i] * sub.successes[i];
    if (!(successes > 0 && successes < BINOMIAL_WARM_START.weight(sub))) return null;
    // (Set field by field: the problem keeps the one shape of `subsample`, see DEVELOPERS.md.)
    sub.tolerance = settings.tolerance;
    sub.maxIterations = settings.maxIterations;
    sub.penalty = scaledCopy(sub.penalty, settings.share);
    const fit = fitBinomial(sub);
    for (let i = 0; i < sub.rows; i++) if (Math.abs(fit.eta[i]) > WARM_START_MAX_ETA) return null;
    return fit;
  },
};

/**
 * Starting values for a large binomial fit by the shared warm-start rule (glm/warmStart.ts); null
 * when there is none (small data, Firth's fit, held coefficients, or a subsample fit that is no
 * guide: one class only, or fitted probabilities near 0 or 1, which may signal separation). The
 * subsample fit only chooses where the full iterations begin; estimate and covariance are the
 * full data's.
 * Reference: Nocedal & Wright, Numerical Optimization, 2nd ed. (2006), ch. 6.
 */
export function binomialWarmStart(p: BinomialProblem): WarmStart | null {
  if (p.firth || p.free) return null;
  return subsampleWarmStart(p, { rows: p.rows, columns: p.columns.length, tolerance: p.tolerance, maxIterations: p.maxIterations }, BINOMIAL_WARM_START);
}
