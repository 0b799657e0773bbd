/**
 * Stratified fold assignment: balanced per class and overall, fixed by the seed, following the
 * data rows' order (the documented row-order policy), and refusing folds a class cannot fill.
 */
import { checkFoldAssignment, shuffledByClass, stratifiedFolds } from "../../../../src/engine/evaluation/stratifiedFolds";
import { expectProblem } from "../metrics/close";

/** 37 rows: 21 of class 0, 13 of class 1, 3 outside the folds (-1). */
const CLASSES = Int32Array.from(Array.from({ length: 37 }, (_, i) => (i % 12 === 5 ? -1 : i % 3 === 0 ? 1 : 0)));
const NAMES = ["no", "yes"];

function countsPerFold(fold: Int32Array, classes: Int32Array, k: number): number[][] {
  const out = Array.from({ length: k }, () => [0, 0]);
  fold.forEach((f, i) => {
    if (f >= 0) out[f][classes[i]]++;
  });
  return out;
}

describe("stratifiedFolds", () => {
  test("each fold holds its share of every class (within one row), and fold sizes differ by at most one", () => {
    for (const k of [2, 3, 5, 10]) {
      const fold = stratifiedFolds(CLASSES, NAMES, k, 42);
      const counts = countsPerFold(fold, CLASSES, k);
      for (const c of [0, 1]) {
        const per = counts.map((r) => r[c]);
        expect(Math.max(...per) - Math.min(...per)).toBeLessThanOrEqual(1);
      }
      const sizes = counts.map((r) => r[0] + r[1]);
      expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
      expect(sizes.reduce((a, b) => a + b, 0)).toBe(34);
    }
  });

  test("rows outside the folds get fold -1, every other row a fold 0..k-1", () => {
    const fold = stratifiedFolds(CLASSES, NAMES, 4, 1);
    fold.forEach((f, i) => (CLASSES[i] < 0 ? expect(f).toBe(-1) : expect(f >= 0 && f < 4).toBe(true)));
  });

  test("the same rows and seed give the same folds on every call (recalculation)", () => {
    const a = stratifiedFolds(CLASSES, NAMES, 5, 2026);
    const b = stratifiedFolds(Int32Array.from(CLASSES), NAMES, 5, 2026);
    expect(Array.from(b)).toEqual(Array.from(a));
  });

  test("another seed gives other folds", () => {
    const a = stratifiedFolds(CLASSES, NAMES, 5, 1);
    const b = stratifiedFolds(CLASSES, NAMES, 5, 2);
    expect(Array.from(b)).not.toEqual(Array.from(a));
  });

  test("row order policy: the folds follow the data rows' order, so reversing the rows deals other folds to the same rows", () => {
    const reversed = Int32Array.from(CLASSES).reverse();
    const a = stratifiedFolds(CLASSES, NAMES, 5, 7);
    const b = stratifiedFolds(reversed, NAMES, 5, 7);
    const bInOriginalOrder = Array.from(b).reverse();
    expect(bInOriginalOrder).not.toEqual(Array.from(a));
    // Still stratified after the reorder.
    const counts = countsPerFold(b, reversed, 5);
    expect(Math.max(...counts.map((r) => r[1])) - Math.min(...counts.map((r) => r[1]))).toBeLessThanOrEqual(1);
  });

  test("the per-class shuffle is a permutation of each class's rows", () => {
    const byClass = shuffledByClass(CLASSES, 2, 9);
    expect([...byClass[0]].sort((x, y) => x - y)).toEqual(Array.from(CLASSES.keys()).filter((i) => CLASSES[i] === 0));
    expect([...byClass[1]].sort((x, y) => x - y)).toEqual(Array.from(CLASSES.keys()).filter((i) => CLASSES[i] === 1));
  });

  test("a class with fewer rows than folds is refused, naming the class and the folds that fit", () => {
    const e = expectProblem(() => stratifiedFolds(CLASSES, NAMES, 14, 1), "CV_CLASS_TOO_SMALL");
    expect(e.message).toContain('"yes" has 13 rows');
    expect(e.message).toContain("folds=13");
  });

  test("folds outside 2..20 and a seed that is not whole are refused", () => {
    expectProblem(() => stratifiedFolds(CLASSES, NAMES, 1, 1), "BAD_OPTION_VALUE");
    expectProblem(() => stratifiedFolds(CLASSES, NAMES, 21, 1), "BAD_OPTION_VALUE");
    expectProblem(() => stratifiedFolds(CLASSES, NAMES, 2.5, 1), "BAD_OPTION_VALUE");
    expectProblem(() => stratifiedFolds(CLASSES, NAMES, 5, 0.5), "BAD_OPTION_VALUE");
  });
});

describe("checkFoldAssignment (folds given by the caller)", () => {
  const classes = Int32Array.from([0, 1, 0, 1, 0, 1, -1]);
  test("a valid assignment gives its number of folds", () => {
    expect(checkFoldAssignment(Int32Array.from([0, 0, 1, 1, 2, 2, -1]), classes, NAMES)).toBe(3);
  });
  test("a fold for a row that cannot enter the fit, an empty fold, or a fold whose training rows lack a class are refused", () => {
    expectProblem(() => checkFoldAssignment(Int32Array.from([0, 0, 1, 1, 2, 2, 0]), classes, NAMES), "CV_BAD_ASSIGNMENT");
    expectProblem(() => checkFoldAssignment(Int32Array.from([0, 0, 2, 2, 2, 2, -1]), classes, NAMES), "CV_BAD_ASSIGNMENT");
    expectProblem(() => checkFoldAssignment(Int32Array.from([0, 1, 0, 1, 0, 1, -1]), classes, NAMES), "CV_BAD_ASSIGNMENT");
  });
});
