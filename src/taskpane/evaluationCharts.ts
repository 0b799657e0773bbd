/**
 * Draws the evaluation charts (SVG) from the models of evaluationGeometry.ts: the ROC curve with the
 * operating point of the review's threshold, the calibration plot by groups, and the
 * cross-validation path with SE bars and the two marked choices. Every mark has a text title; the
 * marked choices differ by shape as well as colour. All text goes in with textContent.
 */
import type { CalibrationChart, ChartAxes, PathChart, RocChart } from "./evaluationGeometry";
import { CLASS_COLOURS, CLASS_SHAPES, markerPath } from "./plot";

const SVG = "http://www.w3.org/2000/svg";
/** Curve colour (the pane's accent), reference-line grey, and the marker colours (blue / orange). */
const CURVE = "#145C66";
const REFERENCE = "#8A8F96";
const MARK_BEST = "#1F5F99";
const MARK_CHOICE = "#B05F00";

function svg<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Record<string, string | number> = {}, text?: string): SVGElementTagNameMap[K] {
  const e = document.createElementNS(SVG, tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
  if (text !== undefined) e.textContent = text;
  return e;
}

function titled<T extends SVGElement>(e: T, text: string): T {
  e.append(svg("title", {}, text));
  return e;
}

/** The chart's SVG with its frame, light grid lines, ticks and axis titles. */
function chartRoot(axes: ChartAxes, title: string, cls: string): SVGSVGElement {
  const { frame, inner } = axes;
  const root = svg("svg", { viewBox: `0 0 ${frame.width} ${frame.height}`, width: frame.width, height: frame.height, role: "img", class: `osm-eval-svg ${cls}` });
  root.append(svg("title", {}, title));
  root.append(svg("rect", { x: inner.left, y: inner.top, width: inner.right - inner.left, height: inner.bottom - inner.top, class: "osm-eval-frame" }));
  const g = svg("g", { class: "osm-eval-axes" });
  for (const t of axes.xTicks) {
    if (t.at < inner.left - 0.5 || t.at > inner.right + 0.5) continue;
    g.append(svg("line", { x1: t.at, x2: t.at, y1: inner.top, y2: inner.bottom, class: "osm-eval-grid" }));
    g.append(svg("line", { x1: t.at, x2: t.at, y1: inner.bottom, y2: inner.bottom + 4, class: "osm-eval-tickmark" }));
    g.append(svg("text", { x: t.at, y: inner.bottom + 15, "text-anchor": "middle", class: "osm-eval-tick" }, t.label));
  }
  for (const t of axes.yTicks) {
    if (t.at < inner.top - 0.5 || t.at > inner.bottom + 0.5) continue;
    g.append(svg("line", { x1: inner.left, x2: inner.right, y1: t.at, y2: t.at, class: "osm-eval-grid" }));
    g.append(svg("line", { x1: inner.left - 4, x2: inner.left, y1: t.at, y2: t.at, class: "osm-eval-tickmark" }));
    g.append(svg("text", { x: inner.left - 6, y: t.at + 3.5, "text-anchor": "end", class: "osm-eval-tick" }, t.label));
  }
  const midX = (inner.left + inner.right) / 2;
  const midY = (inner.top + inner.bottom) / 2;
  g.append(svg("text", { x: midX, y: frame.height - 8, "text-anchor": "middle", class: "osm-eval-axis-title" }, axes.xTitle));
  g.append(svg("text", { x: 12, y: midY, "text-anchor": "middle", class: "osm-eval-axis-title", transform: `rotate(-90 12 ${midY})` }, axes.yTitle));
  root.append(g);
  return root;
}

/** Draw the ROC chart into `container` (replacing its content). */
export function renderRocChart(container: HTMLElement, chart: RocChart): SVGSVGElement {
  const a = chart.auc;
  const root = chartRoot(chart.axes, `ROC curve, AUC ${a.auc.toFixed(3)}`, "is-roc");
  root.append(svg("path", { d: chart.chance, class: "osm-eval-reference", fill: "none", stroke: REFERENCE, "stroke-dasharray": "4 3" }));
  root.append(svg("path", { d: chart.curve, class: "osm-roc-curve", fill: "none", stroke: CURVE, "stroke-width": 2 }));
  const m = chart.marker;
  const mark = svg("circle", { cx: m.x, cy: m.y, r: 5, class: "osm-roc-marker", fill: MARK_CHOICE, stroke: "#fff", "stroke-width": 1.2 });
  titled(mark, `Threshold ${m.threshold}: sensitivity ${m.truePositiveRate.toFixed(3)}, false positive rate ${m.falsePositiveRate.toFixed(3)}`);
  root.append(mark);
  container.replaceChildren(root);
  return root;
}

/** Draw the calibration chart into `container`. */
export function renderCalibrationChart(container: HTMLElement, chart: CalibrationChart): SVGSVGElement {
  const root = chartRoot(chart.axes, "Calibration by groups of predicted probability", "is-calibration");
  root.append(svg("path", { d: chart.ideal, class: "osm-eval-reference", fill: "none", stroke: REFERENCE, "stroke-dasharray": "4 3" }));
  if (chart.series.length) {
    // Split by a column: one line per value, colour AND shape per value (the overall points are left out).
    chart.series.forEach((s, k) => {
      const colour = CLASS_COLOURS[k % CLASS_COLOURS.length];
      const shape = CLASS_SHAPES[k % CLASS_SHAPES.length];
      root.append(svg("path", { d: s.line, class: "osm-cal-series-line", fill: "none", stroke: colour, "stroke-width": 1.3, "data-series": k }));
      for (const p of s.points) {
        const mark = svg("path", { d: markerPath(shape, p.x, p.y, p.r * 0.8), class: "osm-cal-series-point", fill: colour, "fill-opacity": 0.85, stroke: "#fff", "stroke-width": 0.8, "data-series": k });
        titled(mark, `${s.name}, ${p.rows} rows: mean predicted ${p.meanPredicted.toFixed(3)}, observed ${p.observedRate.toFixed(3)}`);
        root.append(mark);
      }
    });
    container.replaceChildren(root);
    return root;
  }
  root.append(svg("path", { d: chart.line, class: "osm-cal-line", fill: "none", stroke: CURVE, "stroke-width": 1.4 }));
  for (const p of chart.points) {
    const dot = svg("circle", { cx: p.x, cy: p.y, r: p.r, class: "osm-cal-point", fill: CURVE, "fill-opacity": 0.8, stroke: "#fff", "stroke-width": 1 });
    titled(dot, `${p.rows} rows: mean predicted ${p.meanPredicted.toFixed(3)}, observed ${p.observedRate.toFixed(3)}`);
    root.append(dot);
  }
  container.replaceChildren(root);
  return root;
}

/** Draw the cross-validation path chart into `container`. */
export function renderPathChart(container: HTMLElement, chart: PathChart): SVGSVGElement {
  const root = chartRoot(chart.axes, "Cross-validation path: out-of-fold log-loss by penalty", "is-path");
  const { inner } = chart.axes;
  if (Number.isFinite(chart.oneSeLevel.y)) {
    root.append(svg("line", { x1: inner.left, x2: inner.right, y1: chart.oneSeLevel.y, y2: chart.oneSeLevel.y, class: "osm-path-onese-line", stroke: REFERENCE, "stroke-dasharray": "4 3" }));
  }
  for (const p of chart.points) {
    root.append(svg("line", { x1: p.x, x2: p.x, y1: p.yLow, y2: p.yHigh, class: "osm-path-bar", stroke: "#6b7178", "stroke-width": 1 }));
    root.append(svg("line", { x1: p.x - 2.5, x2: p.x + 2.5, y1: p.yLow, y2: p.yLow, stroke: "#6b7178" }));
    root.append(svg("line", { x1: p.x - 2.5, x2: p.x + 2.5, y1: p.yHigh, y2: p.yHigh, stroke: "#6b7178" }));
  }
  root.append(svg("path", { d: chart.line, class: "osm-path-line", fill: "none", stroke: CURVE, "stroke-width": 1.6 }));
  chart.points.forEach((p, i) => {
    const dot = svg("circle", { cx: p.x, cy: p.y, r: 2.6, class: "osm-path-point", fill: CURVE });
    titled(dot, `penalty ${p.penalty}: log-loss ${p.mean.toFixed(4)} ± ${p.standardError.toFixed(4)} (SE)`);
    root.append(dot);
    if (i === chart.best) {
      root.append(titled(svg("circle", { cx: p.x, cy: p.y, r: 6.5, class: "osm-path-best", fill: "none", stroke: MARK_BEST, "stroke-width": 2 }), `lowest log-loss: penalty ${p.penalty}`));
    }
    if (i === chart.oneSe) {
      const s = 6;
      const d = `M${p.x},${p.y - s - 1}L${p.x + s},${p.y + s - 1}L${p.x - s},${p.y + s - 1}Z`;
      root.append(titled(svg("path", { d, class: "osm-path-onese", fill: "none", stroke: MARK_CHOICE, "stroke-width": 2 }), `one-standard-error choice: penalty ${p.penalty}`));
    }
  });
  container.replaceChildren(root);
  return root;
}
