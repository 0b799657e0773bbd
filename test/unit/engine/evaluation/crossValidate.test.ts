/**
 * Cross-validation behaviour: stable folds, rows outside the folds, weights, text predictors with
 * levels unseen in training, basis recipes fitted inside each fold (no leakage), failures, the
 * work bound, the penalty path and its choice, and the steps the pane shows as progress.
 * Spector & Mazzeo (1980) grades data (test/fixtures/binary/spector.json) where a real table helps;
 * small made-up tables where a case needs a particular shape (these check behaviour, not numbers).
 */
import { parseRecipe, fitRecipe } from "../../../../src/engine/basis/recipe";
import { crossValidate, crossValidationSteps, type CrossValidationRequest } from "../../../../src/engine/evaluation/crossValidate";
import { prepareEvaluationData } from "../../../../src/engine/evaluation/evaluationData";
import { fitOnRows } from "../../../../src/engine/evaluation/fitOnRows";
import { tableBasisColumns } from "../../../../src/engine/evaluation/foldPredictors";
import { readTable } from "../../../../src/engine/data/table";
import type { CellValue } from "../../../../src/engine/types";
import { expectProblem } from "../metrics/close";
import spector from "../../../fixtures/binary/spector.json";

const N = spector.data.GRADE.length;
const LABELS: CellValue[][] = [["GRADE"], ...spector.data.GRADE.map((v) => [v])];
const PREDICTORS: CellValue[][] = [["GPA", "TUCE", "PSI"], ...spector.data.GPA.map((g, i) => [g, spector.data.TUCE[i], spector.data.PSI[i]])];

const copy = (cells: CellValue[][]) => cells.map((r) => r.slice());

describe("folds and rows", () => {
  test("the same cells and seed give the same folds and the same scores on recalculation", () => {
    const a = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, seed: 11, outOfFold: true });
    const b = crossValidate({ labels: copy(LABELS), predictors: copy(PREDICTORS), folds: 4, seed: 11, outOfFold: true });
    expect(Array.from(b.assignment)).toEqual(Array.from(a.assignment));
    expect(b.entries[0].scores).toEqual(a.entries[0].scores);
    expect(Array.from(b.outOfFold!.probabilities[1])).toEqual(Array.from(a.outOfFold!.probabilities[1]));
  });

  test("rows without a label or a predictor value stay out of the folds and have no out-of-fold value", () => {
    const labels = copy(LABELS);
    const predictors = copy(PREDICTORS);
    labels[3][0] = null;
    predictors[8][1] = "";
    const r = crossValidate({ labels, predictors, folds: 4, seed: 1, outOfFold: true });
    expect(r.rows).toBe(N);
    expect(r.rowsInFolds).toBe(N - 2);
    expect(r.assignment[2]).toBe(-1);
    expect(r.assignment[7]).toBe(-1);
    expect(Number.isNaN(r.outOfFold!.probabilities[1][2])).toBe(true);
    expect(Number.isNaN(r.outOfFold!.probabilities[1][7])).toBe(true);
    expect(r.foldRows.reduce((a, b) => a + b, 0)).toBe(N - 2);
  });

  test("out-of-fold probabilities of a fold come from the fit on the other folds only", () => {
    const r = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, seed: 5, outOfFold: true });
    const data = prepareEvaluationData(LABELS, PREDICTORS, {}, null);
    const training = Uint8Array.from(r.assignment, (f) => (f >= 0 && f !== 2 ? 1 : 0));
    const fit = fitOnRows(data, training, 0);
    for (let i = 0; i < N; i++) if (r.assignment[i] === 2) expect(r.outOfFold!.probabilities[1][i]).toBe(fit.probabilities[1][i]);
  });
});

describe("weights", () => {
  test("a case weight of 2 equals the row written twice in the same fold", () => {
    const weights: CellValue[][] = [["w"], ...LABELS.slice(1).map((_, i) => [i === 4 ? 2 : 1])];
    const fold = Int32Array.from({ length: N }, (_, i) => i % 4);
    const weighted = crossValidate({ labels: LABELS, predictors: PREDICTORS, options: { weights }, assignment: fold, outOfFold: true });
    const labels2 = [...LABELS, LABELS[5]];
    const predictors2 = [...PREDICTORS, PREDICTORS[5]];
    const fold2 = Int32Array.from([...fold, fold[4]]);
    const doubled = crossValidate({ labels: labels2, predictors: predictors2, assignment: fold2, outOfFold: true });
    for (let i = 0; i < N; i++) expect(weighted.outOfFold!.probabilities[1][i]).toBeCloseTo(doubled.outOfFold!.probabilities[1][i], 9);
    const w = weighted.entries[0].scores;
    const d = doubled.entries[0].scores;
    for (let f = 0; f < 4; f++) {
      expect(w.logLoss.perFold[f]).toBeCloseTo(d.logLoss.perFold[f], 9);
      expect(w.brier.perFold[f]).toBeCloseTo(d.brier.perFold[f], 9);
    }
  });
});

