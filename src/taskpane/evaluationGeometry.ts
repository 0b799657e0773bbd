/**
 * The numbers behind the evaluation charts (ROC curve, calibration by groups, cross-validation
 * path), apart from drawing so they can be tested without a browser. Every chart lives in one frame
 * of EVAL_FRAME's size (the SVG scales down to the pane's width); coordinates are SVG pixels, y down.
 *
 * Edge-case policy: a curve with thousands of points is thinned to the points that move the line by
 * at least THIN_PX pixels (the drawn line is the same to the eye; the first and last points stay).
 */
import type { RocAucResult, RocCurve } from "../engine";
import { niceTicks } from "./plotGeometry";

/** Size of every evaluation chart, in SVG pixels (drawn at up to this width, scaled down below it). */
export const EVAL_FRAME = { width: 300, height: 236, margin: { top: 10, right: 14, bottom: 42, left: 48 } } as const;
/** Points closer than this to the last kept point (in both directions) are left out of a drawn line. */
export const THIN_PX = 0.5;

export interface Frame {
  width: number;
  height: number;
  margin: { top: number; right: number; bottom: number; left: number };
}

export interface Tick {
  value: number;
  label: string;
  /** Pixel position along its axis. */
  at: number;
}

/** A chart's box and its axes: inner plot rectangle, ticks and axis titles. */
export interface ChartAxes {
  frame: Frame;
  inner: { left: number; top: number; right: number; bottom: number };
  xTicks: Tick[];
  yTicks: Tick[];
  xTitle: string;
  yTitle: string;
}

/** A linear map from a data interval onto a pixel interval. */
export function linearScale(domain: readonly [number, number], range: readonly [number, number]): (v: number) => number {
  const [d0, d1] = domain;
  const [r0, r1] = range;
  const span = d1 - d0 || 1;
  return (v: number) => r0 + ((v - d0) / span) * (r1 - r0);
}

/** The inner rectangle of a frame. */
export function innerBox(frame: Frame): ChartAxes["inner"] {
  return { left: frame.margin.left, top: frame.margin.top, right: frame.width - frame.margin.right, bottom: frame.height - frame.margin.bottom };
}

/** A tick label: at most 4 significant digits, no trailing zeros, no exponent for ordinary values. */
export function tickLabel(v: number): string {
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(0).replace("e+", "e");
  return String(Number(v.toPrecision(4)));
}

/** Ticks of a linear axis over a domain, placed by `scale`. */
export function linearTicks(domain: readonly [number, number], scale: (v: number) => number, count = 5): Tick[] {
  return niceTicks(domain[0], domain[1], count).map((value) => ({ value, label: tickLabel(value), at: scale(value) }));
}

/**
 * Ticks of a log10 axis over [lo, hi] (lo > 0): powers of ten when the range spans at least one
 * decade (every other power when it spans more than six), else 1-2-5 multiples inside it.
 */
export function logTicks(lo: number, hi: number, scale: (log10: number) => number): Tick[] {
  const a = Math.log10(lo);
  const b = Math.log10(hi);
  const first = Math.ceil(a - 1e-9);
  const last = Math.floor(b + 1e-9);
  const values: number[] = [];
  if (last - first >= 1) {
    const step = last - first > 6 ? 2 : 1;
    for (let k = first; k <= last; k += step) values.push(10 ** k);
  } else {
    for (let k = Math.floor(a); k <= Math.ceil(b); k++) {
      for (const m of [1, 2, 5]) {
        const v = m * 10 ** k;
        if (v >= lo * (1 - 1e-9) && v <= hi * (1 + 1e-9)) values.push(v);
      }
    }
    if (values.length < 2) values.splice(0, values.length, lo, hi);
  }
  return values.map((value) => ({ value, label: tickLabel(Number(value.toPrecision(12))), at: scale(Math.log10(value)) }));
}

/**
 * Keep the points of a polyline that move it by at least `px` pixels from the last kept point in x
 * or y; the first and the last point always stay.
 */
