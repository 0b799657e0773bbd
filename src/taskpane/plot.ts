/**
 * Draws the boundary plot (an SVG) from a PlotModel: the decision regions and boundary lines traced
 * with d3-contour (marching squares) over the grid of model predictions, the rows as points whose
 * colour AND shape say their class, and a ring around borderline rows.
 *
 * Colours: our own set, chosen to stay distinguishable under the common colour-vision deficiencies
 * (blue/orange/green-teal/purple/brown differ in lightness as well as hue); shapes differ by class
 * too, so nothing depends on colour alone. All text goes in with textContent.
 */
import { contours } from "d3-contour";
import { contourToData, niceTicks, type PlotModel } from "./plotGeometry";

/** Class colours (index = class). */
export const CLASS_COLOURS = ["#1F5F99", "#E08A1E", "#2E9C83", "#7B4EA3", "#8C5A2B", "#C2457A"];
/** Class shapes (index = class). */
export const CLASS_SHAPES = ["circle", "triangle", "square", "diamond", "cross", "star"] as const;
/** Colour of the boundary lines and of the borderline rings. */
export const BOUNDARY_COLOUR = "#1D1D1D";

const SVG = "http://www.w3.org/2000/svg";
const WIDTH = 340;
const HEIGHT = 280;
const MARGIN = { top: 12, right: 12, bottom: 40, left: 48 };

