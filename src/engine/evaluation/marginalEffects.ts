/**
 * Average marginal effects of a binary logistic model on the positive-class probability, with
 * delta-method standard errors.
 *
 * Notation: rows i = 1..n of the fitted design with weights w_i (case weight x trials; 1 without
 * them), W = sum w_i; eta_i = x_i'b + offset_i (x_i0 = 1 for the intercept), p_i = sigmoid(eta_i),
 * and the logistic density d_i = p_i (1 - p_i). V is the covariance of b.
 *
 * - Slope (number columns): AME_j = (1/W) sum w_i d_i b_j, the average of dp/dx_j over the rows.
 *   Its gradient in b is g_l = [l = j] (1/W) sum w_i d_i + b_j (1/W) sum w_i d_i (1 - 2 p_i) x_il.
 * - Discrete change (0/1 columns and the indicator columns of text predictors): the average over the
 *   rows of p(x_i with the column at 1) - p(x_i with the column at 0), every other column as
 *   observed. For an indicator of a text predictor (level L of column c) the change is from the
 *   reference level to L: both counterfactual rows set every indicator of c to 0, and the second then
 *   sets L's to 1 (the factor-variable rule of Stata's `margins`), so no row is ever given two
 *   levels of one column. With p1_i, p0_i and d1_i, d0_i the probabilities and densities of the two
 *   counterfactual rows, AME_j = (1/W) sum w_i (p1_i - p0_i) and g_l = (1/W) sum w_i (d1_i x1_il -
 *   d0_i x0_il), where x1, x0 are the counterfactual rows.
 * - Which columns change: a number column whose fitted values are all 0 or 1, with both present
 *   (the rule of statsmodels' get_margeff, `_isdummy`), and every indicator of a text predictor;
 *   with `indicators: "slope"` all of them are treated as number columns (dp/dx), as Stata's
 *   `margins` does for a 0/1 variable not declared as a factor.
 * - Standard error: the delta method, se = sqrt(g' V g), holding the rows fixed (the variance of
 *   the sample average given the rows, as Stata's `margins` without vce(unconditional)). z = AME / se,
 *   two-sided normal p and the Wald interval AME +/- z_(1+level)/2 se.
 * - Aliased terms keep their coefficient at 0: their effect is not estimable (NaN) and they carry no
 *   variance. Without a covariance (penalized fits) the effects come without standard errors, with
 *   the EFFECTS_NO_STANDARD_ERRORS note.
 * - Work: one pass over the rows x parameters for the slopes, and one per changing term (plus one
 *   per text column): rows x parameters x (changing terms + text columns + 1) multiply-adds, bounded
 *   by EFFECTS_WORK_LIMIT (EFFECTS_TOO_COSTLY above it). Measured on this project's machines (Node
 *   20, two shared cores): about 4e-9 s per unit (100,000 rows x 40 parameters x 40 passes: 0.65 s),
 *   so the limit keeps one call near 1.6 s.
 *
 * References: W. H. Greene, Econometric Analysis, 7th ed. (2012), section 17.3 (partial effects of
 * binary choice models, averaged over the sample; the discrete change for a dummy variable) and
 * section 4.6 / Theorem D.22 (the delta method); Stata 11 Base Reference Manual, `margins`
 * (average marginal effects, factor variables, delta-method standard errors).
 */
import { criticalZ, twoSidedPFromZ } from "../distributions";
import { formatMessage, problem } from "../messages";
import { sigmoid } from "../numerics";
import type { DesignEncoding } from "../data/design";
import type { TrainedModel } from "../model/types";
import type { DesignMatrix, Diagnostic } from "../types";

/** How one design column's effect is computed. */
export interface EffectPlan {
  /** Design column (0-based, without the intercept). */
  column: number;
  kind: "slope" | "change";
  /**
   * Change: the design columns set to 0 in both counterfactual rows besides `column` itself (the
   * other indicators of the same text predictor); empty for a 0/1 number column.
   */
  siblings: number[];
  /** Change: what the column changes from and to, for display ("0" -> "1", reference -> level). */
  from?: string;
  to?: string;
}