export function thinPolyline(xs: ArrayLike<number>, ys: ArrayLike<number>, px = THIN_PX): [number, number][] {
  const n = xs.length;
  const out: [number, number][] = [];
  for (let i = 0; i < n; i++) {
    const last = out[out.length - 1];
    if (i === 0 || i === n - 1 || Math.abs(xs[i] - last[0]) >= px || Math.abs(ys[i] - last[1]) >= px) out.push([xs[i], ys[i]]);
  }
  return out;
}

/** An SVG path through pixel points ("M x,y L x,y ..."), two decimals. */
export function pathOf(points: readonly (readonly [number, number])[]): string {
  return points.map(([x, y], i) => `${i === 0 ? "M" : "L"}${x.toFixed(2)},${y.toFixed(2)}`).join("");
}

function unitAxes(frame: Frame, xTitle: string, yTitle: string): { axes: ChartAxes; sx: (v: number) => number; sy: (v: number) => number } {
  const inner = innerBox(frame);
  const sx = linearScale([0, 1], [inner.left, inner.right]);
  const sy = linearScale([0, 1], [inner.bottom, inner.top]);
  const axes: ChartAxes = { frame, inner, xTicks: linearTicks([0, 1], sx), yTicks: linearTicks([0, 1], sy), xTitle, yTitle };
  return { axes, sx, sy };
}

// ---- ROC ------------------------------------------------------------------------------------

/** One operating point of the ROC curve. */
export interface OperatingPoint {
  threshold: number;
  falsePositiveRate: number;
  truePositiveRate: number;
  x: number;
  y: number;
}

export interface RocChart {
  axes: ChartAxes;
  /** The empirical curve (thinned to the pixel). */
  curve: string;
  /** Pixel points of the whole curve before thinning (for tests and hit-testing). */
  pointCount: number;
  /** The chance line from (0, 0) to (1, 1). */
  chance: string;
  /** Where the current threshold sits on the curve. */
  marker: OperatingPoint;
  auc: RocAucResult;
}

/**
 * The operating point of the rule "positive when p >= threshold" on an ROC curve: the last point
 * (curve thresholds run downwards) whose threshold is still >= the chosen one.
 */
export function operatingPointIndex(curve: RocCurve, threshold: number): number {
  let k = 0;
  for (let i = 1; i < curve.thresholds.length; i++) {
    if (curve.thresholds[i] >= threshold) k = i;
    else break;
  }
  return k;
}

/** Everything the ROC chart draws. */
export function buildRocChart(curve: RocCurve, auc: RocAucResult, threshold: number, frame: Frame = EVAL_FRAME): RocChart {
  const { axes, sx, sy } = unitAxes(frame, "1 − specificity (false positive rate)", "Sensitivity (true positive rate)");
  const n = curve.thresholds.length;
  const xs = new Float64Array(n);
  const ys = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    xs[i] = sx(curve.falsePositiveRate[i]);
    ys[i] = sy(curve.truePositiveRate[i]);
  }
  const k = operatingPointIndex(curve, threshold);
  return {
    axes,
    curve: pathOf(thinPolyline(xs, ys)),
    pointCount: n,
    chance: pathOf([
      [sx(0), sy(0)],
      [sx(1), sy(1)],
    ]),
    marker: { threshold, falsePositiveRate: curve.falsePositiveRate[k], truePositiveRate: curve.truePositiveRate[k], x: xs[k], y: ys[k] },
    auc,
  };
}

// ---- calibration ------------------------------------------------------------------------------

/** One group of the calibration table as drawn. */
export interface CalibrationPoint {
  meanPredicted: number;
  observedRate: number;
  rows: number;
  x: number;
  y: number;
  /** Marker radius: grows with the group's share of the rows (between 2.5 and 6 px). */
  r: number;
}

/** The calibration points of one group of rows (a value of the split column). */
export interface CalibrationSeries {
  name: string;
  rows: number;
  points: CalibrationPoint[];
  line: string;
}

