/**
 * The types of the model facade: what trainModel accepts, the trained model it returns (everything
 * needed to score new rows the same way) and the per-row scores of scoreRows.
 */
import type { DesignEncoding, EncodedRows, RowProblem, SkippedRows } from "../data/design";
import type { CellValue, DesignMatrix, ModelFit, Prediction, ScoringFit } from "../types";

/** Everything trainModel accepts besides the two main ranges. Defaults in brackets. */
export interface ModelOptions {
  /** Whether the first row of each range holds names ["auto"]. */
  headers?: "auto" | "yes" | "no";
  /** Positive class of a binary problem [1, TRUE, yes, or the second in sorted order]. */
  positive?: string | null;
  /** Reference class of a multi-class problem [first in sorted order]. */
  reference?: string | null;
  /** Fit an intercept [true]. */
  intercept?: boolean;
  /** L2 penalty lambda >= 0 [0]. */
  penalty?: number;
  /** ["standardized"] */
  penaltyScale?: "standardized" | "original";
  /** Firth bias reduction [false]. */
  firth?: boolean;
  /** Interval level [0.95]. */
  level?: number;
  /** ["wald"] */
  intervalMethod?: "wald" | "profile";
  /** Default decision threshold stored with the model for scoring [0.5]. */
  threshold?: number;
  /** Case weights column [none]. */
  weights?: CellValue[][] | null;
  /** Offset column (binary) [none]. */
  offset?: CellValue[][] | null;
  /** Trials column: labels are then success counts (binary) [none]. */
  trials?: CellValue[][] | null;
  /** Reference category per text predictor column name [first in sorted order]. */
  referenceLevels?: Record<string, string> | null;
  /** Pool categories seen in fewer fitted rows than this into "(other)" [0 = never]. */
  minLevelCount?: number;
  /** Multi-class form ["reference"]. */
  form?: "reference" | "symmetric";
  maxIterations?: number;
  tolerance?: number;
}

/** Class information stored with a trained model. */
export interface ModelLabels {
  /** Name of the label column (its header, or "labels"). */
  name: string;
  classes: string[];
  positiveClass?: string;
  referenceClass?: string;
  /** Rows per class among the fitted rows (grouped: total failures and successes). */
  counts: number[];
  grouped: boolean;
  /**
   * Class per training data row, as an index into `classes`, or -1 where the row has no label (kept
   * from the fit, so nothing parses the labels again); null for grouped counts (rows hold counts).
   */
  codes: Int32Array | null;
}

/** A trained model: the fit plus everything needed to score new rows the same way. */
export interface TrainedModel {
  kind: "binary" | "multiclass";
  fit: ModelFit;
  /** Predictor encoding (plain, serializable). */
  encoding: DesignEncoding;
  labels: ModelLabels;
  /** Per training data row: its row in the fitted design, or -1 when skipped. */
  rowMap: Int32Array;
  /** Training data rows (after the header). */
  rows: number;
  /** True when the training ranges had a header row. */
  header: boolean;
  /** 1-based range row of training data row 0. */
  firstRow: number;
  skipped: SkippedRows;
  /** The fitted design (used rows only). */
  design: DesignMatrix;
  /** Training predictors encoded for scoring (every data row, problems per row). */
  trainingRows: EncodedRows;
  /** Offset per training data row (NaN where missing), or null without an offset. */
  trainingOffset: Float64Array | null;
  /**
   * Per fitted design row: the observations it stands for (case weight, times trials for grouped
   * counts), or null when every row is one observation. Averages over the fitted rows (marginal
   * effects) weight by it.
   */
  observationWeights: Float64Array | null;
  /** True when the model was fitted with an offset (scoring new rows then needs one). */
  usesOffset: boolean;
  /** Header of the offset column (its name in the offset range), or null without an offset. */
  offsetColumn: string | null;
  /** Default threshold for scoring. */
  threshold: number;
}

/**
 * What scoreRows needs of a model: a TrainedModel has it all; a model read back from its
 * description (src/engine/portable/restoreModel.ts) has no training rows, so it scores given rows only.
 */
export interface ScoringModel {
  kind: "binary" | "multiclass";
  fit: ScoringFit;
  encoding: DesignEncoding;
  /** Training predictors encoded for scoring, or null when the model holds no data rows. */
  trainingRows: EncodedRows | null;
  trainingOffset: Float64Array | null;
  usesOffset: boolean;
  offsetColumn: string | null;
  threshold: number;
}

/** Per-row scores, aligned with the scored range's data rows. */
export interface RowScores {
  rows: number;
  /** True when the scored range's first row was taken as names. */
  header: boolean;
  /** 1-based range row of data row 0. */
  firstRow: number;
  classes: string[];
  positiveClass?: string;
  threshold: number;
  /** Full-length prediction; unscored rows hold NaN and predicted -1. */
  prediction: Prediction;
  /** Predicted class name per row, or null when the row could not be scored. */
  predictedClass: (string | null)[];
  /** 1 for scored rows. */
  scored: Uint8Array;
  /** Why rows could not be scored (first problem per row), sorted by row. */
  problems: RowProblem[];
}
