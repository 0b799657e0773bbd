/**
 * ODDS.REPORT(labels, predictors, [options]): a two-column table (statistic, value) describing the
 * cached fit of labels x predictors: the data used, the estimation, likelihood-based statistics,
 * in-sample metrics, and every diagnostic in words.
 *
 * Policy (one line each):
 * - In-sample metrics (log-loss, Brier score, accuracy, AUC) are computed on the rows that entered
 *   the fit, with the same engine metrics as ODDS.LOGLOSS, ODDS.AUC and ODDS.CONFUSION.
 * - Two classes: binary log-loss and Brier score (one term per row), accuracy at the threshold
 *   option, AUC. Several classes: multi-class log-loss, Brier score summed over classes (Brier 1950),
 *   accuracy of the most probable class; no AUC.
 * - A fit without usable estimates still reports: its statistics are blank and its diagnostics say
 *   why. (FIT, PROB, CLASS and MARGIN show #N/A with the reason instead.)
 * - Diagnostics are listed last, one row each: "problem" (no estimate), "warning" or "note".
 */
import { brierScore, accuracy, logLoss, multiclassAccuracy, multiclassBrierScore, multiclassLogLoss, rocAuc, scoreRows, type TrainedModel, type CellValue } from "../engine";
import { spill } from "../shared/cellOutput";
import { fitFailure, readModelOptions } from "../shared/fitService";
import { fittedModel, refuseThresholdForSeveralClasses } from "./modelCell";

const SEVERITY_WORD = { error: "problem", warning: "warning", note: "note" } as const;

/** In-sample metrics of a usable fit, as [statistic, value] rows. */
function inSampleMetrics(model: TrainedModel, threshold: number): unknown[][] {
  const fit = model.fit;
  // The fit's own classes per row (model.labels.codes, indices into fit.classes): nothing is parsed again.
  const codes = model.labels.codes;
  if (!codes) return [];
  const s = scoreRows(model, null, { threshold });
  const used: number[] = [];
  const classOf: number[] = [];
  for (let i = 0; i < Math.min(codes.length, model.rows); i++) {
    if (model.rowMap[i] < 0 || !s.scored[i] || codes[i] < 0) continue;
    used.push(i);
    classOf.push(codes[i]);
  }
  if (fit.kind === "binary") {
    const positive = fit.classes.indexOf(fit.positiveClass as string);
    const y = Float64Array.from(classOf, (k) => (k === positive ? 1 : 0));
    const p = Float64Array.from(used, (i) => s.prediction.probabilities[positive][i]);
    const auc = rocAuc(y, p);
    return [
      ["log-loss", logLoss(y, p).value],
      ["Brier score", brierScore(y, p).value],
      [`accuracy (threshold ${threshold})`, accuracy(y, p, { threshold }).value],
      ["AUC", auc.auc],
      [`AUC lower ${Math.round(auc.level * 100)}% (DeLong)`, auc.lower],
      [`AUC upper ${Math.round(auc.level * 100)}% (DeLong)`, auc.upper],
    ];
  }
  const classes = Int32Array.from(classOf);
  const probabilities = s.prediction.probabilities.map((col) => Float64Array.from(used, (i) => col[i]));
  return [
    ["log-loss", multiclassLogLoss(classes, probabilities).value],
    ["Brier score (sum over classes)", multiclassBrierScore(classes, probabilities).value],
    ["accuracy (most probable class)", multiclassAccuracy(classes, probabilities).value],
  ];
}

/**
 * The ODDS.REPORT adapter.
 * @returns two columns, statistic and value
 */
export function reportCell(labels: CellValue[][] | null, predictors: CellValue[][] | null, options: CellValue[][] | null): CellValue[][] {
  const opts = readModelOptions("ODDS.REPORT", options);
  const model = fittedModel(labels, predictors, opts, 200);
  refuseThresholdForSeveralClasses(model, opts.threshold);
  const fit = model.fit;
  const failure = fitFailure(model);
  const binary = fit.kind === "binary";
  const rows: unknown[][] = [
    ["statistic", "value"],
    ["model", binary ? "binary logistic" : `softmax, ${fit.form === "symmetric" ? "symmetric form" : "reference-class form"}`],
    ["label column", model.labels.name],
    ["classes", fit.classes.join(", ")],
    binary ? ["positive class", fit.positiveClass] : ["reference class", fit.referenceClass || "(none: symmetric form)"],
    ["rows used", fit.rowsUsed],
    ["rows skipped", model.skipped.total],
    ["terms per equation", fit.terms.length],
    ["parameters estimated", fit.parameters],
    ["intercept", fit.intercept],
    ["penalty", fit.penalty],
    ["bias reduction (Firth)", fit.biasReduced],
    ["iterations", fit.iterations],
    ["converged", fit.converged],
    ["log-likelihood", fit.logLikelihood],
    ["null log-likelihood", fit.nullLogLikelihood],
    ["deviance", fit.deviance],
    ["null deviance", fit.nullDeviance],
    ["AIC", fit.aic],
    ["BIC", fit.bic],
    ["pseudo-R2 (McFadden)", fit.pseudoR2],
    ["LR test statistic", fit.lrTest.statistic],
    ["LR test df", fit.lrTest.df],
    ["LR test p", fit.lrTest.p],
  ];
  if (!failure) rows.push(...inSampleMetrics(model, opts.threshold));
  for (const d of fit.diagnostics) rows.push([SEVERITY_WORD[d.severity], d.message]);
  return spill(rows);
}