export interface CalibrationChart {
  axes: ChartAxes;
  points: CalibrationPoint[];
  /** Line through the groups in order of predicted probability. */
  line: string;
  /** The line of perfect calibration, observed = predicted. */
  ideal: string;
  /** One series per value of a split column (empty without a split). */
  series: CalibrationSeries[];
}

type GroupRow = { meanPredicted: number; observedRate: number; rows: number };

function placeGroups(groups: readonly GroupRow[], sx: (v: number) => number, sy: (v: number) => number, most: number): CalibrationPoint[] {
  return groups.map((g) => ({
    meanPredicted: g.meanPredicted,
    observedRate: g.observedRate,
    rows: g.rows,
    x: sx(g.meanPredicted),
    y: sy(g.observedRate),
    r: 2.5 + 3.5 * Math.sqrt(g.rows / most),
  }));
}

/**
 * Everything the calibration chart draws, from the groups of a calibration table, and optionally
 * one series per value of a split column (each from its own calibration table). Marker sizes share
 * one scale across all of them.
 */
export function buildCalibrationChart(
  groups: readonly GroupRow[],
  frame: Frame = EVAL_FRAME,
  split: readonly { name: string; rows: number; groups: readonly GroupRow[] }[] = [],
): CalibrationChart {
  const { axes, sx, sy } = unitAxes(frame, "Mean predicted probability (group)", "Observed share positive (group)");
  const most = Math.max(1, ...groups.map((g) => g.rows), ...split.flatMap((s) => s.groups.map((g) => g.rows)));
  const points = placeGroups(groups, sx, sy, most);
  const lineOf = (ps: CalibrationPoint[]) => pathOf(ps.map((p) => [p.x, p.y] as [number, number]));
  return {
    axes,
    points,
    line: lineOf(points),
    ideal: pathOf([
      [sx(0), sy(0)],
      [sx(1), sy(1)],
    ]),
    series: split.map((s) => {
      const ps = placeGroups(s.groups, sx, sy, most);
      return { name: s.name, rows: s.rows, points: ps, line: lineOf(ps) };
    }),
  };
}

// ---- cross-validation path --------------------------------------------------------------------

/** One penalty of a cross-validation path: mean out-of-fold log-loss over the folds and its SE. */
export interface PathEntry {
  penalty: number;
  mean: number;
  standardError: number;
}

export interface PathPointDrawn extends PathEntry {
  x: number;
  y: number;
  /** Pixel ends of the mean -/+ one SE bar. */
  yLow: number;
  yHigh: number;
}

export interface PathChart {
  axes: ChartAxes;
  points: PathPointDrawn[];
  line: string;
  /** Indices into `points` of the minimizing penalty and the one-standard-error choice. */
  best: number;
  oneSe: number;
  /** The one-SE line: the minimum's mean plus its SE, drawn across the chart. */
  oneSeLevel: { value: number; y: number };
  /** Entries not drawn (penalty 0 or below, which a log axis cannot show; non-finite means). */
  leftOut: number;
}

/**
 * Everything the cross-validation path chart draws: penalty on a log10 axis across, mean
 * out-of-fold log-loss up with a bar of -/+ one standard error.
 * @param best, oneSe - indices into `entries` of the marked choices
 */
