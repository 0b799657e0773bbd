/**
 * ROC AUC, DeLong variance and interval, and ROC points against pROC 1.18.0 on its aSAH data
 * (fixture test/fixtures/metrics/roc-asah.json, written by roc-asah.R next to it).
 * Published source: pROC's help page "coords_transpose" (installed with Debian r-cran-proc 1.18.0)
 * prints sensitivity and specificity of the s100b curve at thresholds 0.05, 0.2 and 0.5.
 */
import fixture from "../../../fixtures/metrics/roc-asah.json";
import { rocAuc, rocCurve } from "../../../../src/engine/metrics";
import { expectClose, f64 } from "./close";

/** The JSON carries 15 significant digits; the placements are sums of 41 x 72 fractions. */
const JSON_DIGITS_REL_TOL = 1e-12;
/** Interval ends also go through the normal quantile (ours vs R's qnorm, both near machine precision). */
const INTERVAL_REL_TOL = 1e-10;
/** Values printed in pROC's help page with 7 significant digits. */
const PRINTED_7_DIGITS = 1e-7;

const labels = f64(fixture.label);
const markerValues: Record<string, number[]> = { s100b: fixture.s100b, ndka: fixture.ndka };

test.each([
  [0.05, 0.97560976, 0.06944444],
  [0.2, 0.6341463, 0.8055556],
  [0.5, 0.2926829, 0.9722222],
])("s100b at threshold %s: sensitivity %s and specificity %s as printed in pROC's help page coords_transpose", (t, sens, spec) => {
  // pROC counts a case as positive when s100b >= t; our point for t is the one at the smallest score >= t
  const c = rocCurve(labels, f64(fixture.s100b));
  let i = 0;
  while (i + 1 < c.thresholds.length && c.thresholds[i + 1] >= t) i++;
  expectClose(c.truePositiveRate[i], sens, PRINTED_7_DIGITS, "sensitivity");
  expectClose(1 - c.falsePositiveRate[i], spec, PRINTED_7_DIGITS, "specificity");
});

describe.each(fixture.markers.map((m) => [m.marker, m] as const))("aSAH marker %s", (name, ref) => {
  const scores = f64(markerValues[name]);

  test("AUC and DeLong variance equal pROC's auc() and var(method = 'delong')", () => {
    const r = rocAuc(labels, scores);
    expectClose(r.auc, ref.auc, JSON_DIGITS_REL_TOL, "AUC");
    expectClose(r.variance, ref.variance, JSON_DIGITS_REL_TOL, "variance");
    expect(r.standardError).toBeCloseTo(Math.sqrt(ref.variance), 14);
    expect([r.positiveWeight, r.negativeWeight]).toEqual([41, 72]);
  });

  test("95% and 90% DeLong intervals equal pROC's ci.auc(method = 'delong')", () => {
    const r95 = rocAuc(labels, scores, { level: 0.95 });
    expectClose(r95.lower, ref.ci95[0], INTERVAL_REL_TOL, "95% lower");
    expectClose(r95.upper, ref.ci95[1], INTERVAL_REL_TOL, "95% upper");
    const r90 = rocAuc(labels, scores, { level: 0.9 });
    expectClose(r90.lower, ref.ci90[0], INTERVAL_REL_TOL, "90% lower");
    expectClose(r90.upper, ref.ci90[1], INTERVAL_REL_TOL, "90% upper");
  });

  test("ROC points (sensitivity, 1 - specificity) are pROC's coords(x = 'all') in reverse order", () => {
    // pROC lists points from threshold -Inf (all positive) up to +Inf; its thresholds are midpoints
    // between adjacent distinct values, ours are the values themselves (rule score >= threshold), so
    // only the operating points are compared.
    const c = rocCurve(labels, scores);
    const n = ref.coords.sensitivity.length;
    expect(c.truePositiveRate.length).toBe(n);
    for (let i = 0; i < n; i++) {
      expectClose(c.truePositiveRate[i], ref.coords.sensitivity[n - 1 - i], JSON_DIGITS_REL_TOL, `TPR[${i}]`);
      expectClose(c.falsePositiveRate[i], 1 - ref.coords.specificity[n - 1 - i], JSON_DIGITS_REL_TOL, `FPR[${i}]`);
    }
    // each of our thresholds lies between pROC's neighbouring midpoint thresholds
    for (let i = 1; i < n; i++) {
      const hi = ref.coords.threshold[n - i] as number | string;
      const lo = ref.coords.threshold[n - 1 - i] as number | string;
      if (typeof hi === "number") expect(c.thresholds[i]).toBeLessThan(hi);
      if (typeof lo === "number") expect(c.thresholds[i]).toBeGreaterThan(lo);
    }
  });

  test("the trapezoid area under the ROC points equals the mid-rank AUC", () => {
    const c = rocCurve(labels, scores);
    let area = 0;
    for (let i = 1; i < c.thresholds.length; i++) {
      area += 0.5 * (c.falsePositiveRate[i] - c.falsePositiveRate[i - 1]) * (c.truePositiveRate[i] + c.truePositiveRate[i - 1]);
    }
    expectClose(area, ref.auc, JSON_DIGITS_REL_TOL, "trapezoid area");
  });
});
