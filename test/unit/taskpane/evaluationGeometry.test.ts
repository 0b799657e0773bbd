/**
 * The evaluation charts' numbers: ROC points of a small hand-checked example placed in pixels, the
 * operating point of a threshold agreeing with the confusion counts, calibration points, the
 * cross-validation path's marks and its log axis, and the thinning of long curves.
 */
import { confusionCounts } from "../../../src/engine/metrics/confusionCounts";
import { rocAuc } from "../../../src/engine/metrics/rocAuc";
import { rocCurve } from "../../../src/engine/metrics/rocCurve";
import {
  buildCalibrationChart,
  buildPathChart,
  buildRocChart,
  EVAL_FRAME,
  logTicks,
  operatingPointIndex,
  steppedThreshold,
  thresholdNearPixel,
  thinPolyline,
  tickLabel,
} from "../../../src/taskpane/evaluationGeometry";

/**
 * The example of scikit-learn's roc_curve documentation (y = 0, 0, 1, 1; scores 0.1, 0.4, 0.35,
 * 0.8): fpr 0, 0, 0.5, 0.5, 1; tpr 0, 0.5, 0.5, 1, 1; thresholds inf, 0.8, 0.4, 0.35, 0.1; AUC 0.75.
 */
const LABELS = new Float64Array([0, 0, 1, 1]);
const SCORES = new Float64Array([0.1, 0.4, 0.35, 0.8]);

/** Inner box of EVAL_FRAME: x from 48 to 286 (238 px), y from 194 (value 0) up to 10 (value 1, 184 px). */
const X0 = 48;
const XW = 238;
const Y0 = 194;
const YH = 184;

describe("ROC chart", () => {
  const curve = rocCurve(LABELS, SCORES);
  const auc = rocAuc(LABELS, SCORES);

  test("the hand-checked example's points, placed in the frame", () => {
    expect(EVAL_FRAME.width - EVAL_FRAME.margin.right - EVAL_FRAME.margin.left).toBe(XW);
    expect(EVAL_FRAME.height - EVAL_FRAME.margin.bottom - EVAL_FRAME.margin.top).toBe(YH);
    const chart = buildRocChart(curve, auc, 0.5);
    const fpr = [0, 0, 0.5, 0.5, 1];
    const tpr = [0, 0.5, 0.5, 1, 1];
    const expected = fpr.map((f, i) => `${i === 0 ? "M" : "L"}${(X0 + f * XW).toFixed(2)},${(Y0 - tpr[i] * YH).toFixed(2)}`).join("");
    expect(chart.curve).toBe(expected);
    expect(chart.curve).toBe("M48.00,194.00L48.00,102.00L167.00,102.00L167.00,10.00L286.00,10.00");
    expect(chart.chance).toBe("M48.00,194.00L286.00,10.00");
    expect(chart.auc.auc).toBe(0.75);
    expect(chart.axes.xTicks.map((t) => t.label)).toEqual(["0", "0.2", "0.4", "0.6", "0.8", "1"]);
  });

  test.each([0.9, 0.8, 0.5, 0.4, 0.36, 0.35, 0.2, 0.05])("the marker at threshold %p is the operating point of the confusion counts", (t) => {
    const chart = buildRocChart(curve, auc, t);
    const c = confusionCounts(LABELS, SCORES, { threshold: t });
    expect(chart.marker.truePositiveRate).toBe(c.sensitivity);
    expect(chart.marker.falsePositiveRate).toBe(1 - c.specificity);
    expect(chart.marker.x).toBeCloseTo(X0 + (1 - c.specificity) * XW, 9);
  });

  test("operating points by hand: 0.5 -> after 0.8; 0.4 -> after 0.4; 0.35 -> after 0.35", () => {
    expect(operatingPointIndex(curve, 0.5)).toBe(1);
    expect(operatingPointIndex(curve, 0.4)).toBe(2);
    expect(operatingPointIndex(curve, 0.35)).toBe(3);
    expect(operatingPointIndex(curve, 0.95)).toBe(0);
  });
});