export function buildPathChart(entries: readonly PathEntry[], best: number, oneSe: number, frame: Frame = EVAL_FRAME): PathChart {
  const keep = entries.map((e, i) => ({ e, i })).filter(({ e }) => e.penalty > 0 && Number.isFinite(e.mean));
  const inner = innerBox(frame);
  const logs = keep.map(({ e }) => Math.log10(e.penalty));
  let lx = Math.min(...logs);
  let hx = Math.max(...logs);
  if (!(hx > lx)) {
    lx -= 0.5;
    hx += 0.5;
  }
  const padX = (hx - lx) * 0.04;
  const sx = linearScale([lx - padX, hx + padX], [inner.left, inner.right]);
  const se = (e: PathEntry) => (Number.isFinite(e.standardError) ? e.standardError : 0);
  let ly = Math.min(...keep.map(({ e }) => e.mean - se(e)));
  let hy = Math.max(...keep.map(({ e }) => e.mean + se(e)));
  if (!(hy > ly)) {
    ly -= 0.01;
    hy += 0.01;
  }
  const padY = (hy - ly) * 0.06;
  const yDomain: [number, number] = [ly - padY, hy + padY];
  const sy = linearScale(yDomain, [inner.bottom, inner.top]);
  const points = keep.map(({ e }) => ({ ...e, x: sx(Math.log10(e.penalty)), y: sy(e.mean), yLow: sy(e.mean - se(e)), yHigh: sy(e.mean + se(e)) }));
  const index = (i: number) => keep.findIndex((k) => k.i === i);
  const level = entries[best] ? entries[best].mean + se(entries[best]) : NaN;
  return {
    axes: {
      frame,
      inner,
      xTicks: logTicks(10 ** (lx - padX), 10 ** (hx + padX), sx),
      yTicks: linearTicks(yDomain, sy, 6),
      xTitle: "Penalty (log scale)",
      yTitle: "Out-of-fold log-loss",
    },
    points,
    line: pathOf(points.map((p) => [p.x, p.y] as [number, number])),
    best: index(best),
    oneSe: index(oneSe),
    oneSeLevel: { value: level, y: sy(level) },
    leftOut: entries.length - keep.length,
  };
}

/**
 * The threshold of the ROC point nearest a pixel position (a click on the chart), as the shortest
 * decimal that gives the same operating point: a number in (next lower score, point's score], so
 * "positive when p >= threshold" flags exactly the rows of that point. Points whose threshold is not
 * strictly between 0 and 1 (the start at +Infinity) are never chosen.
 */
export function thresholdNearPixel(curve: RocCurve, x: number, y: number, frame: Frame = EVAL_FRAME): number | null {
  const inner = innerBox(frame);
  const sx = linearScale([0, 1], [inner.left, inner.right]);
  const sy = linearScale([0, 1], [inner.bottom, inner.top]);
  let best = -1;
  let bestDistance = Infinity;
  const n = curve.thresholds.length;
  for (let i = 0; i < n; i++) {
    const t = curve.thresholds[i];
    if (!(t > 0 && t < 1)) continue;
    const d = (sx(curve.falsePositiveRate[i]) - x) ** 2 + (sy(curve.truePositiveRate[i]) - y) ** 2;
    if (d < bestDistance) {
      bestDistance = d;
      best = i;
    }
  }
  if (best < 0) return null;
  return shortestThreshold(curve.thresholds[best], best + 1 < n ? curve.thresholds[best + 1] : 0);
}

/**
 * The threshold of the next operating point along the ROC curve from the one `threshold` gives:
 * `step` +1 moves towards (1, 1) (a lower threshold, more rows flagged), -1 towards (0, 0); as the
 * shortest decimal giving that point (see thresholdNearPixel). Null when there is no further point
 * strictly inside (0, 1).
 */
export function steppedThreshold(curve: RocCurve, threshold: number, step: 1 | -1): number | null {
  const n = curve.thresholds.length;
  let k = operatingPointIndex(curve, threshold) + step;
  while (k >= 0 && k < n && !(curve.thresholds[k] > 0 && curve.thresholds[k] < 1)) k += step;
  if (k < 0 || k >= n) return null;
  return shortestThreshold(curve.thresholds[k], k + 1 < n ? curve.thresholds[k + 1] : 0);
}

/** The shortest decimal in (lower, t]: the same rows satisfy p >= it as p >= t. */
export function shortestThreshold(t: number, lower: number): number {
  for (let digits = 1; digits <= 12; digits++) {
    const c = Math.floor(t * 10 ** digits) / 10 ** digits;
    if (c > lower && c <= t && c > 0) return Number(c.toFixed(digits));
  }
  return t;
}
