/**
 * Stratified k-fold assignment fixed by a seed: which fold each data row is held out in.
 *
 * Policy (one line each):
 * - Rows outside the folds (class -1: no label, or a value the fit skips) get fold -1.
 * - Stratified: the rows of each class are shuffled (Fisher-Yates with the seeded generator of
 *   basis/prng.ts) and dealt to the folds in turn, the deal continuing from class to class, so each
 *   fold holds its share of every class and the fold sizes differ by at most one row.
 * - Row order: the shuffle permutes each class's rows in the order of the data rows, so the same
 *   cells and seed give the same folds on every recalculation and machine, while sorting or
 *   otherwise reordering the rows (or inserting one) gives other folds.
 * - Every class needs at least as many rows as there are folds, so that every fold holds each class
 *   (and every fold's training rows too); otherwise CV_CLASS_TOO_SMALL says how many folds fit.
 */
import { seededUniform } from "../basis/prng";
import { problem } from "../messages";

/** Fewest and most folds accepted. */
export const MIN_FOLDS = 2;
export const MAX_FOLDS = 20;

/** Rows of each class in data-row order (classOfRow -1 rows are left out). */
function rowsByClass(classOfRow: Int32Array, classCount: number): number[][] {
  const byClass: number[][] = Array.from({ length: classCount }, () => []);
  for (let i = 0; i < classOfRow.length; i++) {
    const c = classOfRow[i];
    if (c >= 0) byClass[c].push(i);
  }
  return byClass;
}

/** Fisher-Yates shuffle in place with a seeded generator (Knuth, TAOCP vol. 2, 3.4.2, algorithm P). */
function shuffle(rows: number[], uniform: () => number): void {
  for (let i = rows.length - 1; i > 0; i--) {
    const j = Math.floor(uniform() * (i + 1));
    const t = rows[i];
    rows[i] = rows[j];
    rows[j] = t;
  }
}

/**
 * The rows of each class, shuffled by the seeded generator (one generator for all classes, in class
 * order), for the stratified fold deal and the stratified held-out split.
 * @param classOfRow class index per data row, -1 for a row left out
 * @example shuffledByClass(Int32Array.from([0, 1, 0, 1]), 2, 7) // e.g. [[2, 0], [1, 3]]
 */
export function shuffledByClass(classOfRow: Int32Array, classCount: number, seed: number): number[][] {
  const uniform = seededUniform(seed);
  const byClass = rowsByClass(classOfRow, classCount);
  for (const rows of byClass) shuffle(rows, uniform);
  return byClass;
}

/**
 * Assign data rows to `folds` stratified folds, fixed by `seed` (see the policy above).
 *
 * Method: stratified k-fold cross-validation (Kohavi 1995, "A study of cross-validation and bootstrap
 * for accuracy estimation and model selection", IJCAI, section 3: stratified folds lower the
 * variance of the estimate); the per-class shuffle-and-deal is common practice.
 *
 * @param classOfRow class index per data row (0-based), -1 for rows outside the folds
 * @param classNames names of the classes, for the message
 * @param folds number of folds (MIN_FOLDS..MAX_FOLDS, whole)
 * @param seed any whole number; the same seed and rows give the same folds
 * @returns fold per data row (0-based), -1 outside the folds
 * @throws OddsmithError BAD_OPTION_VALUE (folds), CV_CLASS_TOO_SMALL
 * @example stratifiedFolds(Int32Array.from([0, 0, 1, 1, -1]), ["no", "yes"], 2, 1) // e.g. [1, 0, 0, 1, -1]
 */
export function stratifiedFolds(classOfRow: Int32Array, classNames: readonly string[], folds: number, seed: number): Int32Array {
  if (!(Number.isInteger(folds) && folds >= MIN_FOLDS && folds <= MAX_FOLDS)) {
    throw problem("BAD_OPTION_VALUE", { name: "folds", value: folds, expected: `Enter a whole number from ${MIN_FOLDS} to ${MAX_FOLDS}.` });
  }
  if (!Number.isInteger(seed)) throw problem("BAD_OPTION_VALUE", { name: "seed", value: seed, expected: "Enter a whole number." });
  const byClass = shuffledByClass(classOfRow, classNames.length, seed);
  byClass.forEach((rows, c) => {
    if (rows.length < folds) throw problem("CV_CLASS_TOO_SMALL", { label: classNames[c], count: rows.length, folds });
  });
  const fold = new Int32Array(classOfRow.length).fill(-1);
  // The deal continues from class to class, so the fold sizes differ by at most one row.
  let next = 0;
  for (const rows of byClass) {
    for (const i of rows) {
      fold[i] = next;
      next = (next + 1) % folds;
    }
  }
  return fold;
}

/**
 * Check a fold assignment given by the caller (for instance folds made by other software, to compare
 * results on the same folds): folds numbered 0..k-1 (-1 = row left out) for rows in the folds only,
 * every fold non-empty, and every fold's training rows holding every class.
 * @returns the number of folds k
 * @throws OddsmithError CV_BAD_ASSIGNMENT
 */
export function checkFoldAssignment(assignment: Int32Array, classOfRow: Int32Array, classNames: readonly string[]): number {
  if (assignment.length !== classOfRow.length) throw problem("CV_BAD_ASSIGNMENT", { detail: `${assignment.length} entries for ${classOfRow.length} data rows` });
  let k = 0;
  for (let i = 0; i < assignment.length; i++) {
    const f = assignment[i];
    if (f >= 0 && classOfRow[i] < 0) throw problem("CV_BAD_ASSIGNMENT", { detail: `data row ${i + 1} is given a fold but cannot enter the fit` });
    if (f < -1) throw problem("CV_BAD_ASSIGNMENT", { detail: `data row ${i + 1} has fold ${f}` });
    k = Math.max(k, f + 1);
  }
  if (k < MIN_FOLDS || k > MAX_FOLDS) throw problem("CV_BAD_ASSIGNMENT", { detail: `${k} folds (use ${MIN_FOLDS} to ${MAX_FOLDS})` });
  const perFold = Array.from({ length: k }, () => new Array<number>(classNames.length).fill(0));
  const total = new Array<number>(classNames.length).fill(0);
  for (let i = 0; i < assignment.length; i++) {
    if (assignment[i] < 0) continue;
    perFold[assignment[i]][classOfRow[i]]++;
    total[classOfRow[i]]++;
  }
  perFold.forEach((counts, f) => {
    if (counts.every((c) => c === 0)) throw problem("CV_BAD_ASSIGNMENT", { detail: `fold ${f + 1} holds no row` });
    counts.forEach((c, j) => {
      if (total[j] - c === 0) throw problem("CV_BAD_ASSIGNMENT", { detail: `the training rows of fold ${f + 1} hold no row of class "${classNames[j]}"` });
    });
  });
  return k;
}
