/**
 * Shared types of the Oddsmith engine. This file is the contract between the engine (src/engine),
 * the cell-function adapters (src/functions) and the task pane (src/taskpane). Pure TypeScript:
 * nothing here imports Office.
 *
 * Conventions
 * - Data is columnar: one Float64Array per column, all of length `rows`.
 * - Row numbers in diagnostics are 0-based indices into the rows the caller passed in; adapters add
 *   1 (and the header offset) before showing them to a user.
 * - Coefficient vectors put the intercept first when the model has one.
 */

/** What one spreadsheet cell can hold once it reaches our code (Excel sends null or "" for blanks). */
export type CellValue = number | string | boolean | null | undefined;

/** A numeric design matrix without the intercept column; the intercept is a fit option. */
export interface DesignMatrix {
  /** Number of rows (observations). */
  rows: number;
  /** One column per predictor term, each of length `rows`. */
  columns: Float64Array[];
  /** Readable term name per column ("age", "region=North", "dose^2"). */
  names: string[];
}

/** Severity of a diagnostic: an `error` means there is no usable estimate; a `warning` qualifies one. */
export type Severity = "error" | "warning" | "note";

/**
 * One finding about a fit or an input, always carried in the result (never only logged).
 * `code` is a key of the message catalogue (src/engine/messages.ts).
 */
export interface Diagnostic {
  code: string;
  severity: Severity;
  /** Plain-language text: what is wrong, where, and what to do. */
  message: string;
  /** Term names involved, when the finding is about columns. */
  columns?: string[];
  /** 0-based row indices (into the caller's rows) involved, when the finding is about rows. */
  rows?: number[];
  /**
   * The values the message was formatted with, so a caller that maps `rows` to the user's own row
   * numbers can format the message again (see exampleRows in messages.ts).
   */
  params?: Record<string, unknown>;
}

/** Options shared by binary and multi-class fits. Every field is optional; defaults are in brackets. */
export interface FitOptions {
  /** Fit an intercept [true]. */
  intercept?: boolean;
  /** Case (frequency) weights, >= 0, one per row [all 1]. */
  weights?: Float64Array | null;
  /** Offset added to the linear predictor, one per row [none]. Binary only. */
  offset?: Float64Array | null;
  /** L2 (ridge) penalty strength lambda >= 0 [0]. The intercept is never penalized. */
  penalty?: number;
  /** Scale on which the penalty applies: "standardized" coefficients or "original" ones ["standardized"]. */
  penaltyScale?: "standardized" | "original";
  /** Firth bias-reduced fit (binary; multi-class where supported) [false]. */
  biasReduction?: boolean;
  /** Confidence level of intervals, in (0, 1) [0.95]. */
  level?: number;
  /** Interval method: "wald" or "profile" (profile likelihood) ["wald"]. */
  intervalMethod?: "wald" | "profile";
  /** Iteration cap [100]. */
  maxIterations?: number;
  /** Relative convergence tolerance on the objective: |d - d_old| / (0.1 + |d|) < tol [1e-10]. */
  tolerance?: number;
}

/** Binary-fit extras. */
export interface BinaryFitOptions extends FitOptions {
  /**
   * Grouped binomial input: trials per row. When given, the response is the number of successes
   * (0 <= y <= trials) rather than a 0/1 label.
   */
  trials?: Float64Array | null;
}

/** Multi-class extras. */
export interface MulticlassFitOptions extends FitOptions {
  /** Index (into `classes`) of the reference class of the reference-class form [0]. */
  reference?: number;
  /**
   * Parameterization: "reference" (K-1 equations against the reference class; the default and the
   * only form with classical inference) or "symmetric" (K equations, identifiable only with a penalty).
   */
  form?: "reference" | "symmetric";
}