describe("text predictors", () => {
  /** 40 rows; region "East" occurs in one row only, so the fold holding it has never seen the level. */
  function orchard(): { labels: CellValue[][]; predictors: CellValue[][]; eastRow: number } {
    const regions = ["North", "South", "West"];
    const labels: CellValue[][] = [["sorted"]];
    const predictors: CellValue[][] = [["weight", "region"]];
    for (let i = 0; i < 40; i++) {
      const w = 100 + ((i * 37) % 50);
      labels.push([(i * 7) % 5 < 2 === w > 125 ? "keep" : "drop"]);
      predictors.push([w, i === 17 ? "East" : regions[i % 3]]);
    }
    return { labels, predictors, eastRow: 17 };
  }

  test("levels come from each fold's training rows: a level unseen there gives that row no value, counted in a note", () => {
    const { labels, predictors, eastRow } = orchard();
    // (A penalty: a level of one row separates that row in the folds whose training rows hold it.)
    const r = crossValidate({ labels, predictors, folds: 5, seed: 3, options: { penalty: 0.5 }, outOfFold: true });
    expect(r.unscored.count).toBe(1);
    expect(r.unscored.first!.row).toBe(eastRow + 2);
    expect(r.unscored.first!.reason.code).toBe("UNSEEN_LEVEL");
    expect(Number.isNaN(r.outOfFold!.probabilities[1][eastRow])).toBe(true);
    const note = r.notes.find((n) => n.code === "CV_ROWS_UNSCORED")!;
    expect(note.message).toContain("1 held-out row got no probability");
    expect(note.message).toContain("East");
    expect(Number.isFinite(r.entries[0].scores.logLoss.mean)).toBe(true);
    // Every other row has its out-of-fold value.
    expect(Array.from(r.outOfFold!.probabilities[1]).filter(Number.isFinite).length).toBe(39);
  });
});

describe("basis recipes inside the folds (no leakage)", () => {
  const RECIPE = "GPA: z; TUCE: ns(3); PSI: raw";

  test("a fold's transforms are fitted on its training rows alone", () => {
    const data = prepareEvaluationData(LABELS, PREDICTORS, {}, RECIPE);
    const training = Uint8Array.from({ length: N }, (_, i) => (i % 4 === 1 ? 0 : 1));
    const fit = fitOnRows(data, training, 0);
    const table = readTable(PREDICTORS.filter((_, r) => r === 0 || training[r - 1] === 1), { argument: "predictors", headers: "yes" });
    const alone = fitRecipe(parseRecipe(RECIPE), tableBasisColumns(table), "predictors");
    expect(fit.recipe!.states).toEqual(alone.states);
    const all = fitRecipe(parseRecipe(RECIPE), tableBasisColumns(readTable(PREDICTORS, { argument: "predictors", headers: "yes" })), "predictors");
    expect(fit.recipe!.states).not.toEqual(all.states);
  });

  test("changing the held-out rows' values changes neither the fold's transforms nor its coefficients", () => {
    const assignment = Int32Array.from({ length: N }, (_, i) => i % 4);
    const moved = copy(PREDICTORS);
    for (let i = 0; i < N; i++) if (assignment[i] === 0) moved[i + 1] = [4.5 + i, 40 + i, 1];
    const training = Uint8Array.from(assignment, (f) => (f === 0 ? 0 : 1));
    const before = fitOnRows(prepareEvaluationData(LABELS, PREDICTORS, {}, RECIPE), training, 0);
    const after = fitOnRows(prepareEvaluationData(LABELS, moved, {}, RECIPE), training, 0);
    expect(after.recipe!.states).toEqual(before.recipe!.states);
    expect(after.model!.fit.coefficients).toEqual(before.model!.fit.coefficients);
  });

  test("a cross-validation with a recipe scores every row out of fold", () => {
    const r = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, seed: 2, recipe: RECIPE, outOfFold: true });
    expect(r.unscored.count).toBe(0);
    expect(Array.from(r.outOfFold!.probabilities[1]).every(Number.isFinite)).toBe(true);
  });
});

