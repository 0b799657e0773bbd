/**
 * The numbers behind the boundary plot, kept apart from drawing so they can be tested without a
 * browser: which columns can be axes, the points, and a grid of model predictions over the two
 * chosen columns with every other predictor held at a stated typical value (mean of a number
 * column, most frequent category of a text column).
 *
 * Basis columns: a predictor that was generated from original columns (e.g. spline terms of
 * firmness) is recomputed at every grid point from the grid's original values through its
 * `DerivedColumns.compute`, so the drawn boundary curves exactly as the model's does. A generated
 * column the pane knows no recipe for is held at its typical value like any other column (the
 * caption says so).
 *
 * Decision boundary fields (contoured at `level` by the plot):
 * - two classes: the positive-class probability, level = the threshold;
 * - several classes: one field per class, p_k - max_{j != k} p_j, level 0 (where class k stops
 *   being the most likely).
 * Grid convention: values are stored x fastest (index i + j * nx), as marching squares expects;
 * a contour coordinate g maps to the data value lo + (g - 0.5) * step (each value sits at the
 * centre of its grid cell).
 */
import { nearBoundaryRows, type RowScores, type CellValue } from "../engine";
import type { DataTable } from "./dataTable";
import type { SetupChoice } from "./modelSetup";

/** Grid points per axis (a 48 x 48 grid is 2,304 predictions: milliseconds to score). */
export const DEFAULT_GRID = 48;
/** Share of each axis range added on both sides, so edge points are not drawn on the frame. */
const PAD = 0.04;

/** Generated columns and how to recompute them from their source columns. */
export interface DerivedColumns {
  /** Names of the generated columns, as they appear in the table header. */
  outputs: string[];
  /** Names of the original columns they are computed from. */
  sources: string[];
  /** Header + rows of the source columns in, header + rows of the generated columns out. */
  compute(rows: CellValue[][]): CellValue[][];
}

export interface PlotPoint {
  dataRow: number;
  x: number;
  y: number;
  /** Index of the row's actual class in `classes`, or -1 when the label is blank or unknown. */
  classIndex: number;
  borderline: boolean;
}

export interface PlotModel {
  xName: string;
  yName: string;
  xDomain: [number, number];
  yDomain: [number, number];
  classes: string[];
  points: PlotPoint[];
  nx: number;
  ny: number;
  /** Contour fields (see the file comment) and the level to contour them at. */
  fields: Float64Array[];
  level: number;
  kind: "binary" | "multiclass";
  /** What the other predictors are held at. */
  heldAt: { name: string; value: string; rule: string }[];
  /** Things the reader should know (rows not drawn, generated columns held fixed). */
  notes: string[];
}

function isNumeric(data: DataTable, index: number): boolean {
  const k = data.columns[index].kind;
  return k === "number" || k === "boolean";
}

/**
 * Columns that can be plot axes: numeric predictors, and numeric source columns of generated
 * predictors (the axis of a spline is its original column).
 */
export function axisCandidates(data: DataTable, choice: SetupChoice, derived: DerivedColumns[]): number[] {
  const names = new Set(choice.predictors.map((p) => data.columns[p].name));
  const out = new Set<number>();
  for (const p of choice.predictors) if (isNumeric(data, p) && !derived.some((d) => d.outputs.includes(data.columns[p].name))) out.add(p);
  for (const d of derived) {
    if (!d.outputs.some((o) => names.has(o))) continue;
    for (const s of d.sources) {
      const c = data.columns.find((col) => col.name === s);
      if (c && isNumeric(data, c.index)) out.add(c.index);
    }
  }
  return [...out].sort((a, b) => a - b);
}

/** Data range of a numeric column, padded; a constant column gets a unit-wide range. */
export function columnDomain(data: DataTable, index: number): [number, number] {
  const col = data.table.columns[index];
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < data.table.rows; i++) {
    if (col.missing[i]) continue;
    const v = col.values[i] as number;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!Number.isFinite(lo)) return [0, 1];
  if (lo === hi) return [lo - 0.5, hi + 0.5];
  const pad = (hi - lo) * PAD;
  return [lo - pad, hi + pad];
}

/** Value of grid index i of n over a domain (end points included). */
export function gridValue(domain: [number, number], i: number, n: number): number {
  return domain[0] + ((domain[1] - domain[0]) * i) / (n - 1);
}

/** Data coordinate of a contour coordinate g (see the grid convention in the file comment). */
export function contourToData(g: number, domain: [number, number], n: number): number {
  const step = (domain[1] - domain[0]) / (n - 1);
  return domain[0] + (g - 0.5) * step;
}

function typicalText(v: number | string | null): string {
  if (v === null) return "blank";
  if (typeof v === "number") return String(Number(v.toPrecision(4)));
  return v;
}

/**
 * The predictor block (header + nx*ny rows, in the set-up's predictor order) of the grid, with the
 * list of what every non-axis predictor is held at.
 */
