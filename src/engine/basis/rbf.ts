/**
 * Gaussian radial basis functions of one or more columns:
 *   phi_j(x) = exp(-|z - c_j|^2 / (2 sigma^2)),  z = (x - training mean) / training SD per column.
 *
 * - Inputs are standardized first (training mean, sample SD), so columns in different units weigh
 *   equally in the distance; the means and SDs are stored.
 * - Centres: "quantile" (one column only; default there) puts centre j at the type-7 quantile
 *   (j - 0.5)/k of the training values; "kmeans" (default for several columns) runs seeded k-means
 *   with k-means++ starts (kmeans.ts). Coinciding centres are merged (fewer columns, with a note).
 * - Width rule (Haykin, Neural Networks: A Comprehensive Foundation, 2nd ed., 1999, sec. 5.11 —
 *   from memory): sigma = d_max / sqrt(2k), d_max = largest distance between centres, on the
 *   standardized scale; with one centre sigma = 1 (one training SD). `width` overrides sigma.
 * Reference: Broomhead & Lowe (1988), "Multivariable functional interpolation and adaptive
 * networks", Complex Systems 2:321-355.
 */
import { formatMessage, problem } from "../messages";
import {
  type BasisBlock,
  type BasisColumn,
  type FitNote,
  quantile7,
  readNumbers,
  sortedCopy,
} from "./common";
import { kMeans } from "./kmeans";

/** Stored state of a radial basis. */
export interface RbfState {
  kind: "rbf";
  sources: string[];
  /** Training mean and sample SD per source column (the standardization). */
  means: number[];
  sds: number[];
  /** Centres on the standardized scale, one array (length = sources) per centre. */
  centres: number[][];
  /** Gaussian width sigma on the standardized scale. */
  width: number;
  centreMethod: "quantile" | "kmeans";
  seed: number;
  names: string[];
  fitNotes: FitNote[];
}

/** Options of {@link fitRbf}. */
export interface RbfOptions {
  /** Number of centres (>= 1). */
  k: number;
  centres?: "quantile" | "kmeans";
  /** Seed of k-means++ [1]. */
  seed?: number;
  /** Fixed sigma on the standardized scale (overrides the width rule). */
  width?: number;
}

/** Largest number of centres accepted. */
export const MAX_RBF_CENTRES = 50;

/** Name of centre j (1-based): "rbf(x)#2", "rbf(x,y)#3". */
export function rbfName(sources: readonly string[], j: number): string {
  return `rbf(${sources.join(",")})#${j}`;
}

/**
 * Fit a radial basis: standardization, centres and width from the training rows (rows with a blank
 * in any source column are skipped).
 * @throws OddsmithError BASIS_TOO_FEW_VALUES for a column with no spread; RECIPE_BAD_PARAMETER for
 *   quantile centres on several columns.
 * @example fitRbf([{ name: "x", values: xs }], { k: 4 }).names // ["rbf(x)#1", ..., "rbf(x)#4"]
 */