describe("failures and bounds", () => {
  /** x separates the classes completely: no fold has maximum-likelihood estimates without a penalty. */
  const sepLabels: CellValue[][] = [["y"], ...Array.from({ length: 20 }, (_, i) => [i < 10 ? 0 : 1])];
  const sepPredictors: CellValue[][] = [["x"], ...Array.from({ length: 20 }, (_, i) => [i])];

  test("a fold without a usable fit fails a single-penalty cross-validation, naming the fold and the reason", () => {
    const e = expectProblem(() => crossValidate({ labels: sepLabels, predictors: sepPredictors, folds: 4 }), "CV_FOLD_FAILED");
    expect(e.message).toMatch(/^Fold 1 of 4 gave no usable fit: The classes are (perfectly|separated)/);
  });

  test("in a path, penalties without a usable fit are left out of the choice with a note", () => {
    const r = crossValidate({ labels: sepLabels, predictors: sepPredictors, folds: 4, penalties: [0, 1, 10] });
    expect(r.entries[0].failure).not.toBeNull();
    expect(Number.isNaN(r.entries[0].scores.logLoss.mean)).toBe(true);
    expect(r.lowest).toBeGreaterThan(0);
    expect(r.oneSe).toBeGreaterThan(0);
    expect(r.notes.map((n) => n.code)).toContain("CV_PENALTY_FAILED");
  });

  test("work above the budget is refused before any fold, with the size", () => {
    const e = expectProblem(() => crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, budget: { limit: 1000, where: "cell" } }), "CV_TOO_COSTLY");
    expect(e.message).toContain("4 fits of 32 rows x 4 coefficients");
  });

  test("grouped counts are refused", () => {
    const trials: CellValue[][] = [["n"], ...LABELS.slice(1).map(() => [1])];
    expectProblem(() => crossValidate({ labels: LABELS, predictors: PREDICTORS, options: { trials } }), "CV_GROUPED_COUNTS");
  });

  test("a multi-class label with a class smaller than the folds is refused", () => {
    const labels: CellValue[][] = [["c"], ...LABELS.slice(1).map((_, i) => [i < 3 ? "rare" : i % 2 ? "a" : "b"])];
    expectProblem(() => crossValidate({ labels, predictors: PREDICTORS, folds: 5 }), "CV_CLASS_TOO_SMALL");
  });
});

describe("penalty path", () => {
  const req: CrossValidationRequest = { labels: LABELS, predictors: PREDICTORS, folds: 4, seed: 3, penalties: [0.01, 0.1, 1, 10, 100] };

  test("every penalty uses the same folds, and a cross-validation at the chosen penalty reproduces its path value", () => {
    const path = crossValidate(req);
    for (const at of [path.lowest, path.oneSe]) {
      const alone = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, seed: 3, options: { penalty: path.entries[at].penalty } });
      expect(Array.from(alone.assignment)).toEqual(Array.from(path.assignment));
      expect(alone.entries[0].scores.logLoss.mean).toBe(path.entries[at].scores.logLoss.mean);
      expect(alone.entries[0].scores.logLoss.standardError).toBe(path.entries[at].scores.logLoss.standardError);
    }
  });

  test("the lowest mean and the one-SE choice follow their definitions", () => {
    const path = crossValidate(req);
    const means = path.entries.map((e) => e.scores.logLoss.mean);
    expect(means[path.lowest]).toBe(Math.min(...means));
    const bound = means[path.lowest] + path.entries[path.lowest].scores.logLoss.standardError;
    const within = path.entries.filter((e) => e.scores.logLoss.mean <= bound).map((e) => e.penalty);
    expect(path.entries[path.oneSe].penalty).toBe(Math.max(...within));
  });

  test("out-of-fold probabilities at the chosen penalty are those of a cross-validation at that penalty", () => {
    const path = crossValidate({ ...req, outOfFold: true });
    const at = path.entries[path.oneSe].penalty;
    expect(path.outOfFold!.penalty).toBe(at);
    const alone = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, seed: 3, options: { penalty: at }, outOfFold: true });
    expect(Array.from(path.outOfFold!.probabilities[1])).toEqual(Array.from(alone.outOfFold!.probabilities[1]));
  });

  test("the steps report every fit: 1 (the fit on all rows) + folds x penalties (+ folds to refit the chosen penalty)", () => {
    const steps = crossValidationSteps({ ...req, outOfFold: true });
    const seen: number[] = [];
    let s = steps.next();
    while (!s.done) {
      seen.push(s.value.done);
      expect(s.value.total).toBe(1 + 4 * 5 + 4);
      s = steps.next();
    }
    expect(seen).toEqual(Array.from({ length: 25 }, (_, i) => i + 1));
  });
});

describe("scores", () => {
  test("accuracy uses the spec's threshold; in-sample scores come from the fit on all rows", () => {
    const low = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, options: { threshold: 0.05 } });
    const usual = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4 });
    expect(low.entries[0].scores.accuracy.mean).not.toBe(usual.entries[0].scores.accuracy.mean);
    expect(low.entries[0].scores.logLoss.mean).toBe(usual.entries[0].scores.logLoss.mean);
    // statsmodels' Logit on the Spector data: log-likelihood -12.889633 over 32 rows (spector.json).
    expect(usual.inSample!.logLoss).toBeCloseTo(12.889633 / 32, 6);
    expect(usual.inSample!.logLoss).toBeLessThan(usual.entries[0].scores.logLoss.mean);
  });
});
