/**
 * ODDS.FOLDS as the sheet calls it (evaluateCellFunction): the scores table, the penalty path, the
 * aligned out-of-fold and fold outputs (and a round trip through ODDS.LOGLOSS), options and their
 * refusals, and the work bound. Spector & Mazzeo (1980) grades data (test/fixtures/binary/spector.json)
 * and the ANES 1996 extract (as stored in test/fixtures/evaluation/cv-sklearn.json) as real tables.
 */
import { crossValidate } from "../../../src/engine/evaluation/crossValidate";
import { CellFunctionFailure } from "../../../src/functions/cellError";
import { evaluateCellFunction } from "../../../src/functions/registry";
import type { CellValue } from "../../../src/engine/types";
import spector from "../../fixtures/binary/spector.json";
import cv from "../../fixtures/evaluation/cv-sklearn.json";

const LABELS: CellValue[][] = [["GRADE"], ...spector.data.GRADE.map((v) => [v])];
const PREDICTORS: CellValue[][] = [["GPA", "TUCE", "PSI"], ...spector.data.GPA.map((g, i) => [g, spector.data.TUCE[i], spector.data.PSI[i]])];
const N = LABELS.length - 1;

const folds = (options: string, labels = LABELS, predictors = PREDICTORS) => evaluateCellFunction("ODDS.FOLDS", [labels, predictors, [[options]]]);
const row = (out: CellValue[][], first: string) => out.find((r) => r[0] === first) as CellValue[];

function failure(f: () => unknown): CellFunctionFailure {
  try {
    f();
  } catch (e) {
    if (e instanceof CellFunctionFailure) return e;
    throw e;
  }
  throw new Error("expected a cell error");
}

describe("ODDS.FOLDS scores", () => {
  test("mean and SE over the folds, pooled and in-sample values, and the run's facts", () => {
    const out = folds("folds=4; seed=9");
    expect(out[0]).toEqual(["score", "mean over 4 folds", "SE", "pooled out-of-fold", "in-sample (all rows)"]);
    const engine = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, seed: 9 });
    const e = engine.entries[0];
    expect(row(out, "log-loss")).toEqual(["log-loss", e.scores.logLoss.mean, e.scores.logLoss.standardError, e.pooled!.logLoss, engine.inSample!.logLoss]);
    expect(row(out, "AUC")[1]).toBe(e.scores.auc.mean);
    expect(row(out, "accuracy (threshold 0.5)")[1]).toBe(e.scores.accuracy.mean);
    expect(row(out, "folds")[1]).toBe(4);
    expect(row(out, "seed")[1]).toBe(9);
    expect(row(out, "rows in the folds")[1]).toBe(N);
    expect(row(out, "rows per fold")[1]).toBe(8);
    expect(out[out.length - 1][0]).toMatch(/statistical associations, not causes/);
  });

  test("recalculating gives the same cells", () => {
    expect(folds("folds=5; seed=3")).toEqual(folds("folds=5; seed=3"));
  });
});

describe("ODDS.FOLDS penalty path", () => {
  test("one row per penalty with the lowest and one-SE choices marked", () => {
    const out = folds("folds=4; penalties=0.01 to 100; steps=5");
    expect(out[0]).toEqual(["penalty", "mean log-loss", "SE", "mean Brier score", "mean AUC", "mean accuracy", "choice"]);
    expect(out.slice(1, 6).map((r) => r[0])).toEqual([0.01, 0.1, 1, 10, 100]);
    const marks = out.slice(1, 6).map((r) => r[6]);
    expect(marks.filter((m) => String(m).includes("lowest"))).toHaveLength(1);
    expect(marks.filter((m) => String(m).includes("one-SE"))).toHaveLength(1);
    const means = out.slice(1, 6).map((r) => r[1] as number);
    expect(marks[means.indexOf(Math.min(...means))]).toContain("lowest");
  });

  test("a list of penalties, and the scores at the picked penalty", () => {
    const path = folds("folds=4; penalties=10 0.1 1");
    expect(path.slice(1, 4).map((r) => r[0])).toEqual([0.1, 1, 10]);
    const lowestRow = path.slice(1, 4).find((r) => String(r[6]).includes("lowest"))!;
    const scores = folds("folds=4; penalties=10 0.1 1; show=scores; pick=lowest");
    expect(row(scores, "log-loss")[1]).toBe(lowestRow[1]);
    expect(String(row(scores, "penalty")[1])).toBe(`${lowestRow[0]} (lowest mean log-loss of 3 penalties)`);
    // A single penalty at the lowest reproduces its path value.
    expect(row(folds(`folds=4; penalty=${lowestRow[0]}`), "log-loss")[1]).toBe(lowestRow[1]);
  });
});