export function fitRbf(columns: readonly BasisColumn[], options: RbfOptions): RbfState {
  const sources = columns.map((c) => c.name);
  const label = `rbf(${options.k})`;
  const method = options.centres ?? (columns.length === 1 ? "quantile" : "kmeans");
  if (method === "quantile" && columns.length > 1) {
    throw problem("RECIPE_BAD_PARAMETER", {
      step: `${sources.join(", ")}: rbf`,
      name: "centres",
      value: "quantile",
      expected: "Quantile centres work on one column; for several columns use centres=kmeans (the default).",
    });
  }
  const xs = columns.map((c) => readNumbers(c, "rbf", null, true));
  const n = xs.length === 0 ? 0 : xs[0].length;
  const complete: number[] = [];
  for (let i = 0; i < n; i++) if (xs.every((x) => Number.isFinite(x[i]))) complete.push(i);
  const means: number[] = [];
  const sds: number[] = [];
  xs.forEach((x, j) => {
    let m = 0;
    for (const i of complete) m += x[i];
    m /= complete.length;
    // A sum beyond the double range (values near 1e308): average the scaled values instead.
    if (!Number.isFinite(m)) {
      m = 0;
      for (const i of complete) m += x[i] / complete.length;
    }
    let ss = 0;
    for (const i of complete) ss += (x[i] - m) * (x[i] - m);
    let sd = Math.sqrt(ss / (complete.length - 1));
    // Squares of deviations near 1e300 overflow (every centre would coincide) and near 1e-300
    // underflow: then scale the deviations by the largest one before squaring.
    if (!Number.isFinite(sd) || sd < 1e-140) {
      let big = 0;
      for (const i of complete) big = Math.max(big, Math.abs(x[i] - m));
      ss = 0;
      if (big > 0 && Number.isFinite(big)) for (const i of complete) ss += ((x[i] - m) / big) ** 2;
      sd = big * Math.sqrt(ss / (complete.length - 1));
    }
    if (!(complete.length >= 2 && sd > 0)) {
      throw problem("BASIS_TOO_FEW_VALUES", {
        transform: label,
        column: sources[j],
        needed: 2,
        found: new Set(complete.map((i) => x[i])).size,
        hint: "Radial basis columns need values that differ.",
      });
    }
    means.push(m);
    sds.push(sd);
  });
  const z = complete.map((i) => xs.map((x, j) => (x[i] - means[j]) / sds[j]));
  const seed = options.seed ?? 1;
  let centres: number[][];
  if (method === "quantile") {
    const sorted = sortedCopy(z.map((p) => p[0]));
    const raw = Array.from({ length: options.k }, (_, j) => quantile7(sorted, (j + 0.5) / options.k));
    centres = raw.filter((c, j) => j === 0 || c !== raw[j - 1]).map((c) => [c]);
  } else {
    centres = kMeans(z, options.k, seed).centres;
    // Merge exact duplicates (possible when k-means leaves two centres on one point).
    centres = centres.filter((c, j) => centres.findIndex((d) => d.every((v, t) => v === c[t])) === j);
  }
  const fitNotes: FitNote[] = [];
  if (centres.length < options.k) {
    const params = {
      transform: label,
      column: sources.join(", "),
      got: centres.length,
      asked: options.k,
      reason: "the training rows have too few distinct values for that many distinct centres",
    };
    fitNotes.push({ code: "BASIS_REDUCED", message: formatMessage("BASIS_REDUCED", params) });
  }
  let width = options.width ?? NaN;
  if (!(width > 0)) {
    let dmax = 0;
    for (let a = 0; a < centres.length; a++)
      for (let b = a + 1; b < centres.length; b++) dmax = Math.max(dmax, Math.sqrt(dist2(centres[a], centres[b])));
    width = dmax > 0 ? dmax / Math.sqrt(2 * centres.length) : 1;
  }
  return {
    kind: "rbf",
    sources,
    means,
    sds,
    centres,
    width,
    centreMethod: method,
    seed,
    names: centres.map((_, j) => rbfName(sources, j + 1)),
    fitNotes,
  };
}

function dist2(a: readonly number[], b: readonly number[]): number {
  let s = 0;
  for (let j = 0; j < a.length; j++) s += (a[j] - b[j]) * (a[j] - b[j]);
  return s;
}

/** Apply a radial basis with the stored standardization, centres and width (blank/text: NaN + note). */
export function applyRbf(state: RbfState, columns: readonly BasisColumn[]): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const xs = columns.map((c) => readNumbers(c, "rbf", notes));
  const n = xs.length === 0 ? 0 : xs[0].length;
  const out = state.centres.map(() => new Float64Array(n));
  const twoS2 = 2 * state.width * state.width;
  const z = new Array<number>(xs.length);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < xs.length; j++) z[j] = (xs[j][i] - state.means[j]) / state.sds[j];
    state.centres.forEach((c, t) => {
      out[t][i] = Math.exp(-dist2(z, c) / twoS2);
    });
  }
  return { names: [...state.names], columns: out, notes };
}