describe("clicking the ROC curve", () => {
  const curve = rocCurve(LABELS, SCORES);
  test("a click picks the nearest point's threshold as the shortest decimal with the same operating point", () => {
    // Near (0.5, 1) = after 0.35: any t in (0.1, 0.35] flags the same rows; 0.3 is the shortest such decimal.
    expect(thresholdNearPixel(curve, X0 + 0.5 * XW + 3, Y0 - YH + 2)).toBe(0.3);
    // Near (0, 0.5) = after 0.8: (0.4, 0.8] -> 0.8; near (0.5, 0.5) = after 0.4: (0.35, 0.4] -> 0.4.
    expect(thresholdNearPixel(curve, X0 + 1, Y0 - 0.5 * YH)).toBe(0.8);
    expect(thresholdNearPixel(curve, X0 + 0.5 * XW, Y0 - 0.5 * YH - 1)).toBe(0.4);
    // The start (threshold +Infinity) is never chosen: a click at (0, 0) takes the nearest real point.
    expect(thresholdNearPixel(curve, X0, Y0)).toBe(0.8);
    for (const [x, y] of [[X0 + 0.5 * XW + 3, Y0 - YH + 2], [X0 + 0.5 * XW, Y0 - 0.5 * YH - 1]]) {
      const t = thresholdNearPixel(curve, x, y)!;
      const k = operatingPointIndex(curve, t);
      expect(Math.hypot(X0 + curve.falsePositiveRate[k] * XW - x, Y0 - curve.truePositiveRate[k] * YH - y)).toBeLessThan(4);
    }
  });
});

describe("stepping along the ROC curve (arrow keys)", () => {
  const curve = rocCurve(LABELS, SCORES);
  test("each step goes to the neighbouring operating point, as its shortest threshold; the ends stop", () => {
    // Points after 0.8, 0.4, 0.35, 0.1 (shortest thresholds 0.8, 0.4, 0.3, 0.1).
    expect(steppedThreshold(curve, 0.8, 1)).toBe(0.4);
    expect(steppedThreshold(curve, 0.4, 1)).toBe(0.3);
    expect(steppedThreshold(curve, 0.3, 1)).toBe(0.1);
    expect(steppedThreshold(curve, 0.1, 1)).toBeNull();
    expect(steppedThreshold(curve, 0.3, -1)).toBe(0.4);
    expect(steppedThreshold(curve, 0.8, -1)).toBeNull();
    // From a threshold between points (0.5 gives the point after 0.8): one step down is 0.4.
    expect(steppedThreshold(curve, 0.5, 1)).toBe(0.4);
  });
});

describe("thinning long curves", () => {
  test("points that move the line by less than half a pixel are left out; ends stay", () => {
    const xs = [0, 0.1, 0.2, 0.7, 0.75, 1.4, 2];
    const ys = [0, 0, 0.3, 0.3, 0.3, 0.3, 2];
    expect(thinPolyline(xs, ys)).toEqual([
      [0, 0],
      [0.7, 0.3],
      [1.4, 0.3],
      [2, 2],
    ]);
  });

  test("a 100,000-point curve is drawn with at most a few points per pixel column", () => {
    const n = 100_000;
    const labels = Float64Array.from({ length: n }, (_, i) => (i % 3 === 0 ? 1 : 0));
    // Scores rise with a wobble: a realistic curve with every score distinct.
    const scores = Float64Array.from({ length: n }, (_, i) => (i / n + (i % 3 === 0 ? 0.15 : 0) + ((i * 7919) % 1000) / 1e7) / 1.2);
    const chart = buildRocChart(rocCurve(labels, scores), rocAuc(labels, scores), 0.5);
    expect(chart.pointCount).toBe(n + 1);
    const drawn = chart.curve.split("L").length;
    expect(drawn).toBeLessThan(2 * (XW + YH) + 2);
    expect(chart.curve.startsWith("M48.00,194.00")).toBe(true);
    expect(chart.curve.endsWith("L286.00,10.00")).toBe(true);
  });
});

