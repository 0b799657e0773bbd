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
 * about that). The information returned is the exact one at the returned estimate (but see pass
 * economy below).
 * Pass economy (families whose information pass costs many score passes, such as the multinomial
 * one with its E(E+1)/2 weighted Gram blocks): the approximate phase then ends only once the
 * decrement is also below POLISH_DECREMENT (about the squared distance to the maximum in
 * standard-error units); the trial predicted to end it (its decrement extrapolated from the last
 * contraction) is evaluated with the information at once, so that the exact information costs no
 * extra pass; and the last exact step, whose predicted gain is then below the rounding allowance of
 * the objective, is taken without a pass: the information returned is then the one just before
 * that step (as R's glm reports the covariance from the weights of its previous iterate). The
 * iterates are those of the plain method; only what a pass computes changes.
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
  /**
   * A penalty (weight / 2) (sum of theta_j over `indices`)^2, or null: the side condition of the
   * symmetric softmax form (its intercepts sum to 0).
   */
  sumPenalty: { weight: number; indices: Int32Array } | null;
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
  /** Save information passes as described in the file comment (costly information only). */
  passEconomy: boolean;
}

/** Passes over the rows a run took, by what they computed. */
export interface PassCounts {
  value: number;
  score: number;
  information: number;
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
  /** The last step taken (theta minus the point before it), or null before any step. */
  lastStep: Float64Array | null;
  passes: PassCounts;
}

/** Largest relative step a fit with an information penalty must reach as well. */
const FIRTH_STEP_TOLERANCE = 1e-11;
/** Steps with the approximate information before the exact one is formed. */
const MAX_APPROXIMATE_STEPS = 12;
/** Halvings tried before a step is declared unable to improve the objective. */
const MAX_HALVINGS = 30;
/** Pass economy: decrement U'H^{-1}U below which the last exact step is taken without a pass. */
const POLISH_DECREMENT = 1e-8;
/** Pass economy: rounding allowance of the objective (relative) that step's predicted gain must be below. */
const POLISH_SLACK = 1e-11;

/** The quadratic penalties at theta: (1/2) sum_j pen_j theta_j^2 plus the sum penalty. */
export function penaltyValue(task: Pick<NewtonTask, "penalty" | "sumPenalty">, theta: Float64Array): number {
  let v = 0;
  for (let j = 0; j < theta.length; j++) v += 0.5 * task.penalty[j] * theta[j] * theta[j];
  if (task.sumPenalty) {
    let sum = 0;
    for (const j of task.sumPenalty.indices) sum += theta[j];
    v += 0.5 * task.sumPenalty.weight * sum * sum;
  }
  return v;
}

/** Subtract the gradient of the quadratic penalties from `score` and add their Hessian to `h` (M x M), in place. */
function addPenalty(task: Pick<NewtonTask, "penalty" | "sumPenalty">, theta: Float64Array, score: Float64Array, h: Float64Array): void {
  const M = theta.length;
  for (let j = 0; j < M; j++) {
    score[j] -= task.penalty[j] * theta[j];
    h[j * M + j] += task.penalty[j];
  }
  if (!task.sumPenalty) return;
  const { weight, indices } = task.sumPenalty;
  let sum = 0;
  for (const j of indices) sum += theta[j];
  for (const j of indices) {
    score[j] -= weight * sum;
    for (const l of indices) h[j * M + l] += weight;
  }
}

/** One pass of the kernel at theta, and the objective there. */
function evaluate(task: NewtonTask, theta: Float64Array, wants: PassWants, passes: PassCounts): Point {
  const M = theta.length;
  const out = { score: new Float64Array(M), information: new Float64Array(M * M) };
  const logLikelihood = task.kernel.pass(theta, task.family, wants, out);
  passes[wants]++;
  let objective = -logLikelihood + penaltyValue(task, theta);
  if (task.hook) objective -= task.hook.value(out.information, M);
  return { theta, logLikelihood, objective, score: out.score, information: out.information };
}

/**
 * The Newton step H^{-1} U at a point (on the free parameters only) and its decrement U'H^{-1}U;
 * null when H is singular. Callers use it on an outcome too (the direction the separation checks
 * examine); the hook's score term is the one of its last pass.
 */
