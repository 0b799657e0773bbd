/**
 * The one Newton-Raphson (IRLS) loop of the fits, over the kernel interface (kernels/types.ts) and
 * a family's block likelihood (families/).
 *
 * Objective (minimized): F(theta) = -l(theta) + (1/2) sum_j pen_j theta_j^2 - h(theta), with h an
 * optional information penalty (Firth's (1/2) log det I). Step: theta <- theta + s H^{-1} U with
 * H = I + diag(pen), U the penalized (and hooked) score, and s halved from 1 until F falls by
 * Armijo's sufficient decrease (Nocedal & Wright, Numerical Optimization, 2006, ch. 3; glm.fit
 * halves on divergence in the same spirit).
 * Convergence: |D - D_old| / (floor + |D|) < tolerance with D = 2F, the rule of R's glm.fit
 * (R Core Team, src/library/stats/R/glm.R) with its floor set by the caller (0.1 times the mean
 * case weight, so that rescaling every weight changes nothing), capped by maxIterations. With an
 * information penalty the largest relative step must also fall below FIRTH_STEP_TOLERANCE, since
 * that iteration converges only linearly.
 * Warm start: with an approximate information at the start (a subsample's, scaled up), the first
 * steps use it, refined by BFGS along each step, and cost a score pass instead of an information
 * pass; once their Newton decrement U'H^{-1}U (Boyd & Vandenberghe, Convex Optimization, 2004,
 * sec. 9.5.1) predicts a change below the tolerance, or after MAX_APPROXIMATE_STEPS, the exact
 * information is formed and the loop finishes as Newton-Raphson under the usual rule; an exact step
 * predicting a change below tolerance^2 is not taken (the last quadratically convergent step leaves
 * about that). The information returned is always the exact one at the returned estimate.
 * Reference: McCullagh & Nelder, Generalized Linear Models, 2nd ed. (1989), ch. 2 (IRLS).
 */
import type { InformationPenalty } from "../families/binomial";
import type { BlockLikelihood, Kernel, PassWants } from "../kernels/types";
import { cholesky, choleskySolve, subMatrix } from "../linalg";
import { bfgsUpdate } from "./bfgs";

/** What one run of the loop needs. */
export interface NewtonTask {
  kernel: Kernel;
  family: BlockLikelihood;
  /** Starting values (length M = equations x columns). */
  start: Float64Array;
  /** Ridge penalty per parameter, >= 0. */
  penalty: Float64Array;
  /** Parameters estimated (1) or held at their start (0); null: all free. */
  free: Uint8Array | null;
  /** An information penalty such as Firth's; null for none. */
  hook: InformationPenalty | null;
  /** An approximate information at the start (warm start); ignored with a hook or held parameters. */
  startInformation: Float64Array | null;
  maxIterations: number;
  tolerance: number;
  /** The floor of the relative change (see the file comment). */
  floor: number;
  /** Keep every accepted iterate (the separation check reads them). */
  keepHistory: boolean;
}

/** The loop's state at one point. */
interface Point {
  theta: Float64Array;
  logLikelihood: number;
  objective: number;
  /** Score of the log-likelihood alone, sum_i z_i dl_i/deta_i. */
  score: Float64Array;
  /** Information at theta (exact, or the warm start's approximation). */
  information: Float64Array;
}

/** What the loop returns; `information` is exact at `theta`. */
export interface NewtonOutcome extends Point {
  iterations: number;
  converged: boolean;
  /** Last relative change of D (NaN before any step). */
  lastChange: number;
  /** True when H could not be factored (singular at the tolerance). */
  singular: boolean;
  history: Float64Array[];
  halvings: number;
}

/** Largest relative step a fit with an information penalty must reach as well. */
const FIRTH_STEP_TOLERANCE = 1e-11;
/** Steps with the approximate information before the exact one is formed. */
const MAX_APPROXIMATE_STEPS = 12;
/** Halvings tried before a step is declared unable to improve the objective. */
const MAX_HALVINGS = 30;

/** One pass of the kernel at theta, and the objective there. */
function evaluate(task: NewtonTask, theta: Float64Array, wants: PassWants): Point {
  const M = theta.length;
  const out = { score: new Float64Array(M), information: new Float64Array(M * M) };
  const logLikelihood = task.kernel.pass(theta, task.family, wants, out);
  let objective = -logLikelihood;
  for (let j = 0; j < M; j++) objective += 0.5 * task.penalty[j] * theta[j] * theta[j];
  if (task.hook) objective -= task.hook.value(out.information, M);
  return { theta, logLikelihood, objective, score: out.score, information: out.information };
}