describe("calibration chart", () => {
  test("one point per group at (mean predicted, observed share), sized by rows", () => {
    const chart = buildCalibrationChart([
      { meanPredicted: 0.25, observedRate: 0.5, rows: 4 },
      { meanPredicted: 0.75, observedRate: 1, rows: 1 },
    ]);
    expect(chart.points.map((p) => [p.x, p.y])).toEqual([
      [X0 + 0.25 * XW, Y0 - 0.5 * YH],
      [X0 + 0.75 * XW, Y0 - YH],
    ]);
    expect(chart.points[0].r).toBe(6);
    expect(chart.points[1].r).toBe(2.5 + 3.5 * 0.5);
    expect(chart.ideal).toBe("M48.00,194.00L286.00,10.00");
  });
});

describe("cross-validation path chart", () => {
  const entries = [
    { penalty: 0, mean: 0.7, standardError: 0.05 },
    { penalty: 0.01, mean: 0.6, standardError: 0.02 },
    { penalty: 0.1, mean: 0.55, standardError: 0.02 },
    { penalty: 1, mean: 0.56, standardError: 0.03 },
    { penalty: 10, mean: 0.65, standardError: 0.02 },
  ];

  test("penalties on a log axis, evenly spaced by decade; the marks follow the entries; penalty 0 left out", () => {
    const chart = buildPathChart(entries, 2, 3);
    expect(chart.leftOut).toBe(1);
    expect(chart.points.map((p) => p.penalty)).toEqual([0.01, 0.1, 1, 10]);
    const gaps = chart.points.slice(1).map((p, i) => p.x - chart.points[i].x);
    for (const g of gaps) expect(g).toBeCloseTo(gaps[0], 9);
    // 3 decades over the inner width less a 4% pad on each side.
    expect(gaps[0]).toBeCloseTo(XW / (3 * 1.08), 9);
    expect(chart.points[chart.best].penalty).toBe(0.1);
    expect(chart.points[chart.oneSe].penalty).toBe(1);
    expect(chart.oneSeLevel.value).toBeCloseTo(0.57, 12);
    // SE bars: one SE each way, higher log-loss drawn higher (smaller y).
    const p = chart.points[1];
    expect(p.yHigh).toBeLessThan(p.y);
    expect(p.yLow - p.y).toBeCloseTo(p.y - p.yHigh, 9);
    expect(chart.axes.xTicks.map((t) => t.label)).toEqual(["0.01", "0.1", "1", "10"]);
    expect(chart.axes.xTitle).toBe("Penalty (log scale)");
    expect(chart.axes.yTitle).toBe("Out-of-fold log-loss");
  });
});

describe("axis ticks", () => {
  test("log ticks: powers of ten over several decades, every other one over more than six, 1-2-5 inside one", () => {
    const id = (v: number) => v;
    expect(logTicks(0.001, 100, id).map((t) => t.label)).toEqual(["0.001", "0.01", "0.1", "1", "10", "100"]);
    expect(logTicks(1e-4, 1e4, id).map((t) => t.label)).toEqual(["1e-4", "0.01", "1", "100", "10000"]);
    expect(logTicks(0.15, 0.9, id).map((t) => t.value)).toEqual([0.2, 0.5]);
  });

  test("tick labels: four significant digits, exponent only for very small or large values", () => {
    expect(tickLabel(0.30000000000000004)).toBe("0.3");
    expect(tickLabel(123456)).toBe("1e5");
    expect(tickLabel(0.0001)).toBe("1e-4");
    expect(tickLabel(0)).toBe("0");
  });
});