/** One line of a coefficient table. Fields that cannot be given (aliased term, penalized fit) are NaN. */
export interface CoefficientRow {
  /** Class this equation predicts (multi-class), or the positive class (binary). */
  outcome: string;
  term: string;
  estimate: number;
  standardError: number;
  z: number;
  p: number;
  lower: number;
  upper: number;
  /** exp(estimate): odds ratio (binary) or relative-risk ratio (multi-class). */
  ratio: number;
  ratioLower: number;
  ratioUpper: number;
  /** False for an aliased (not estimable) term; its numbers are NaN. */
  estimable: boolean;
}

/** Likelihood-ratio test of the fitted model against the intercept-only model. */
export interface LikelihoodRatioTest {
  statistic: number;
  df: number;
  p: number;
}

/** Everything a fit reports. Binary and multi-class fits share this shape. */
export interface ModelFit {
  kind: "binary" | "multiclass";
  /** Class labels: binary [negative, positive]; multi-class in the order of the class indices. */
  classes: string[];
  /** Binary: the positive class. Multi-class: the reference class (reference form) or "" (symmetric). */
  positiveClass?: string;
  referenceClass?: string;
  form: "binary" | "reference" | "symmetric";
  /** Term names of one equation, intercept first when present ("(intercept)"). */
  terms: string[];
  intercept: boolean;
  /**
   * Coefficients per equation: binary has one equation; reference form K-1 (one per non-reference
   * class, in class order); symmetric form K. Each of length terms.length, original scale.
   */
  coefficients: Float64Array[];
  /** Outcome (class) each equation predicts, parallel to `coefficients`. */
  equationClasses: string[];
  /**
   * Covariance of all coefficients stacked equation by equation (length m*m, row-major, m =
   * equations * terms), or null when not available (penalized fit, failed fit).
   */
  covariance: Float64Array | null;
  /** Flattened table rows, equation by equation. */
  table: CoefficientRow[];
  level: number;
  intervalMethod: "wald" | "profile";
  /** Per-term flag: true when the term is aliased (collinear) and was dropped. */
  aliased: boolean[];
  penalized: boolean;
  penalty: number;
  biasReduced: boolean;
  logLikelihood: number;
  nullLogLikelihood: number;
  deviance: number;
  nullDeviance: number;
  aic: number;
  bic: number;
  /** McFadden pseudo-R2 = 1 - logLik / nullLogLik. */
  pseudoR2: number;
  lrTest: LikelihoodRatioTest;
  /** Number of estimated (non-aliased) parameters. */
  parameters: number;
  /** Rows that entered the fit, and the sum of their weights (the number of observations). */
  rowsUsed: number;
  observations: number;
  iterations: number;
  converged: boolean;
  diagnostics: Diagnostic[];
}

/**
 * The part of a fit that scoring reads: a full ModelFit has it, and so does a model read back from
 * its description (src/engine/portable/), which has no coefficient table or fit statistics.
 */
export type ScoringFit = Pick<
  ModelFit,
  "kind" | "classes" | "positiveClass" | "referenceClass" | "form" | "terms" | "intercept" | "coefficients" | "equationClasses" | "covariance" | "aliased" | "level"
>;

/** Per-row predictions of a fitted model. Rows that could not be scored hold NaN. */
export interface Prediction {
  /** Probability of each class, one array per class (classes in ModelFit order). */
  probabilities: Float64Array[];
  /** Binary: linear predictor and its standard error (NaN without a covariance). */
  linearPredictor?: Float64Array;
  linearPredictorSE?: Float64Array;
  /** Binary: interval for the positive-class probability, computed on the logit scale. */
  lower?: Float64Array;
  upper?: Float64Array;
  /** Index of the predicted class per row (-1 when the row could not be scored). */
  predicted: Int32Array;
  /**
   * Margin to the decision boundary per row. Binary: |p - threshold|. Multi-class: the gap between
   * the two largest class probabilities.
   */
  margin: Float64Array;
  /** Binary: |eta - logit(threshold)|, the margin on the linear-predictor scale. */
  linkMargin?: Float64Array;
}