export function newtonStep(task: NewtonTask, at: Pick<Point, "theta" | "score" | "information">): { step: Float64Array; decrement: number } | null {
  const M = at.theta.length;
  const score = Float64Array.from(at.score);
  const h = Float64Array.from(at.information);
  addPenalty(task, at.theta, score, h);
  if (task.hook) task.hook.addToScore(score);
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
function halvingSearch(
  task: NewtonTask,
  at: Point,
  newton: { step: Float64Array; decrement: number },
  first: number,
  wants: { first: PassWants; later: PassWants },
  passes: PassCounts,
): { point: Point; halvings: number; wants: PassWants } | null {
  const { step, decrement } = newton;
  let scale = first;
  for (let h = 0; h <= MAX_HALVINGS; h++) {
    const theta = Float64Array.from(at.theta, (g, j) => g + scale * step[j]);
    const trialWants = h === 0 ? wants.first : wants.later;
    const trial = evaluate(task, theta, trialWants, passes);
    const predicted = scale * decrement;
    const sufficient =
      predicted > 1e-14 * (task.floor + Math.abs(at.objective))
        ? trial.objective <= at.objective - 1e-4 * predicted
        : trial.objective <= at.objective + 1e-13 * Math.abs(at.objective);
    if (sufficient && Number.isFinite(trial.objective)) return { point: trial, halvings: h, wants: trialWants };
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

/** The mutable state of one run of the loop. */
interface RunState {
  at: Point;
  /** In the warm start's approximate phase. */
  approximate: boolean;
  /** True when at.information is the exact information at at.theta. */
  exact: boolean;
  iterations: number;
  converged: boolean;
  lastChange: number;
  singular: boolean;
  halvings: number;
  approximateSteps: number;
  /** The first exact step after the approximate phase: it may finish the fit (see finishes). */
  checkDecrement: boolean;
  lastStep: Float64Array | null;
  /** Decrement of the previous approximate step (pass economy's prediction), NaN before one. */
  previousDecrement: number;
  history: Float64Array[];
  passes: PassCounts;
}

/** True when the approximate phase ends at a step of this decrement (see the file comment). */
function approximateEnds(task: NewtonTask, s: RunState, decrement: number, predicted: number): boolean {
  if (s.approximateSteps >= MAX_APPROXIMATE_STEPS) return true;
  return predicted < task.tolerance && (!task.passEconomy || decrement < POLISH_DECREMENT);
}

/** Pass economy: true when the step after this one is predicted to end the approximate phase. */
function predictsEnd(task: NewtonTask, s: RunState, decrement: number, objective: number): boolean {
  if (!task.passEconomy || !(s.previousDecrement > 0)) return false;
  const next = decrement * (decrement / s.previousDecrement);
  return next < POLISH_DECREMENT / 4 && relative(next, objective, task.floor) < task.tolerance / 4;
}

/**
 * The first exact step after the approximate phase: with pass economy, a step whose decrement is
 * below POLISH_DECREMENT and whose predicted gain is below the rounding allowance is taken without
 * a pass (the objective is the quadratic model's); otherwise a step predicting a change below
 * tolerance^2 is not taken. Either ends the fit, converged; neither counts as an iteration.
 */
function finishes(task: NewtonTask, s: RunState, newton: { step: Float64Array; decrement: number }, predicted: number): boolean {
  const gain = 0.5 * newton.decrement;
  if (task.passEconomy && !task.hook && newton.decrement < POLISH_DECREMENT && gain >= 0 && gain <= POLISH_SLACK * (1 + Math.abs(s.at.objective))) {
    const theta = Float64Array.from(s.at.theta, (g, j) => g + newton.step[j]);
    const objective = s.at.objective - gain;
    s.at = { ...s.at, theta, objective, logLikelihood: penaltyValue(task, theta) - objective };
    s.lastStep = newton.step;
  } else if (!(predicted < task.tolerance * task.tolerance)) {
    return false;
  }
  s.iterations--;
  s.lastChange = predicted;
  s.converged = true;
  return true;
}

/** The exact information at the current point, unless it is at hand. */
function makeExact(task: NewtonTask, s: RunState): void {
  if (!s.exact) s.at = evaluate(task, s.at.theta, "information", s.passes);
  s.exact = true;
}

/** One step of the loop from s.at along `newton`; false when the loop ends. */
function takeStep(task: NewtonTask, s: RunState, newton: { step: Float64Array; decrement: number }, predicted: number): boolean {
  const first: PassWants = !s.approximate || predictsEnd(task, s, newton.decrement, s.at.objective) ? "information" : "score";
  const wants = { first, later: s.approximate ? ("score" as const) : ("information" as const) };
  const found = halvingSearch(task, s.at, newton, task.hook ? aitkenScale(newton.step, s.lastStep) : 1, wants, s.passes);
  if (!found && s.approximate) {
    // No descent along the approximate direction: continue with the exact information.
    s.iterations--;
    s.approximate = false;
    makeExact(task, s);
    return true;
  }
  if (!found) {
    // No decrease along the Newton direction: at the optimum up to rounding when the predicted change is negligible.
    // The last passes were at rejected candidates: evaluate theta again so the family's rows are current.
    s.lastChange = predicted;
    s.converged = predicted < 10 * task.tolerance;
    s.at = evaluate(task, s.at.theta, "information", s.passes);
    s.exact = true;
    return false;
  }
  const next = found.point;
  const at = s.at;
  s.halvings += found.halvings;
  s.lastChange = relative(Math.abs(2 * next.objective - 2 * at.objective), next.objective, task.floor);
  s.lastStep = Float64Array.from(next.theta, (g, j) => g - at.theta[j]);
  s.exact = found.wants === "information";
  if (s.approximate) {
    // Refine the approximation with the curvature seen along the step (gradient of -l), unless
    // the exact information came with the pass.
    if (!s.exact) {
      next.information = Float64Array.from(at.information);
      bfgsUpdate(next.information, s.lastStep, Float64Array.from(at.score, (u, j) => u - next.score[j]));
    }
    s.approximateSteps++;
    s.previousDecrement = newton.decrement;
    s.at = next;
    return true;
  }
  const stepSize = largestRelativeStep(at.theta, next.theta);
  s.at = next;
  if (task.keepHistory) s.history.push(Float64Array.from(next.theta));
  if (s.lastChange < task.tolerance && (!task.hook || stepSize < FIRTH_STEP_TOLERANCE)) {
    s.converged = true;
    return false;
  }
  return true;
}

/**
 * Minimize F by Newton-Raphson with step halving (see the file comment). Never throws: a singular
 * H ends the loop with singular = true.
 * Reference: McCullagh & Nelder (1989), ch. 2; Nocedal & Wright (2006), ch. 3 and eq. 6.19 (BFGS).
 */
export function runNewton(task: NewtonTask): NewtonOutcome {
  const passes: PassCounts = { value: 0, score: 0, information: 0 };
  const approximate = !!task.startInformation && !task.hook && !task.free;
  const at = evaluate(task, Float64Array.from(task.start), approximate ? "score" : "information", passes);
  if (approximate) at.information = Float64Array.from(task.startInformation!);
  const s: RunState = {
    at,
    approximate,
    exact: !approximate,
    iterations: 0,
    converged: false,
    lastChange: NaN,
    singular: task.hook !== null && Number.isNaN(at.objective),
    halvings: 0,
    approximateSteps: 0,
    checkDecrement: false,
    lastStep: null,
    previousDecrement: NaN,
    history: [],
    passes,
  };
  while (!s.singular && s.iterations < task.maxIterations) {
    s.iterations++;
    const newton = newtonStep(task, s.at);
    if (!newton) {
      s.singular = true;
      break;
    }
    const predicted = relative(newton.decrement, s.at.objective, task.floor);
    if (s.approximate && approximateEnds(task, s, newton.decrement, predicted)) {
      // The approximate phase ends: the exact step that follows finishes the fit.
      s.iterations--;
      s.approximate = false;
      makeExact(task, s);
      s.checkDecrement = true;
      continue;
    }
    if (s.checkDecrement) {
      s.checkDecrement = false;
      if (finishes(task, s, newton, predicted)) break;
    }
    if (!takeStep(task, s, newton, predicted)) break;
  }
  // The iteration cap can end the approximate phase: the information returned is the exact one.
  if (s.approximate) makeExact(task, s);
  const { iterations, converged, lastChange, singular, halvings, history, lastStep } = s;
  return { ...s.at, iterations, converged, lastChange, singular, halvings, history, lastStep, passes };
}
