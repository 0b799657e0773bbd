/**
 * A million rows: the sort-based metrics give exact results at scale. Measured on the 2-core development machine
 * (idle): rocAuc about 0.25 s, rocCurve 0.24 s, calibrationTable / hosmerLemeshow 0.22 s.
 */
import { calibrationTable, rocAuc, rocCurve } from "../../../../src/engine/metrics";
import { expectClose } from "./close";

/**
 * Jest's per-test timeout: a hang guard only (an accidental O(n^2) pass would take hours at this size).
 * Speed itself is measured by the benchmark (bench/), not asserted here.
 */
const TEST_TIMEOUT_MS = 90000;
/** Sums of a million weights in a different order. */
const LARGE_SUM_REL_TOL = 1e-10;

const n = 1_000_000;
const labels = new Float64Array(n);
const scores = new Float64Array(n);
let seed = 20261201;
const rand = (): number => {
  seed = (seed * 1103515245 + 12345) % 2147483648;
  return seed / 2147483648;
};
for (let i = 0; i < n; i++) {
  const x = rand() * 6 - 3;
  const p = 1 / (1 + Math.exp(-x));
  labels[i] = rand() < p ? 1 : 0;
  scores[i] = Math.round(p * 1e4) / 1e4; // 4 decimals: about 10,000 distinct values, heavy ties
}

/** Independent check: sort each class's scores, then count pairs by merging (Mann-Whitney). */
function mannWhitneyAuc(y: Float64Array, s: Float64Array): number {
  const pos = Float64Array.from(s.filter((_, i) => y[i] === 1)).sort();
  const neg = Float64Array.from(s.filter((_, i) => y[i] === 0)).sort();
  let below = 0;
  let tied = 0;
  let j = 0;
  let sum = 0;
  for (let i = 0; i < pos.length; i++) {
    if (i > 0 && pos[i] === pos[i - 1]) {
      sum += below + 0.5 * tied;
      continue;
    }
    while (j < neg.length && neg[j] < pos[i]) j++;
    below = j;
    let k = j;
    while (k < neg.length && neg[k] === pos[i]) k++;
    tied = k - j;
    sum += below + 0.5 * tied;
  }
  return sum / pos.length / neg.length;
}

test("ROC AUC of 1,000,000 tied rows matches an independent Mann-Whitney count", () => {
  const r = rocAuc(labels, scores);
  expectClose(r.auc, mannWhitneyAuc(labels, scores), LARGE_SUM_REL_TOL, "AUC");
  expect(r.variance).toBeGreaterThan(0);
}, TEST_TIMEOUT_MS);

test("the ROC curve and the calibration table of 1,000,000 rows are complete", () => {
  const c = rocCurve(labels, scores);
  const table = calibrationTable(labels, scores);
  expect(c.truePositiveRate[c.truePositiveRate.length - 1]).toBe(1);
  expect(table.groups.reduce((a, g) => a + g.rows, 0)).toBe(n);
}, TEST_TIMEOUT_MS);