/** Input of {@link marginalEffects}. */
export interface MarginalEffectsInput {
  /** The fitted design (rows used by the fit), without the intercept column. */
  design: DesignMatrix;
  /** Coefficients, intercept first when `intercept`; aliased entries are ignored. */
  coefficients: Float64Array;
  /** Per coefficient: true when aliased (held at 0). */
  aliased: readonly boolean[];
  intercept: boolean;
  /** Covariance of the coefficients (row-major), or null: effects without standard errors. */
  covariance: Float64Array | null;
  /** Offset per design row [none]. */
  offset?: Float64Array | null;
  /** Observations each design row stands for (case weight x trials) [all 1]. */
  weights?: Float64Array | null;
  /** The terms to report, in order. */
  plan: readonly EffectPlan[];
  /** Two-sided level of the intervals, in (0, 1). */
  level: number;
}

/** One average marginal effect. */
export interface MarginalEffect {
  term: string;
  kind: "slope" | "change";
  from?: string;
  to?: string;
  estimate: number;
  standardError: number;
  z: number;
  p: number;
  lower: number;
  upper: number;
  /** False for an aliased term (every number NaN). */
  estimable: boolean;
}

/** Result of {@link marginalEffects}. */
export interface MarginalEffects {
  effects: MarginalEffect[];
  /** Rows averaged over and their total weight (observations). */
  rows: number;
  observations: number;
  level: number;
  diagnostics: Diagnostic[];
}

/** Largest rows x parameters x passes of one call (see the policy above). */
export const EFFECTS_WORK_LIMIT = 4e8;

/** rows x parameters x (changing terms + text columns + 1): the multiply-adds of one call. */
export function effectsWork(rows: number, parameters: number, plan: readonly EffectPlan[]): number {
  let passes = 1;
  const groups = new Set<string>();
  for (const t of plan) {
    if (t.kind !== "change") continue;
    passes++;
    if (t.siblings.length > 0) groups.add([t.column, ...t.siblings].sort((a, b) => a - b).join(","));
  }
  return rows * parameters * (passes + groups.size);
}

/** Per-row quantities shared by every term: linear predictor, probability, density. */
interface RowState {
  eta: Float64Array;
  p: Float64Array;
  d: Float64Array;
  w: Float64Array | null;
  totalWeight: number;
}

/** The coefficient used in the linear predictor: 0 for aliased (or non-finite) entries. */
function usable(b: Float64Array, aliased: readonly boolean[], k: number): number {
  return aliased[k] || !Number.isFinite(b[k]) ? 0 : b[k];
}

function rowState(input: MarginalEffectsInput): RowState {
  const { design, coefficients: b, aliased, intercept } = input;
  const n = design.rows;
  const off = intercept ? 1 : 0;
  const eta = new Float64Array(n);
  if (intercept) eta.fill(usable(b, aliased, 0));
  if (input.offset) for (let i = 0; i < n; i++) eta[i] += input.offset[i];
  for (let j = 0; j < design.columns.length; j++) {
    const bj = usable(b, aliased, j + off);
    if (bj === 0) continue;
    const x = design.columns[j];
    for (let i = 0; i < n; i++) eta[i] += bj * x[i];
  }
  const p = new Float64Array(n);
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    p[i] = sigmoid(eta[i]);
    d[i] = p[i] * (1 - p[i]);
  }
  const w = input.weights ?? null;
  let totalWeight = n;
  if (w) {
    totalWeight = 0;
    for (let i = 0; i < n; i++) totalWeight += w[i];
  }
  return { eta, p, d, w, totalWeight };
}