describe("ODDS.FOLDS aligned outputs", () => {
  test("out-of-fold probabilities line up with the input rows and feed ODDS.LOGLOSS", () => {
    const labels = LABELS.map((r) => r.slice());
    labels[6] = [null];
    const out = folds("folds=4; show=out-of-fold", labels);
    expect(out).toHaveLength(N + 1);
    expect(out[0]).toEqual(["out-of-fold P(1)"]);
    expect(out[6]).toEqual([""]);
    const scores = folds("folds=4", labels);
    const kept = labels.filter((_, r) => r !== 6);
    const probs = out.filter((_, r) => r !== 6);
    const ll = evaluateCellFunction("ODDS.LOGLOSS", [kept, probs, null]);
    const value = ll.flat().find((v) => typeof v === "number") as number;
    expect(value).toBeCloseTo(row(scores, "log-loss")[3] as number, 12);
  });

  test("each row's fold, 1 to k, blank outside the folds; without a header row no header is spilled", () => {
    const out = folds("folds=4; seed=2; show=folds; headers=no", LABELS.slice(1), PREDICTORS.slice(1));
    expect(out).toHaveLength(N);
    const values = out.map((r) => r[0] as number);
    expect(new Set(values)).toEqual(new Set([1, 2, 3, 4]));
    for (const f of [1, 2, 3, 4]) expect(values.filter((v) => v === f)).toHaveLength(8);
  });

  test("several classes: one out-of-fold column per class, each row summing to 1", () => {
    const anes = (cv.cases as unknown as { name: string; columns: string[]; data: Record<string, number[]>; labels: number[] }[]).find((c) => c.name === "anes96-plain")!;
    const cols = anes.columns;
    const labels: CellValue[][] = [["PID"], ...anes.labels.map((v) => [v])];
    const predictors: CellValue[][] = [cols, ...anes.labels.map((_, i) => cols.map((c) => anes.data[c][i]))];
    const out = folds("folds=3; show=out-of-fold", labels, predictors);
    expect(out[0]).toEqual(["0", "1", "2", "3", "4", "5", "6"].map((c) => `out-of-fold P(${c})`));
    for (const r of out.slice(1, 20)) expect((r as number[]).reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
  });
});

describe("ODDS.FOLDS options and refusals", () => {
  test("recipe items are built inside the folds", () => {
    const out = folds("folds=4; recipe=GPA: ns(3); recipe=TUCE: z; recipe=PSI: raw");
    const engine = crossValidate({ labels: LABELS, predictors: PREDICTORS, folds: 4, recipe: "GPA: ns(3); TUCE: z; PSI: raw" });
    expect(row(out, "log-loss")[1]).toBe(engine.entries[0].scores.logLoss.mean);
  });

  test("contradicting or malformed options say what is valid", () => {
    expect(failure(() => folds("penalty=1; penalties=0.1 to 10")).message).toMatch(/either one penalty or a list/);
    expect(failure(() => folds("steps=5")).message).toMatch(/steps goes with a range of penalties/);
    expect(failure(() => folds("penalties=cheap")).message).toMatch(/penalties=0.01 to 100/);
    expect(failure(() => folds("folds=1")).message).toMatch(/folds/);
    expect(failure(() => folds("level=0.9")).message).toMatch(/unknown|not an option|valid/i);
    expect(failure(() => folds("folds=20")).message).toMatch(/has 11 rows/);
  });

  test("a cross-validation too large for a cell is refused with its size before the folds", () => {
    const rows = 2000;
    const width = 40;
    const labels: CellValue[][] = [["y"], ...Array.from({ length: rows }, (_, i) => [(i * 7919) % 3 === 0 ? 1 : 0])];
    const predictors: CellValue[][] = [Array.from({ length: width }, (_, j) => `x${j}`), ...Array.from({ length: rows }, (_, i) => Array.from({ length: width }, (_, j) => ((i * 31 + j * 17) % 97) / 97))];
    const e = failure(() => folds("folds=20; penalties=0.001 to 1000; steps=50", labels, predictors));
    expect(e.code).toBe("CV_TOO_COSTLY");
    expect(e.message).toContain("1,000 fits of 2,000 rows x 41 coefficients");
  });
});
