/**
 * A multinomial (softmax) fit on the one Newton loop (glm/newton.ts): the design's kernel with one
 * equation per non-reference class (or per class in the symmetric form), the multinomial family,
 * the null-model start, the shared warm start of large fits (glm/warmStart.ts) and the convergence
 * floor in units of the mean case weight, as the binomial fit (glm/binomialFit.ts) has them.
 * Symmetric form: the likelihood is flat along "add c to every intercept"; the side condition
 * sum_k a_k = 0 enters as the penalty (total weight / K / 2) (sum_k a_k)^2, zero at the solution.
 * Reference: Agresti, Categorical Data Analysis, 3rd ed. (2013), sec. 8.1; Böhning, Ann. Inst.
 * Statist. Math. 44 (1992) 197-200 (the information blocks).
 */
import { MultinomialLikelihood, type MultinomialData } from "../families/multinomial";
import { createKernel } from "../kernels";
import { pairCount } from "../kernels/types";
import { newtonStep, runNewton, type NewtonOutcome, type NewtonTask } from "./newton";
import { pickIntegers, pickRows, scaledCopy, subsampleWarmStart, type WarmStart, type WarmStartFamily } from "./warmStart";

/** A multinomial fit in the fitting coordinates. */
export interface MultinomialProblem extends MultinomialData {
  /** q fitting columns (already centred and scaled), the intercept (ones) first when `intercept`. */
  columns: Float64Array[];
  intercept: boolean;
  /** Ridge penalty per column (the same in every equation), >= 0 (0 for the intercept). */
  penalty: Float64Array;
  maxIterations: number;
  tolerance: number;
}

/** The loop's outcome, and the Newton step at the returned point (null where H is singular). */
export interface MultinomialOutcome extends NewtonOutcome {
  finalStep: Float64Array | null;
}

/**
 * Information passes cost about n q^2 E(E+1)/2 multiply-adds; above this many the loop saves them
 * (pass economy in glm/newton.ts). Smaller fits take plain Newton-Raphson steps.
 */
const ECONOMY_MIN_WORK = 2e7;
/** No warm start when the subsample has less weight than this in some class present in the data. */
const WARM_START_MIN_CLASS_WEIGHT = 10;
/** No warm start when the subsample fit's last Newton step moves a coefficient by more than this (diverging: separation there). */
const WARM_START_MAX_STEP = 1;

/** Weight of each class among the rows. */
export function classWeights(p: MultinomialData): Float64Array {
  const out = new Float64Array(p.classes);
  for (let i = 0; i < p.rows; i++) out[p.classOf[i]] += p.weights[i];
  return out;
}

/** The null-model start: intercepts at the log class proportions against the reference (centred columns make that exact). */
function nullStart(p: MultinomialProblem, q: number): Float64Array {
  const start = new Float64Array(p.equationClasses.length * q);
  if (!p.intercept) return start;
  const cw = classWeights(p);
  let total = 0;
  for (const v of cw) total += v;
  let logRef = 0;
  if (p.symmetric) {
    for (const v of cw) logRef += Math.log(v / total) / cw.length;
  } else {
    const reference = cw.findIndex((_, k) => !p.equationClasses.includes(k));
    logRef = Math.log(cw[reference] / total);
  }
  p.equationClasses.forEach((k, e) => (start[e * q] = Math.log(cw[k] / total) - logRef));
  return start;
}