/** (1/W) sum_i a_i x_il for every parameter l (x_i0 = 1 for the intercept), weights folded into a. */
function averagedCrossVector(a: Float64Array, design: DesignMatrix, intercept: boolean, totalWeight: number): Float64Array {
  const off = intercept ? 1 : 0;
  const out = new Float64Array(design.columns.length + off);
  const n = design.rows;
  if (intercept) {
    let s = 0;
    for (let i = 0; i < n; i++) s += a[i];
    out[0] = s / totalWeight;
  }
  for (let j = 0; j < design.columns.length; j++) {
    const x = design.columns[j];
    let s = 0;
    for (let i = 0; i < n; i++) s += a[i] * x[i];
    out[j + off] = s / totalWeight;
  }
  return out;
}

/** sqrt(g' V g) over the non-aliased parameters; NaN without a covariance. */
function deltaMethodSE(g: Float64Array, covariance: Float64Array | null, aliased: readonly boolean[]): number {
  if (!covariance) return NaN;
  const m = g.length;
  let q = 0;
  for (let r = 0; r < m; r++) {
    if (aliased[r] || g[r] === 0) continue;
    let s = 0;
    for (let c = 0; c < m; c++) if (!aliased[c] && g[c] !== 0) s += covariance[r * m + c] * g[c];
    q += g[r] * s;
  }
  // Rounding can leave a tiny negative quadratic form where the true one is 0.
  return Math.sqrt(Math.max(q, 0));
}

/** Slope terms: estimate (1/W) sum w d b_j and gradient e_j s + b_j h (see the policy above). */
function slopeEffect(j: number, s: number, h: Float64Array, input: MarginalEffectsInput): { estimate: number; gradient: Float64Array } {
  const k = j + (input.intercept ? 1 : 0);
  const bj = input.coefficients[k];
  const gradient = new Float64Array(h.length);
  for (let l = 0; l < h.length; l++) gradient[l] = bj * h[l];
  gradient[k] += s;
  return { estimate: bj * s, gradient };
}

/**
 * The linear predictor with every column of `group` at 0: eta_i - sum_{c in group} b_c x_ic. Kept
 * per group so that the levels of one text predictor share it.
 */
function baseEta(state: RowState, group: readonly number[], input: MarginalEffectsInput): Float64Array {
  const off = input.intercept ? 1 : 0;
  const base = Float64Array.from(state.eta);
  for (const c of group) {
    const bc = usable(input.coefficients, input.aliased, c + off);
    if (bc === 0) continue;
    const x = input.design.columns[c];
    for (let i = 0; i < base.length; i++) base[i] -= bc * x[i];
  }
  return base;
}

/** Discrete change of one term from the base rows (group at 0) to the column at 1. */
function changeEffect(t: EffectPlan, base: Float64Array, state: RowState, input: MarginalEffectsInput): { estimate: number; gradient: Float64Array } {
  const off = input.intercept ? 1 : 0;
  const bj = input.coefficients[t.column + off];
  const n = base.length;
  const a = new Float64Array(n);
  let change = 0;
  let d1Sum = 0;
  for (let i = 0; i < n; i++) {
    const p0 = sigmoid(base[i]);
    const p1 = sigmoid(base[i] + bj);
    const w = state.w ? state.w[i] : 1;
    change += w * (p1 - p0);
    const d1 = p1 * (1 - p1);
    a[i] = w * (d1 - p0 * (1 - p0));
    d1Sum += w * d1;
  }
  const gradient = averagedCrossVector(a, input.design, input.intercept, state.totalWeight);
  // The changed columns are fixed in both counterfactual rows (column at 1 or 0, siblings at 0).
  for (const c of t.siblings) gradient[c + off] = 0;
  gradient[t.column + off] = d1Sum / state.totalWeight;
  return { estimate: change / state.totalWeight, gradient };
}

/** Estimate, SE, z, p and interval of one term. */
function effectRow(term: string, t: EffectPlan, estimate: number, gradient: Float64Array, input: MarginalEffectsInput, z: number): MarginalEffect {
  const se = deltaMethodSE(gradient, input.covariance, input.aliased);
  const zValue = estimate / se;
  const row: MarginalEffect = {
    term,
    kind: t.kind,
    estimate,
    standardError: se,
    z: zValue,
    p: twoSidedPFromZ(zValue),
    lower: estimate - z * se,
    upper: estimate + z * se,
    estimable: true,
  };
  if (t.from !== undefined) row.from = t.from;
  if (t.to !== undefined) row.to = t.to;
  return row;
}

