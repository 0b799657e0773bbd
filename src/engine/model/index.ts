/**
 * The model facade: worksheet ranges in, a trained model or per-row scores out. Cell functions, the
 * task pane and the benchmark all train and score through `trainModel` and `scoreRows`, so ranges,
 * labels, categories and skipped rows are handled the same way everywhere.
 *
 * The steps of a fit, each with its policy in its own file:
 * - data/alignRanges.ts: every range read by the shared range parser with one header decision and
 *   one row count (the header-agreement rule).
 * - data/validate.ts: the validation step, every input check (shapes, single columns, numbers,
 *   weights, counts, classes, two-class-only options, model size), run once per fit.
 * - data/design.ts: the numeric design; a row missing any used value (label, a predictor, weight,
 *   offset, trials) is skipped and counted per column.
 * - model/fitClasses.ts: grouped counts, two classes (binary fit) or more (multi-class fit).
 * - model/fitNotes.ts: the profile-interval budget and the diagnostics added to the fit.
 * - model/trainingRows.ts: the training rows encoded for scoring without parsing them again.
 * - Scoring: outputs have one entry per data row of the scored range (the training rows when no
 *   range is given, including rows skipped for a missing label: those can still be scored). A row
 *   that cannot be scored keeps its place with NaN numbers and a per-row problem (model/scoring.ts).
 */
import { readAlignedRanges, withHeaderHint, type RangeArg } from "../data/alignRanges";
import { buildDesign, encodeRows, type EncodedRows } from "../data/design";
import { problem } from "../messages";
import { validateColumns, type ValidColumns } from "../data/validate";
import { predictBinary } from "../predictBinary";
import { predictMulticlass } from "../predictMulticlass";
import type { CellValue, DesignMatrix } from "../types";
import { fitClasses, fitOptions, gather } from "./fitClasses";
import { affordableIntervals, completeDiagnostics } from "./fitNotes";
import { expand, scoringOffsets } from "./scoring";
import { encodeTrainingRows } from "./trainingRows";
import type { ModelOptions, RowScores, ScoringModel, TrainedModel } from "./types";

export { GROUPED_CLASSES, MAX_PARAMETERS } from "../data/validate";
export { PROFILE_BUDGET } from "./fitNotes";
export type { ModelLabels, ModelOptions, RowScores, ScoringModel, TrainedModel } from "./types";

const EXTRA_RANGES = ["weights", "offset", "trials"] as const;

/** The ranges of a fit in reading order: labels, predictors, then the extra columns given. */
function fitRanges(labels: CellValue[][], predictors: CellValue[][], options: ModelOptions): { ranges: RangeArg[]; extras: (typeof EXTRA_RANGES)[number][] } {
  const ranges: RangeArg[] = [
    { argument: "labels", cells: labels },
    { argument: "predictors", cells: predictors },
  ];
  const extras = EXTRA_RANGES.filter((key) => options[key] != null);
  for (const key of extras) ranges.push({ argument: key, cells: options[key] as CellValue[][] });
  return { ranges, extras };
}

/** Per design row: case weight x trials, or null when neither is given (see TrainedModel). */
function observationWeights(columns: ValidColumns, inputRows: Int32Array): Float64Array | null {
  if (!columns.weights && !columns.trials) return null;
  const w = columns.weights ? gather(columns.weights.values, inputRows) : new Float64Array(inputRows.length).fill(1);
  if (columns.trials) {
    const t = gather(columns.trials.values, inputRows);
    for (let r = 0; r < w.length; r++) w[r] *= t[r];
  }
  return w;
}

/**
 * Train a classifier from worksheet ranges: parse, validate, encode categories, skip incomplete rows,
 * fit. Two classes give a binary logistic fit (fitBinaryModel), more a multinomial (softmax) fit
 * (fitMulticlassModel); see those for the methods and their references.
 *
 * @param labels one column of class labels (or success counts with `options.trials`).
 * @param predictors one column per predictor; text columns become indicator terms.
 * @throws OddsmithError for input the user must correct (shapes, labels, options); estimation
 *   problems are diagnostics in `fit.diagnostics`.
 * @example
 * const m = trainModel([["bought"], ["yes"], ["no"], ...], [["visits", "region"], [3, "North"], ...], {});
 * m.fit.positiveClass // "yes"; m.fit.terms // ["(intercept)", "visits", "region=South", ...]
 */
