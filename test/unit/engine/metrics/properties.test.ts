/**
 * Properties every correct implementation has, checked on random inputs (fast-check, fixed seed):
 * the AUC depends only on the order of the scores, reversing the order gives 1 - AUC, the AUC is the
 * trapezoid area under the ROC points, and the calibration groups partition the rows.
 */
import fc from "fast-check";
import { calibrationTable, logLoss, rocAuc, rocCurve } from "../../../../src/engine/metrics";
import { expectClose, f64 } from "./close";

/** Sums of at most 40 terms in different orders. */
const REORDERED_SUM_REL_TOL = 1e-12;
const RUNS = { numRuns: 200, seed: 20261201 };

/** Rows with at least one label of each class; scores from a small set so that ties are common. */
const rowsArb = fc
  .array(fc.record({ y: fc.constantFrom(0, 1), s: fc.integer({ min: 0, max: 6 }), w: fc.integer({ min: 0, max: 3 }) }), {
    minLength: 2,
    maxLength: 40,
  })
  .filter((rows) => rows.some((r) => r.y === 1 && r.w > 0) && rows.some((r) => r.y === 0 && r.w > 0));

const columns = (rows: { y: number; s: number; w: number }[]) => ({
  y: f64(rows.map((r) => r.y)),
  s: f64(rows.map((r) => r.s / 6)),
  w: f64(rows.map((r) => r.w)),
});

test("the AUC and its DeLong variance are unchanged by a strictly increasing transform of the scores", () => {
  fc.assert(
    fc.property(rowsArb, (rows) => {
      const { y, s, w } = columns(rows);
      const a = rocAuc(y, s, { weights: w });
      const b = rocAuc(y, s.map((v) => Math.exp(3 * v) - 7), { weights: w });
      expectClose(b.auc, a.auc, REORDERED_SUM_REL_TOL, "AUC");
      if (Number.isNaN(a.variance)) expect(b.variance).toBeNaN();
      else expectClose(b.variance, a.variance, REORDERED_SUM_REL_TOL, "variance");
    }),
    RUNS,
  );
});

test("reversing the score order turns the AUC into 1 - AUC with the same variance", () => {
  fc.assert(
    fc.property(rowsArb, (rows) => {
      const { y, s, w } = columns(rows);
      const a = rocAuc(y, s, { weights: w });
      const b = rocAuc(y, s.map((v) => -v), { weights: w });
      expectClose(b.auc, 1 - a.auc, REORDERED_SUM_REL_TOL, "1 - AUC");
      if (!Number.isNaN(a.variance)) expectClose(b.variance, a.variance, REORDERED_SUM_REL_TOL, "variance");
    }),
    RUNS,
  );
});

test("the trapezoid area under the weighted ROC points equals the weighted AUC", () => {
  fc.assert(
    fc.property(rowsArb, (rows) => {
      const { y, s, w } = columns(rows);
      const c = rocCurve(y, s, { weights: w });
      let area = 0;
      for (let i = 1; i < c.thresholds.length; i++) {
        area += 0.5 * (c.falsePositiveRate[i] - c.falsePositiveRate[i - 1]) * (c.truePositiveRate[i] + c.truePositiveRate[i - 1]);
      }
      expectClose(area, rocAuc(y, s, { weights: w }).auc, REORDERED_SUM_REL_TOL, "area");
    }),
    RUNS,
  );
});

test("calibration groups partition the weighted rows, in increasing order, with no value split between groups", () => {
  fc.assert(
    fc.property(rowsArb, fc.integer({ min: 2, max: 12 }), (rows, g) => {
      const { y, s, w } = columns(rows);
      const t = calibrationTable(y, s, { weights: w, groups: g });
      expect(t.groups.length).toBeLessThanOrEqual(g);
      const total = w.reduce((a, v) => a + v, 0);
      expectClose(t.groups.reduce((a, grp) => a + grp.weight, 0), total, REORDERED_SUM_REL_TOL, "weights");
      expect(t.groups.reduce((a, grp) => a + grp.rows, 0)).toBe(rows.filter((r) => r.w > 0).length);
      for (let r = 1; r < t.groups.length; r++) expect(t.groups[r].lower).toBeGreaterThan(t.groups[r - 1].upper);
    }),
    RUNS,
  );
});

test("log-loss is never negative and never infinite, whatever the probabilities", () => {
  fc.assert(
    fc.property(
      fc.array(fc.tuple(fc.constantFrom(0, 1), fc.oneof(fc.constantFrom(0, 1), fc.double({ min: 0, max: 1, noNaN: true }))), { minLength: 1, maxLength: 30 }),
      (pairs) => {
        const v = logLoss(f64(pairs.map((p) => p[0])), f64(pairs.map((p) => p[1]))).value;
        expect(v).toBeGreaterThanOrEqual(0);
        // at most the per-row cap -ln(1e-15), up to rounding of the mean
        expect(v).toBeLessThanOrEqual(-Math.log(1e-15) * (1 + 1e-14));
      },
    ),
    RUNS,
  );
});