function notEstimable(term: string, t: EffectPlan): MarginalEffect {
  const row: MarginalEffect = { term, kind: t.kind, estimate: NaN, standardError: NaN, z: NaN, p: NaN, lower: NaN, upper: NaN, estimable: false };
  if (t.from !== undefined) row.from = t.from;
  if (t.to !== undefined) row.to = t.to;
  return row;
}

/**
 * Average marginal effects of a fitted binary logistic model on the positive-class probability,
 * with delta-method standard errors (formulas and rules in the file header).
 *
 * Method: W. H. Greene, Econometric Analysis, 7th ed. (2012), section 17.3 (average partial
 * effects, discrete change of a dummy variable) and Theorem D.22 (delta method); the factor-variable
 * rule of Stata's `margins` for the levels of a text predictor.
 *
 * @throws OddsmithError EFFECTS_TOO_COSTLY when rows x parameters x passes exceeds EFFECTS_WORK_LIMIT
 * @example
 * // Spector & Mazzeo grades data, GRADE ~ GPA + TUCE + PSI (PSI 0/1): AME of GPA 0.3626 (se 0.1094),
 * // discrete change of PSI 0.3575 (se 0.1420), as Stata 11's margins.
 */
export function marginalEffects(input: MarginalEffectsInput): MarginalEffects {
  const { design, intercept, aliased } = input;
  const off = intercept ? 1 : 0;
  const parameters = design.columns.length + off;
  const work = effectsWork(design.rows, parameters, input.plan);
  if (work > EFFECTS_WORK_LIMIT) {
    throw problem("EFFECTS_TOO_COSTLY", {
      rows: design.rows.toLocaleString("en-US"),
      terms: parameters.toLocaleString("en-US"),
      changes: input.plan.filter((t) => t.kind === "change").length.toLocaleString("en-US"),
      work: work.toExponential(1),
      limit: EFFECTS_WORK_LIMIT.toExponential(1),
    });
  }
  const state = rowState(input);
  const z = criticalZ(input.level);
  // Shared by every slope: s = (1/W) sum w d and h_l = (1/W) sum w d (1 - 2p) x_il.
  let s = 0;
  const a = new Float64Array(design.rows);
  for (let i = 0; i < design.rows; i++) {
    const w = state.w ? state.w[i] : 1;
    s += w * state.d[i];
    a[i] = w * state.d[i] * (1 - 2 * state.p[i]);
  }
  s /= state.totalWeight;
  const needSlopes = input.plan.some((t) => t.kind === "slope");
  const h = needSlopes ? averagedCrossVector(a, design, intercept, state.totalWeight) : new Float64Array(parameters);
  const bases = new Map<string, Float64Array>();
  const effects = input.plan.map((t) => {
    const term = design.names[t.column];
    if (aliased[t.column + off] || !Number.isFinite(input.coefficients[t.column + off])) return notEstimable(term, t);
    if (t.kind === "slope") {
      const e = slopeEffect(t.column, s, h, input);
      return effectRow(term, t, e.estimate, e.gradient, input, z);
    }
    const group = [t.column, ...t.siblings].sort((x, y) => x - y);
    const key = group.join(",");
    let base = bases.get(key);
    if (!base) {
      base = baseEta(state, group, input);
      bases.set(key, base);
    }
    const e = changeEffect(t, base, state, input);
    return effectRow(term, t, e.estimate, e.gradient, input, z);
  });
  const diagnostics: Diagnostic[] = [];
  if (!input.covariance) {
    diagnostics.push({ code: "EFFECTS_NO_STANDARD_ERRORS", severity: "note", message: formatMessage("EFFECTS_NO_STANDARD_ERRORS") });
  }
  return { effects, rows: design.rows, observations: state.totalWeight, level: input.level, diagnostics };
}

