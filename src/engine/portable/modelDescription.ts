/**
 * The model description: a plain JSON document of our own design that holds everything needed to
 * score rows exactly as the fitted model does, without the data it was fitted on. It is stored
 * inside the workbook (so the model survives save and reopen), offered as a file to save, and read
 * back by the loader cell function. docs/model-description.md documents every field.
 *
 * Version rule (one line each):
 * - `formatVersion` is "major.minor". A reader accepts every description of its own major version:
 *   a newer minor only adds fields, which an older reader ignores.
 * - A description of a newer major version is refused with MODEL_DESCRIPTION_NEWER (its meaning
 *   may have changed); nothing is guessed from it.
 * - Numbers that are not finite (NaN for an unavailable standard error) are written as null.
 * Reference: Semantic Versioning 2.0.0 (semver.org) for the major/minor meaning.
 */
import type { RecipeState } from "../basis/recipe";
import type { ColumnEncoding } from "../data/design";

/** Value of the `format` field: says what the document is. */
export const DESCRIPTION_FORMAT = "oddsmith-model";
/** The major version this build writes and reads. */
export const DESCRIPTION_MAJOR = 1;
/** The minor version this build writes. */
export const DESCRIPTION_MINOR = 0;
/** "1.0". */
export const DESCRIPTION_VERSION = `${DESCRIPTION_MAJOR}.${DESCRIPTION_MINOR}`;

/** A number that may be unavailable (written as null in JSON). */
export type MaybeNumber = number | null;

/** One equation of the model: the class it predicts and a coefficient per term. */
export interface DescribedEquation {
  class: string;
  coefficients: MaybeNumber[];
}

/** What the training data looked like, per predictor column (for a reader to check new rows against). */
export type DescribedColumnSummary =
  | { name: string; kind: "number"; count: number; min: number; max: number; mean: number }
  | { name: string; kind: "category"; count: number; levels: { level: string; count: number }[] };

/** The model description (format version 1). */
export interface ModelDescription {
  format: typeof DESCRIPTION_FORMAT;
  formatVersion: string;
  /** The program and version that wrote the description. */
  producer: { name: string; version: string };
  /** When it was written (ISO 8601), or null. */
  created: string | null;
  /** A name for the model, used to find it in the workbook. */
  name: string;
  kind: "binary" | "multiclass";
  /** binary, reference (K-1 equations against the reference class) or symmetric (K equations). */
  form: "binary" | "reference" | "symmetric";
  label: {
    name: string;
    /** Classes in the model's order (binary: [negative, positive]). */
    classes: string[];
    positiveClass: string | null;
    referenceClass: string | null;
  };
  /** Term names of one equation, intercept first when present ("(intercept)"). */
  terms: string[];
  intercept: boolean;
  equations: DescribedEquation[];
  /** Per term: true when the term was aliased (collinear) and dropped; it contributes nothing. */
  aliased: boolean[];
  /** Covariance of all coefficients stacked equation by equation, row-major, or null. */
  covariance: MaybeNumber[] | null;
  /** How predictor cells become terms (the stored encoding: numbers, booleans, categories and levels). */
  predictors: { header: boolean; columns: ColumnEncoding[] };
  /** The basis recipe that builds some predictor columns from raw data columns, or null. */
  basis: RecipeState | null;
  /** The offset column added to the linear predictor (binary), or null. */
  offset: { column: string } | null;
  options: {
    threshold: number;
    penalty: number;
    penalized: boolean;
    biasReduced: boolean;
    level: number;
    intervalMethod: "wald" | "profile";
  };
  data: {
    rowsUsed: number;
    observations: number;
    rowsSkipped: number;
    /** Rows per class among the fitted rows, parallel to label.classes. */
    classCounts: number[];
    columns: DescribedColumnSummary[];
  };
  fit: {
    converged: boolean;
    iterations: number;
    logLikelihood: MaybeNumber;
    nullLogLikelihood: MaybeNumber;
    deviance: MaybeNumber;
    aic: MaybeNumber;
    bic: MaybeNumber;
    parameters: number;
    diagnostics: { code: string; severity: string; message: string }[];
  };
}