/** The loop's task for a problem, from `start` with an optional approximate information there. */
function taskOf(p: MultinomialProblem, start: Float64Array | null, startInformation: Float64Array | null): NewtonTask {
  const q = p.columns.length;
  const E = p.equationClasses.length;
  let weightSum = 0;
  for (let i = 0; i < p.rows; i++) weightSum += p.weights[i];
  const penalty = new Float64Array(E * q);
  for (let e = 0; e < E; e++) penalty.set(p.penalty, e * q);
  const coupled = p.symmetric && p.intercept;
  return {
    kernel: createKernel({ rows: p.rows, columns: p.columns, centre: null, scale: null }, E),
    family: new MultinomialLikelihood(p),
    start: start ?? nullStart(p, q),
    penalty,
    sumPenalty: coupled ? { weight: weightSum / p.classes, indices: Int32Array.from({ length: E }, (_, e) => e * q) } : null,
    free: null,
    hook: null,
    startInformation,
    maxIterations: p.maxIterations,
    tolerance: p.tolerance,
    floor: 0.1 * (p.rows > 0 && weightSum > 0 ? weightSum / p.rows : 1),
    keepHistory: false,
    passEconomy: p.rows * q * q * pairCount(E) >= ECONOMY_MIN_WORK,
  };
}

/** Run the loop on a task and add the Newton step at its outcome. */
function run(task: NewtonTask): MultinomialOutcome {
  const outcome = runNewton(task);
  const step = newtonStep(task, outcome);
  return { ...outcome, finalStep: step ? step.step : null };
}

/** The multinomial family's part of the warm start (glm/warmStart.ts). */
const MULTINOMIAL_WARM_START: WarmStartFamily<MultinomialProblem> = {
  subsample(p: MultinomialProblem, stride: number): MultinomialProblem {
    const weights = pickRows(p.weights, stride);
    return {
      rows: weights.length,
      classOf: pickIntegers(p.classOf, stride),
      weights,
      classes: p.classes,
      equationClasses: p.equationClasses,
      symmetric: p.symmetric,
      columns: p.columns.map((c) => pickRows(c, stride)),
      intercept: p.intercept,
      penalty: p.penalty,
      maxIterations: p.maxIterations,
      tolerance: p.tolerance,
    };
  },
  weight(p: MultinomialProblem): number {
    let total = 0;
    for (let i = 0; i < p.rows; i++) total += p.weights[i];
    return total;
  },
  fit(sub: MultinomialProblem, settings: { tolerance: number; maxIterations: number; share: number }) {
    // A class with (almost) no rows in the subsample (a rare class) would send its fit off to
    // infinity. (Every class has rows in the full data: the fit refuses an empty class before.)
    if (!classWeights(sub).every((v) => v >= WARM_START_MIN_CLASS_WEIGHT)) return null;
    sub.tolerance = settings.tolerance;
    sub.maxIterations = settings.maxIterations;
    sub.penalty = scaledCopy(sub.penalty, settings.share);
    const fit = run(taskOf(sub, null, null));
    // A last Newton step that still moves a coefficient by more than WARM_START_MAX_STEP: the
    // subsample fit may be diverging (separation in the subsample).
    if (!fit.finalStep) return null;
    for (const v of fit.finalStep) if (Math.abs(v) > WARM_START_MAX_STEP) return null;
    return fit;
  },
};

/**
 * Starting values for a large multinomial fit by the shared warm-start rule (glm/warmStart.ts);
 * null when there is none (small data, or a subsample fit that is no guide: a class with too
 * little weight in the subsample, or a last Newton step above WARM_START_MAX_STEP).
 * Reference: Nocedal & Wright, Numerical Optimization, 2nd ed. (2006), ch. 6.
 */
export function multinomialWarmStart(p: MultinomialProblem): WarmStart | null {
  return subsampleWarmStart(p, { rows: p.rows, columns: p.columns.length, tolerance: p.tolerance, maxIterations: p.maxIterations }, MULTINOMIAL_WARM_START);
}

/**
 * Maximize the multinomial (penalized) log-likelihood with the one Newton loop, warm-started on
 * large data. Never throws: a singular information ends it with singular = true.
 * Reference: Agresti (2013), sec. 8.1; McCullagh & Nelder (1989), ch. 2.
 */
export function fitMultinomial(p: MultinomialProblem): MultinomialOutcome {
  const warm = multinomialWarmStart(p);
  return run(taskOf(p, warm ? warm.start : null, warm ? warm.information : null));
}