/** The Newton step H^{-1} U at a point (on the free parameters only) and its decrement U'H^{-1}U; null when H is singular. */
function newtonStep(task: NewtonTask, at: Point): { step: Float64Array; decrement: number } | null {
  const M = at.theta.length;
  const score = Float64Array.from(at.score);
  for (let j = 0; j < M; j++) score[j] -= task.penalty[j] * at.theta[j];
  if (task.hook) task.hook.addToScore(score);
  const h = Float64Array.from(at.information);
  for (let j = 0; j < M; j++) h[j * M + j] += task.penalty[j];
  const free = task.free ? Array.from({ length: M }, (_, j) => j).filter((j) => task.free![j]) : null;
  const step = new Float64Array(M);
  if (free) {
    const s = equilibratedSolve(subMatrix(h, M, free), free.length, Float64Array.from(free, (j) => score[j]));
    if (!s) return null;
    free.forEach((j, t) => (step[j] = s[t]));
  } else {
    const s = equilibratedSolve(h, M, score);
    if (!s) return null;
    step.set(s);
  }
  let decrement = 0;
  for (let j = 0; j < M; j++) decrement += score[j] * step[j];
  return { step, decrement };
}

/**
 * Solve H x = b for a symmetric positive-definite H through D H D with D = diag(2^-e_j),
 * 2^e_j the power of two nearest sqrt(H_jj): the Cholesky pivot test is then relative to each
 * column's own diagonal (1 - R^2 of the column on the earlier ones), not to the largest diagonal,
 * so a term whose information is 1e300 times another's (a ridge penalty of 1e300, a column with one
 * value 1e9 times the others) does not make the other term look singular. Powers of two scale
 * without rounding, so a well-scaled H gives exactly the unscaled factorization's step.
 * Null when D H D is singular at the Cholesky tolerance. (Equilibration: Golub & Van Loan 2013, sec. 3.5.2.)
 */
function equilibratedSolve(h: Float64Array, M: number, b: Float64Array): Float64Array | null {
  const d = new Float64Array(M);
  for (let j = 0; j < M; j++) {
    const hjj = h[j * M + j];
    d[j] = hjj > 0 && Number.isFinite(hjj) ? 2 ** -Math.round(Math.log2(Math.sqrt(hjj))) : 1;
  }
  const hs = new Float64Array(M * M);
  for (let i = 0; i < M; i++) for (let j = 0; j < M; j++) hs[i * M + j] = h[i * M + j] * d[i] * d[j];
  const c = cholesky(hs, M);
  if (!c.ok) return null;
  const x = choleskySolve(c.factor, M, Float64Array.from(b, (v, j) => v * d[j]));
  for (let j = 0; j < M; j++) x[j] *= d[j];
  return x;
}

/**
 * Aitken's extrapolation for a linearly convergent iteration (Aitken 1926): with the ratio
 * r = step'prev / prev'prev < 0 (overshooting back and forth, as Firth's iteration can), the step
 * is taken as step / (1 - r), which lands on the fixed point for r = -1.
 */
function aitkenScale(step: Float64Array, prev: Float64Array | null): number {
  if (!prev) return 1;
  let sp = 0;
  let pp = 0;
  for (let j = 0; j < step.length; j++) {
    sp += step[j] * prev[j];
    pp += prev[j] * prev[j];
  }
  const r = pp > 0 ? sp / pp : 0;
  return r < 0 ? 1 / (1 - Math.max(r, -1)) : 1;
}

/**
 * Step halving from scale `first`: the first candidate where F falls by at least 1e-4 of the
 * predicted decrease (Armijo), or, once that prediction is below the rounding of F, does not rise.
 */
function halvingSearch(task: NewtonTask, at: Point, step: Float64Array, decrement: number, first: number, wants: PassWants): { point: Point; halvings: number } | null {
  let scale = first;
  for (let h = 0; h <= MAX_HALVINGS; h++) {
    const theta = Float64Array.from(at.theta, (g, j) => g + scale * step[j]);
    const trial = evaluate(task, theta, wants);
    const predicted = scale * decrement;
    const sufficient =
      predicted > 1e-14 * (task.floor + Math.abs(at.objective))
        ? trial.objective <= at.objective - 1e-4 * predicted
        : trial.objective <= at.objective + 1e-13 * Math.abs(at.objective);
    if (sufficient && Number.isFinite(trial.objective)) return { point: trial, halvings: h };
    scale *= 0.5;
  }
  return null;
}