/** True when every value is 0 or 1 and both occur (statsmodels' `_isdummy` rule). */
export function isZeroOne(x: Float64Array): boolean {
  let zeros = 0;
  let ones = 0;
  for (let i = 0; i < x.length; i++) {
    if (x[i] === 0) zeros++;
    else if (x[i] === 1) ones++;
    else return false;
  }
  return zeros > 0 && ones > 0;
}

/**
 * The plan of a trained model: one entry per design column, in design order. Number columns are
 * slopes unless 0/1 (then changes 0 -> 1); indicators of a text predictor change from its reference
 * level, with that predictor's other indicators as siblings. `indicators: "slope"` makes every
 * column a slope.
 */
export function effectPlan(encoding: DesignEncoding, design: DesignMatrix, indicators: "change" | "slope"): EffectPlan[] {
  const plan: EffectPlan[] = [];
  let column = 0;
  for (const c of encoding.columns) {
    if (c.kind === "ignored") continue;
    if (c.kind === "number") {
      const zeroOne = indicators === "change" && isZeroOne(design.columns[column]);
      plan.push(zeroOne ? { column, kind: "change", siblings: [], from: "0", to: "1" } : { column, kind: "slope", siblings: [] });
      column++;
      continue;
    }
    const first = column;
    const levels = c.levels.filter((l) => l !== c.reference);
    for (let k = 0; k < c.terms.length; k++, column++) {
      if (indicators === "slope") {
        plan.push({ column, kind: "slope", siblings: [] });
        continue;
      }
      const siblings: number[] = [];
      for (let s = first; s < first + c.terms.length; s++) if (s !== column) siblings.push(s);
      plan.push({ column, kind: "change", siblings, from: c.reference, to: levels[k] });
    }
  }
  return plan;
}

/** Options of {@link averageMarginalEffects}. */
export interface AverageEffectsOptions {
  /** Two-sided interval level [the fit's level]. */
  level?: number;
  /** "change": 0/1 and indicator columns change from 0 to 1 (the default); "slope": dp/dx for all. */
  indicators?: "change" | "slope";
}

/** Per design row: the training row's offset (the model stores it per training data row). */
function designOffset(model: TrainedModel): Float64Array | null {
  if (!model.trainingOffset) return null;
  const out = new Float64Array(model.design.rows);
  for (let i = 0; i < model.rowMap.length; i++) if (model.rowMap[i] >= 0) out[model.rowMap[i]] = model.trainingOffset[i];
  return out;
}

/**
 * Average marginal effects of a trained two-class model over the rows it was fitted on (see
 * {@link marginalEffects} for the formulas; Greene, Econometric Analysis, 7th ed., section 17.3).
 * Offsets and weights of the fit are used as in the fit; grouped counts average over the trials.
 *
 * @throws OddsmithError EFFECTS_TWO_CLASSES_ONLY for a multi-class model; EFFECTS_TOO_COSTLY
 * @example
 * const m = trainModel(grades, predictors); // GRADE ~ GPA + TUCE + PSI
 * averageMarginalEffects(m).effects.map((e) => e.estimate) // [0.3626, 0.0122, 0.3575]
 */
export function averageMarginalEffects(model: TrainedModel, options: AverageEffectsOptions = {}): MarginalEffects {
  const fit = model.fit;
  if (model.kind !== "binary") throw problem("EFFECTS_TWO_CLASSES_ONLY", { count: fit.classes.length });
  const plan = effectPlan(model.encoding, model.design, options.indicators ?? "change");
  return marginalEffects({
    design: model.design,
    coefficients: fit.coefficients[0],
    aliased: fit.aliased,
    intercept: fit.intercept,
    covariance: fit.covariance,
    offset: designOffset(model),
    weights: model.observationWeights,
    plan,
    level: options.level ?? fit.level,
  });
}
