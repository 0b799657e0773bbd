/**
 * Cross-validation against scikit-learn's cross_val_predict on the same folds
 * (test/fixtures/evaluation/cv-sklearn.py, Debian python3-sklearn; open datasets: Spector & Mazzeo
 * 1980 grades data and the ANES 1996 extract, both from statsmodels.datasets). The folds sklearn
 * used are passed to crossValidate as an explicit assignment, so the out-of-fold probabilities,
 * the per-fold scores and the pooled out-of-fold log-loss must agree row by row.
 */
import { crossValidate } from "../../../../src/engine/evaluation/crossValidate";
import type { ModelOptions } from "../../../../src/engine/model";
import type { CellValue } from "../../../../src/engine/types";
import { expectAllClose, expectClose } from "../metrics/close";
import fixture from "../../../fixtures/evaluation/cv-sklearn.json";

/**
 * Both sides solve the same convex problems with Newton-type solvers to tight tolerances (ours:
 * relative deviance change 1e-10 or so; sklearn newton-cg tol 1e-12); probabilities then agree to
 * about 1e-8, so 1e-6 relative leaves room for the weakest solve without hiding a real difference
 * (a fold fitted on one wrong row moves probabilities by 1e-2 or more).
 */
const PROBABILITY_TOL = 1e-6;
/** Scores are sums of those probabilities' logs and squares: the same agreement. */
const SCORE_TOL = 1e-6;

interface Case {
  name: string;
  columns: string[];
  data: Record<string, number[]>;
  labels: number[];
  weights: number[] | null;
  folds: number;
  fold: number[];
  options: Record<string, unknown>;
  classes: number[];
  outOfFold: number[][];
  pooledLogLoss: number;
  perFold: { logLoss: number[]; brier: number[]; auc: number[]; accuracy: number[] };
}

function cellsOf(c: Case): { labels: CellValue[][]; predictors: CellValue[][]; options: ModelOptions } {
  const labels: CellValue[][] = [["y"], ...c.labels.map((v) => [v])];
  const predictors: CellValue[][] = [c.columns, ...c.labels.map((_, i) => c.columns.map((name) => c.data[name][i]))];
  const options: ModelOptions = { ...(c.options as ModelOptions) };
  if (c.weights) options.weights = [["w"], ...c.weights.map((w) => [w])];
  return { labels, predictors, options };
}

describe.each((fixture.cases as unknown as Case[]).map((c) => [c.name, c]))("%s: the same folds as scikit-learn's cross_val_predict", (_name, c) => {
  const { labels, predictors, options } = cellsOf(c);
  const result = crossValidate({ labels, predictors, options, assignment: Int32Array.from(c.fold), outOfFold: true });

  test("the folds are the ones given, and every row is scored out of fold", () => {
    expect(result.folds).toBe(c.folds);
    expect(Array.from(result.assignment)).toEqual(c.fold);
    expect(result.unscored.count).toBe(0);
    expect(result.classes).toEqual(c.classes.map(String));
  });

  test("out-of-fold probabilities agree row by row, every class", () => {
    const oof = result.outOfFold!.probabilities;
    for (let k = 0; k < c.classes.length; k++) {
      expectAllClose(oof[k], c.outOfFold.map((row) => row[k]), PROBABILITY_TOL, `${c.name} P(class ${c.classes[k]})`);
    }
  });

  test("the pooled out-of-fold log-loss is sklearn's log_loss of cross_val_predict", () => {
    expectClose(result.entries[0].pooled!.logLoss, c.pooledLogLoss, SCORE_TOL, `${c.name} pooled log-loss`);
  });

  test("per-fold log-loss, Brier score, AUC and accuracy agree, and the mean is their mean", () => {
    const s = result.entries[0].scores;
    expectAllClose(s.logLoss.perFold, c.perFold.logLoss, SCORE_TOL, `${c.name} fold log-loss`);
    expectAllClose(s.brier.perFold, c.perFold.brier, SCORE_TOL, `${c.name} fold Brier`);
    expectAllClose(s.accuracy.perFold, c.perFold.accuracy, SCORE_TOL, `${c.name} fold accuracy`);
    if (c.classes.length === 2) expectAllClose(s.auc.perFold, c.perFold.auc, SCORE_TOL, `${c.name} fold AUC`);
    const mean = c.perFold.logLoss.reduce((a, b) => a + b, 0) / c.folds;
    const sd = Math.sqrt(c.perFold.logLoss.reduce((a, b) => a + (b - mean) ** 2, 0) / (c.folds - 1));
    expectClose(s.logLoss.mean, mean, SCORE_TOL, `${c.name} mean log-loss`);
    expectClose(s.logLoss.standardError, sd / Math.sqrt(c.folds), SCORE_TOL, `${c.name} SE of log-loss`);
  });
});
