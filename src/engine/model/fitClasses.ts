/**
 * The fit of a validated design: grouped counts, two classes or several, each handed to its fitter
 * with the options resolved and the per-row columns gathered into design-row order.
 *
 * Policy (one line each):
 * - With trials, the labels column holds success counts and the classes are "failure" and "success".
 * - Two classes give a binary logistic fit (fitBinaryModel), more a multinomial (softmax) fit
 *   (fitMulticlassModel); see those for the methods and their references.
 * - The second phase of the validation step (validateProblem) runs before any fitter starts.
 */
import { fitBinaryModel } from "../binary";
import type { BuiltDesign } from "../data/design";
import { checkFirthWork } from "../data/fitWork";
import { readLabels } from "../data/labels";
import { GROUPED_CLASSES, validateProblem, type ValidColumns } from "../data/validate";
import { fitMulticlassModel } from "../multiclass";
import type { ModelFit } from "../types";
import type { ModelLabels, ModelOptions } from "./types";

/** Resolved options with defaults, for the fitters. */
export function fitOptions(o: ModelOptions) {
  return {
    intercept: o.intercept ?? true,
    penalty: o.penalty ?? 0,
    penaltyScale: o.penaltyScale ?? "standardized",
    biasReduction: o.firth ?? false,
    level: o.level ?? 0.95,
    intervalMethod: o.intervalMethod ?? "wald",
    ...(o.maxIterations !== undefined ? { maxIterations: o.maxIterations } : {}),
    ...(o.tolerance !== undefined ? { tolerance: o.tolerance } : {}),
  } as const;
}

/**
 * Class codes of the design rows from those of the input rows. (A loop of its own: trainModel runs
 * once per fit, mostly before it is optimized, and a loop inside it runs at the interpreter's pace.)
 */
function gatherCodes(codes: Int32Array, inputRows: Int32Array): Int32Array {
  const out = new Int32Array(inputRows.length);
  for (let r = 0; r < inputRows.length; r++) out[r] = codes[inputRows[r]];
  return out;
}

/** Gather used rows of a per-input-row array into design-row order. */
export function gather(values: Float64Array, inputRows: Int32Array): Float64Array {
  const out = new Float64Array(inputRows.length);
  for (let r = 0; r < inputRows.length; r++) out[r] = values[inputRows[r]];
  return out;
}

/** What fitClasses needs besides the design. */
export interface FitRequest {
  columns: ValidColumns;
  built: BuiltDesign;
  options: ModelOptions;
  /** The interval method the budget allows (affordableIntervals). */
  intervalMethod: "wald" | "profile";
}

/** A fit with the class information stored on the trained model. */
export interface ClassFit {
  fit: ModelFit;
  labels: ModelLabels;
}

/** Grouped counts (successes out of trials): one binary fit over failure / success. */
function fitGrouped(req: FitRequest, terms: number): ClassFit {
  const { columns, built } = req;
  const rows = built.inputRows;
  const w = columns.weights ? gather(columns.weights.values, rows) : null;
  const y = gather((columns.successes as NonNullable<ValidColumns["successes"]>).values, rows);
  const t = gather((columns.trials as NonNullable<ValidColumns["trials"]>).values, rows);
  let s = 0;
  let total = 0;
  for (let r = 0; r < y.length; r++) {
    const wr = w ? w[r] : 1;
    s += wr * y[r];
    total += wr * t[r];
  }
  const classes = [...GROUPED_CLASSES];
  validateProblem({ terms, classes, grouped: { successes: s, total }, form: "reference", requests: { offset: columns.offset !== null } });
  if (req.options.firth) checkFirthWork(built.design.rows, terms);
  const fit = fitBinaryModel(built.design, y, {
    ...fitOptions(req.options),
    intervalMethod: req.intervalMethod,
    weights: w,
    offset: columns.offset ? gather(columns.offset.values, rows) : null,
    trials: t,
  }, [classes[0], classes[1]]);
  const labels: ModelLabels = { name: columns.label.name, classes, positiveClass: classes[1], counts: [total - s, s], grouped: true, codes: null };
  return { fit, labels };
}

/** Class labels: two classes give a binary fit, more a multi-class fit. */
function fitLabelled(req: FitRequest, terms: number): ClassFit {
  const { columns, built, options } = req;
  const rows = built.inputRows;
  const info = readLabels(columns.label, { positive: options.positive ?? null, reference: options.reference ?? null, use: built.used });
  const form = options.form ?? "reference";
  validateProblem({
    terms,
    classes: info.classes,
    form,
    requests: { firth: options.firth, intervalMethod: options.intervalMethod, offset: columns.offset !== null },
  });
  if (options.firth && info.kind === "binary") checkFirthWork(built.design.rows, terms);
  const codes = gatherCodes(info.codes, rows);
  const w = columns.weights ? gather(columns.weights.values, rows) : null;
  const fit =
    info.kind === "binary"
      ? fitBinaryModel(built.design, Float64Array.from(codes), {
          ...fitOptions(options),
          intervalMethod: req.intervalMethod,
          weights: w,
          offset: columns.offset ? gather(columns.offset.values, rows) : null,
        }, [info.classes[0], info.classes[1]])
      : fitMulticlassModel(built.design, codes, info.classes, { ...fitOptions(options), weights: w, reference: info.referenceIndex, form });
  const labels: ModelLabels = {
    name: columns.label.name,
    classes: info.classes,
    positiveClass: info.positiveClass,
    referenceClass: info.referenceClass,
    counts: info.counts,
    grouped: false,
    codes: info.codes,
  };
  return { fit, labels };
}

/**
 * Fit the validated design: grouped counts when a trials column is given, else by the classes of
 * the label column (binary: fitBinaryModel, Newton-Raphson on the logistic likelihood; several:
 * fitMulticlassModel, the multinomial likelihood; references with those fitters).
 * @throws OddsmithError from the second validation phase (ONE_CLASS_ONLY, BAD_OPTION_VALUE,
 *   TOO_MANY_PARAMETERS) and the label reader
 */
export function fitClasses(req: FitRequest): ClassFit {
  const terms = req.built.design.columns.length + (fitOptions(req.options).intercept ? 1 : 0);
  return req.columns.trials && req.columns.successes ? fitGrouped(req, terms) : fitLabelled(req, terms);
}