export function gridPredictors(
  data: DataTable,
  choice: SetupChoice,
  x: number,
  y: number,
  xDomain: [number, number],
  yDomain: [number, number],
  nx: number,
  ny: number,
  derived: DerivedColumns[],
): { cells: CellValue[][]; heldAt: PlotModel["heldAt"]; notes: string[] } {
  const names = choice.predictors.map((p) => data.columns[p].name);
  const byName = new Map(data.columns.map((c) => [c.name, c]));
  const xName = data.columns[x].name;
  const yName = data.columns[y].name;
  const n = nx * ny;
  const columns: CellValue[][] = names.map(() => new Array<CellValue>(n));
  const heldAt: PlotModel["heldAt"] = [];
  const notes: string[] = [];
  const xs = Array.from({ length: n }, (_, k) => gridValue(xDomain, k % nx, nx));
  const ys = Array.from({ length: n }, (_, k) => gridValue(yDomain, Math.floor(k / nx), ny));
  const held = new Set<string>();
  const hold = (name: string) => {
    if (held.has(name) || name === xName || name === yName) return;
    held.add(name);
    const c = byName.get(name);
    heldAt.push({ name, value: typicalText(c?.typical ?? null), rule: c?.typicalRule ?? "none" });
  };
  const sourceValues = (name: string): CellValue[] => {
    if (name === xName) return xs;
    if (name === yName) return ys;
    hold(name);
    const t = byName.get(name)?.typical ?? null;
    return new Array<CellValue>(n).fill(t);
  };
  const filled = new Set<number>();
  for (const d of derived) {
    const wanted = d.outputs.map((o) => names.indexOf(o));
    if (wanted.every((w) => w < 0)) continue;
    const src = d.sources.map(sourceValues);
    const rows: CellValue[][] = [d.sources.slice()];
    for (let k = 0; k < n; k++) rows.push(src.map((s) => s[k]));
    const out = d.compute(rows);
    const header = (out[0] ?? []).map(String);
    wanted.forEach((w, j) => {
      if (w < 0) return;
      const col = header.indexOf(d.outputs[j]);
      for (let k = 0; k < n; k++) columns[w][k] = col >= 0 ? (out[k + 1]?.[col] ?? null) : null;
      filled.add(w);
    });
  }
  names.forEach((name, w) => {
    if (filled.has(w)) return;
    if (name === xName) columns[w] = xs;
    else if (name === yName) columns[w] = ys;
    else {
      const c = byName.get(name)!;
      hold(name);
      columns[w] = new Array<CellValue>(n).fill(c.typical);
    }
  });
  const cells: CellValue[][] = [names];
  for (let k = 0; k < n; k++) cells.push(columns.map((c) => c[k]));
  return { cells, heldAt, notes };
}

/**
 * Everything the plot draws.
 * @param score - scores a predictor block with the fitted model (scoreRows with the model bound)
 */
export function buildPlot(
  data: DataTable,
  choice: SetupChoice,
  scores: RowScores,
  settings: { threshold: number; band: number; undecided: boolean },
  x: number,
  y: number,
  derived: DerivedColumns[],
  score: (cells: CellValue[][]) => RowScores,
  grid = DEFAULT_GRID,
): PlotModel {
  const xDomain = columnDomain(data, x);
  const yDomain = columnDomain(data, y);
  const { cells, heldAt, notes } = gridPredictors(data, choice, x, y, xDomain, yDomain, grid, grid, derived);
  const gridScores = score(cells);
  const probs = gridScores.prediction.probabilities;
  const binary = probs.length === 2;
  const n = grid * grid;
  let fields: Float64Array[];
  if (binary) {
    fields = [Float64Array.from(probs[1])];
  } else {
    fields = probs.map((pk, k) => {
      const f = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        let other = -Infinity;
        for (let j = 0; j < probs.length; j++) if (j !== k && probs[j][i] > other) other = probs[j][i];
        f[i] = pk[i] - other;
      }
      return f;
    });
  }
  const all = nearBoundaryRows(scores.prediction, { ...settings, limit: scores.rows });
  const borderline = new Set(all.rows.map((r) => r.row));
  const classes = scores.classes;
  const xc = data.table.columns[x];
  const yc = data.table.columns[y];
  const lc = data.table.columns[choice.label];
  const points: PlotPoint[] = [];
  let missing = 0;
  for (let i = 0; i < data.table.rows; i++) {
    if (xc.missing[i] || yc.missing[i]) {
      missing++;
      continue;
    }
    const label = lc.missing[i] ? null : String(lc.values[i]);
    points.push({
      dataRow: i,
      x: xc.values[i] as number,
      y: yc.values[i] as number,
      classIndex: label === null ? -1 : classes.indexOf(label),
      borderline: borderline.has(i),
    });
  }
  if (missing) notes.push(`${missing} rows without a value in ${data.columns[x].name} or ${data.columns[y].name} are not drawn.`);
  return {
    xName: data.columns[x].name,
    yName: data.columns[y].name,
    xDomain,
    yDomain,
    classes,
    points,
    nx: grid,
    ny: grid,
    fields,
    level: binary ? settings.threshold : 0,
    kind: binary ? "binary" : "multiclass",
    heldAt,
    notes,
  };
}

/** Round tick values over [lo, hi]: about `count` of them, at 1, 2 or 5 times a power of ten. */
export function niceTicks(lo: number, hi: number, count = 5): number[] {
  const span = hi - lo;
  if (!(span > 0)) return [lo];
  const raw = span / count;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw) ?? 10 * power;
  const ticks: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + step * 1e-9; t += step) ticks.push(Number(t.toPrecision(12)));
  return ticks;
}