export function trainModel(labels: CellValue[][], predictors: CellValue[][], options: ModelOptions = {}): TrainedModel {
  const { ranges, extras } = fitRanges(labels, predictors, options);
  const read = readAlignedRanges(ranges, options.headers ?? "auto");
  const predTable = read.tables[1];
  // Column and label problems can come from a header row read the wrong way: they carry the hint.
  const columns = withHeaderHint(read.agreement, () => validateColumns(read.tables, extras));

  // A row missing any used value is skipped, counted per column (label and extras first).
  const extra = [{ name: columns.label.name, missing: columns.label.missing }];
  for (const key of extras) {
    const c = columns[key] as NonNullable<(typeof columns)[typeof key]>;
    extra.push({ name: c.name, missing: c.missing });
  }
  const built = buildDesign(predTable, { extra, referenceLevels: options.referenceLevels ?? null, minLevelCount: options.minLevelCount ?? 0 });
  const common = fitOptions(options);
  const terms = built.design.columns.length + (common.intercept ? 1 : 0);
  const intervals = affordableIntervals(common.intervalMethod, built.design.rows, terms);
  const { fit, labels: info } = withHeaderHint(read.agreement, () => fitClasses({ columns, built, options, intervalMethod: intervals.method }));
  completeDiagnostics(fit, built, predTable, read.notes, intervals.note);

  return {
    kind: fit.kind,
    fit,
    encoding: built.encoding,
    labels: info,
    rowMap: built.rowMap,
    rows: read.rows,
    header: predTable.header,
    firstRow: predTable.firstRow,
    skipped: built.skipped,
    design: built.design,
    trainingRows: encodeTrainingRows(built.encoding, built.design, predTable, read.ownRows[1], predictors, read.rows),
    trainingOffset: columns.offset ? columns.offset.values : null,
    observationWeights: observationWeights(columns, built.inputRows),
    usesOffset: columns.offset !== null,
    offsetColumn: columns.offset ? columns.offset.name : null,
    threshold: options.threshold ?? 0.5,
  };
}

/**
 * Score rows with a trained model: class probabilities, predicted class, margins (and for binary
 * models the linear predictor with its standard error and a probability interval on the logit
 * scale), one entry per data row of `predictors`, or of the training rows when `predictors` is null.
 * Rows that cannot be scored (missing value, unseen category) keep their place with NaN and a
 * per-row problem. Methods: predictBinary / predictMulticlass.
 *
 * @param options.threshold decision threshold for binary models [the model's].
 * @param options.offset offset column for new rows of a model fitted with an offset.
 * @param model a TrainedModel, or a model read back from its description (then `predictors` is required).
 * @throws OddsmithError only for whole-range problems (EMPTY_RANGE, RAGGED_RANGE, COLUMN_COUNT_MISMATCH,
 *   DESCRIPTION_NEEDS_ROWS when a model without training rows is asked to score them).
 */
export function scoreRows(
  model: ScoringModel,
  predictors: CellValue[][] | null,
  options: { threshold?: number; offset?: CellValue[][] | null; headers?: "auto" | "yes" | "no" } = {},
): RowScores {
  const threshold = options.threshold ?? model.threshold;
  // Rows given here are the caller's new rows (ODDS.PROB's new_rows): messages name that argument.
  if (predictors === null && model.trainingRows === null) throw problem("DESCRIPTION_NEEDS_ROWS", { argument: "new_rows" });
  const encoded = predictors === null ? (model.trainingRows as EncodedRows) : encodeRows(model.encoding, predictors, { argument: "new_rows", headers: options.headers ?? "auto" });
  const n = encoded.design.rows;
  const ok = encoded.ok.slice();
  const problems = encoded.problems.slice();
  const offsetAll = model.usesOffset
    ? scoringOffsets(model.trainingOffset, options.offset, predictors === null, { n, header: encoded.header, firstRow: encoded.firstRow, ok, problems })
    : null;
  const good: number[] = [];
  for (let i = 0; i < n; i++) if (ok[i]) good.push(i);
  const X: DesignMatrix = {
    rows: good.length,
    names: encoded.design.names,
    columns: encoded.design.columns.map((c) => Float64Array.from(good, (i) => c[i])),
  };
  const part =
    model.kind === "binary"
      ? predictBinary(model.fit, X, {
          threshold,
          offset: offsetAll ? Float64Array.from(good, (i) => (offsetAll as Float64Array)[i]) : undefined,
        })
      : predictMulticlass(model.fit, X);
  const prediction = expand(part, good, n);
  const classes = model.fit.classes;
  const predictedClass = Array.from(prediction.predicted, (k) => (k >= 0 ? classes[k] : null));
  return {
    rows: n,
    header: encoded.header,
    firstRow: encoded.firstRow,
    classes,
    positiveClass: model.fit.positiveClass,
    threshold,
    prediction,
    predictedClass,
    scored: ok,
    problems,
  };
}