function svg<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Record<string, string | number> = {}): SVGElementTagNameMap[K] {
  const e = document.createElementNS(SVG, tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
  return e;
}

/** An SVG path for a class marker centred at (x, y). */
export function markerPath(shape: (typeof CLASS_SHAPES)[number], x: number, y: number, r: number): string {
  switch (shape) {
    case "circle":
      return `M${x - r},${y}a${r},${r} 0 1,0 ${2 * r},0a${r},${r} 0 1,0 ${-2 * r},0Z`;
    case "triangle":
      return `M${x},${y - r * 1.2}L${x + r * 1.1},${y + r * 0.8}L${x - r * 1.1},${y + r * 0.8}Z`;
    case "square":
      return `M${x - r * 0.9},${y - r * 0.9}h${r * 1.8}v${r * 1.8}h${-r * 1.8}Z`;
    case "diamond":
      return `M${x},${y - r * 1.25}L${x + r * 1.25},${y}L${x},${y + r * 1.25}L${x - r * 1.25},${y}Z`;
    case "cross": {
      const a = r * 0.4;
      return `M${x - a},${y - r}h${2 * a}v${r - a}h${r - a}v${2 * a}h${a - r}v${r - a}h${-2 * a}v${a - r}h${a - r}v${-2 * a}h${r - a}Z`;
    }
    default: {
      let d = "";
      for (let k = 0; k < 10; k++) {
        const rad = k % 2 === 0 ? r * 1.3 : r * 0.55;
        const ang = (Math.PI / 5) * k - Math.PI / 2;
        d += `${k === 0 ? "M" : "L"}${x + rad * Math.cos(ang)},${y + rad * Math.sin(ang)}`;
      }
      return d + "Z";
    }
  }
}

/**
 * Render `model` into `container` (its previous content is replaced).
 * @returns the SVG element
 */
export function renderPlot(container: HTMLElement, model: PlotModel): SVGSVGElement {
  const root = svg("svg", { viewBox: `0 0 ${WIDTH} ${HEIGHT}`, width: WIDTH, height: HEIGHT, role: "img", class: "osm-plot-svg" });
  const title = svg("title");
  title.textContent = `Decision boundary over ${model.xName} and ${model.yName}`;
  root.append(title);
  const iw = WIDTH - MARGIN.left - MARGIN.right;
  const ih = HEIGHT - MARGIN.top - MARGIN.bottom;
  const sx = (v: number) => MARGIN.left + ((v - model.xDomain[0]) / (model.xDomain[1] - model.xDomain[0])) * iw;
  const sy = (v: number) => MARGIN.top + ih - ((v - model.yDomain[0]) / (model.yDomain[1] - model.yDomain[0])) * ih;

  // Clip to the plot area: contour rings close along the grid's outer edge, which lies half a grid
  // step outside the data range; clipping hides those closing edges.
  const clipId = `osm-clip-${Math.random().toString(36).slice(2, 9)}`;
  const defs = svg("defs");
  const clip = svg("clipPath", { id: clipId });
  clip.append(svg("rect", { x: MARGIN.left, y: MARGIN.top, width: iw, height: ih }));
  defs.append(clip);
  root.append(defs);
  // Two classes: the frame carries the first class's light tint; the second class's region is drawn over it.
  const frameClass = model.kind === "binary" ? "osm-plot-frame is-binary" : "osm-plot-frame";
  root.append(svg("rect", { x: MARGIN.left, y: MARGIN.top, width: iw, height: ih, class: frameClass }));

  // Decision regions and boundary.
  const regions = svg("g", { "clip-path": `url(#${clipId})`, class: "osm-plot-regions" });
  const generator = contours().size([model.nx, model.ny]).thresholds([model.level]);
  model.fields.forEach((field, k) => {
    const classIndex = model.kind === "binary" ? 1 : k;
    const [shape] = generator(Array.from(field, (v) => (Number.isFinite(v) ? v : -Infinity)));
    if (!shape || shape.coordinates.length === 0) return;
    let d = "";
    for (const polygon of shape.coordinates) {
      for (const ring of polygon) {
        ring.forEach(([gx, gy], i) => {
          const px = sx(contourToData(gx, model.xDomain, model.nx));
          const py = sy(contourToData(gy, model.yDomain, model.ny));
          d += `${i === 0 ? "M" : "L"}${px.toFixed(2)},${py.toFixed(2)}`;
        });
        d += "Z";
      }
    }
    regions.append(svg("path", { d, class: "osm-region", fill: CLASS_COLOURS[classIndex % CLASS_COLOURS.length], "fill-opacity": 0.13, stroke: "none" }));
    regions.append(svg("path", { d, class: "osm-boundary", fill: "none", stroke: BOUNDARY_COLOUR, "stroke-width": 1.6, "stroke-dasharray": "5 3" }));
  });
  root.append(regions);

  // Axes.
  const axes = svg("g", { class: "osm-plot-axes" });
  for (const t of niceTicks(model.xDomain[0], model.xDomain[1])) {
    const x = sx(t);
    axes.append(svg("line", { x1: x, x2: x, y1: MARGIN.top + ih, y2: MARGIN.top + ih + 4, stroke: "#555" }));
    const label = svg("text", { x, y: MARGIN.top + ih + 15, "text-anchor": "middle", class: "osm-tick" });
    label.textContent = String(t);
    axes.append(label);
  }
  for (const t of niceTicks(model.yDomain[0], model.yDomain[1])) {
    const y = sy(t);
    axes.append(svg("line", { x1: MARGIN.left - 4, x2: MARGIN.left, y1: y, y2: y, stroke: "#555" }));
    const label = svg("text", { x: MARGIN.left - 6, y: y + 3, "text-anchor": "end", class: "osm-tick" });
    label.textContent = String(t);
    axes.append(label);
  }
  const xl = svg("text", { x: MARGIN.left + iw / 2, y: HEIGHT - 6, "text-anchor": "middle", class: "osm-axis-label" });
  xl.textContent = model.xName;
  const yl = svg("text", { x: 12, y: MARGIN.top + ih / 2, "text-anchor": "middle", class: "osm-axis-label", transform: `rotate(-90 12 ${MARGIN.top + ih / 2})` });
  yl.textContent = model.yName;
  axes.append(xl, yl);
  root.append(axes);

  // Points: borderline rings under the markers, then markers.
  const points = svg("g", { "clip-path": `url(#${clipId})`, class: "osm-plot-points" });
  for (const p of model.points) {
    if (!p.borderline) continue;
    points.append(svg("circle", { cx: sx(p.x), cy: sy(p.y), r: 6.5, fill: "none", stroke: BOUNDARY_COLOUR, "stroke-width": 1.3, class: "osm-ring" }));
  }
  for (const p of model.points) {
    const k = p.classIndex;
    const shape = k >= 0 ? CLASS_SHAPES[k % CLASS_SHAPES.length] : "circle";
    const colour = k >= 0 ? CLASS_COLOURS[k % CLASS_COLOURS.length] : "#9A9A9A";
    const mark = svg("path", {
      d: markerPath(shape, sx(p.x), sy(p.y), 3.2),
      fill: colour,
      "fill-opacity": 0.85,
      stroke: "#FFFFFF",
      "stroke-width": 0.6,
      class: "osm-point",
      "data-row": p.dataRow,
    });
    points.append(mark);
  }
  root.append(points);
  container.replaceChildren(root);
  return root;
}