/** Predicted or observed change of D = 2F relative to its size (the convergence measure). */
function relative(change: number, objective: number, floor: number): number {
  return change / (floor + Math.abs(2 * objective));
}

/** Largest step relative to 1 + |theta_j|. */
function largestRelativeStep(from: Float64Array, to: Float64Array): number {
  let m = 0;
  for (let j = 0; j < to.length; j++) m = Math.max(m, Math.abs(to[j] - from[j]) / (1 + Math.abs(to[j])));
  return m;
}

/**
 * Minimize F by Newton-Raphson with step halving (see the file comment). Never throws: a singular
 * H ends the loop with singular = true.
 * Reference: McCullagh & Nelder (1989), ch. 2; Nocedal & Wright (2006), ch. 3 and eq. 6.19 (BFGS).
 */
export function runNewton(task: NewtonTask): NewtonOutcome {
  let approximate = !!task.startInformation && !task.hook && !task.free;
  let at = evaluate(task, Float64Array.from(task.start), approximate ? "score" : "information");
  if (approximate) at.information = Float64Array.from(task.startInformation!);
  const tol = task.tolerance;
  const history: Float64Array[] = [];
  let state = { iterations: 0, converged: false, lastChange: NaN, singular: task.hook !== null && Number.isNaN(at.objective), halvings: 0 };
  let approximateSteps = 0;
  let checkDecrement = false;
  let prevStep: Float64Array | null = null;
  while (!state.singular && state.iterations < task.maxIterations) {
    state.iterations++;
    const newton = newtonStep(task, at);
    if (!newton) {
      state.singular = true;
      break;
    }
    const predicted = relative(newton.decrement, at.objective, task.floor);
    if (approximate && (predicted < tol || approximateSteps >= MAX_APPROXIMATE_STEPS)) {
      // The approximate phase ends: the exact step that follows finishes the fit.
      state.iterations--;
      approximate = false;
      at = evaluate(task, at.theta, "information");
      checkDecrement = true;
      continue;
    }
    if (checkDecrement) {
      checkDecrement = false;
      if (predicted < tol * tol) {
        state = { ...state, iterations: state.iterations - 1, lastChange: predicted, converged: true };
        break;
      }
    }
    const found = halvingSearch(task, at, newton.step, newton.decrement, task.hook ? aitkenScale(newton.step, prevStep) : 1, approximate ? "score" : "information");
    if (!found && approximate) {
      // No descent along the approximate direction: continue with the exact information.
      state.iterations--;
      approximate = false;
      at = evaluate(task, at.theta, "information");
      continue;
    }
    if (!found) {
      // No decrease along the Newton direction: at the optimum up to rounding when the predicted change is negligible.
      // The last passes were at rejected candidates: evaluate theta again so the family's rows are current.
      state = { ...state, lastChange: predicted, converged: predicted < 10 * tol };
      at = evaluate(task, at.theta, "information");
      break;
    }
    const next = found.point;
    state.halvings += found.halvings;
    state.lastChange = relative(Math.abs(2 * next.objective - 2 * at.objective), next.objective, task.floor);
    prevStep = Float64Array.from(next.theta, (g, j) => g - at.theta[j]);
    if (approximate) {
      // Refine the approximation with the curvature seen along the step (gradient of -l).
      next.information = Float64Array.from(at.information);
      bfgsUpdate(next.information, prevStep, Float64Array.from(at.score, (u, j) => u - next.score[j]));
      approximateSteps++;
      at = next;
      continue;
    }
    const stepSize = largestRelativeStep(at.theta, next.theta);
    at = next;
    if (task.keepHistory) history.push(Float64Array.from(at.theta));
    if (state.lastChange < tol && (!task.hook || stepSize < FIRTH_STEP_TOLERANCE)) {
      state.converged = true;
      break;
    }
  }
  // The iteration cap can end the approximate phase: the information returned is the exact one.
  if (approximate) at = evaluate(task, at.theta, "information");
  return { ...at, ...state, history };
}
