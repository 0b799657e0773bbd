/**
 * Quantile binning of one column into indicator columns.
 *
 * Edges: the type-7 quantiles of the training values at 1/k, ..., (k-1)/k. Edge policy (one line):
 * intervals are closed on the right, (e_{j-1}, e_j], and the outer bins are open-ended,
 * (-inf, e_1] and (e_{k-1}, inf), so every new value, even outside the training range, has a bin.
 * Tied values make equal quantiles; equal edges are merged, giving fewer bins and a note.
 * The first (lowest) bin is the reference and gets no column; the others get 0/1 indicators.
 * Reference: Hyndman & Fan (1996) for the quantiles; R's cut(right = TRUE) for the closed side.
 */
import { formatMessage, problem } from "../messages";
import { type BasisBlock, type BasisColumn, type FitNote, finiteValues, quantile7, readNumbers, sortedCopy } from "./common";

/** Stored state of quantile bins. */
export interface BinsState {
  kind: "bins";
  source: string;
  /** Interior edges, strictly ascending (bins = edges.length + 1). */
  edges: number[];
  names: string[];
  fitNotes: FitNote[];
}

/** Largest number of bins accepted. */
export const MAX_BINS = 50;

function edgeText(v: number, digits: number): string {
  if (v === Infinity) return "inf";
  if (v === -Infinity) return "-inf";
  return String(Number(v.toPrecision(digits)));
}

/** Names of the bins 2..k, e.g. "bin(age)=(30,45]" and "bin(age)=(60,inf)"; digits grow until distinct. */
export function binNames(source: string, edges: readonly number[]): string[] {
  const bounds = [-Infinity, ...edges, Infinity];
  for (let digits = 6; ; digits += 3) {
    const names = bounds.slice(1).map((hi, j) => {
      const lo = bounds[j];
      return `bin(${source})=(${edgeText(lo, digits)},${edgeText(hi, digits)}${hi === Infinity ? ")" : "]"}`;
    });
    if (new Set(names).size === names.length || digits >= 17) return names.slice(1);
  }
}

/**
 * Fit quantile bins on the training values.
 * @throws OddsmithError BASIS_TOO_FEW_VALUES when all training values are equal (one bin only).
 * @example fitBins({ name: "x", values: [1, 2, 3, 4] }, 2).edges // [2.5]
 */
export function fitBins(column: BasisColumn, k: number): BinsState {
  const x = sortedCopy(finiteValues(readNumbers(column, "bins", null, true)));
  const edges: number[] = [];
  for (let j = 1; j < k; j++) {
    const e = quantile7(x, j / k);
    // An edge at the training maximum would leave an empty last bin: drop it with the duplicates.
    if (Number.isFinite(e) && (edges.length === 0 || e > edges[edges.length - 1]) && e < x[x.length - 1]) edges.push(e);
  }
  if (edges.length === 0) {
    throw problem("BASIS_TOO_FEW_VALUES", {
      transform: `bins(${k})`,
      column: column.name,
      needed: 2,
      found: new Set(x).size,
      hint: "Binning needs values that differ.",
    });
  }
  const fitNotes: FitNote[] = [];
  if (edges.length + 1 < k) {
    fitNotes.push({
      code: "BASIS_REDUCED",
      message: formatMessage("BASIS_REDUCED", {
        transform: `bins(${k})`,
        column: column.name,
        got: edges.length,
        asked: k - 1,
        reason: "tied values made some quantile edges equal, and equal edges were merged",
      }),
    });
  }
  return { kind: "bins", source: column.name, edges, names: binNames(column.name, edges), fitNotes };
}

/** Apply quantile bins (blank/text: NaN and a row note). */
export function applyBins(state: BinsState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const x = readNumbers(column, "bins", notes);
  const columns = state.edges.map(() => new Float64Array(x.length));
  for (let i = 0; i < x.length; i++) {
    if (Number.isNaN(x[i])) {
      for (const c of columns) c[i] = NaN;
      continue;
    }
    // Bin index b: number of edges strictly below x (right-closed intervals).
    let b = 0;
    while (b < state.edges.length && x[i] > state.edges[b]) b++;
    if (b > 0) columns[b - 1][i] = 1;
  }
  return { names: [...state.names], columns, notes };
}
