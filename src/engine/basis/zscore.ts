/**
 * Standardization (z-score) of one column: (x - mean) / sd with the training mean and the SAMPLE
 * standard deviation (divisor n - 1), as R's scale() does. New rows use the stored training mean
 * and sd, so a new row gets the same value it would get inside the training set.
 * Reference: any introductory statistics text; R Core, base::scale.
 */
import { problem } from "../messages";
import { type BasisBlock, type BasisColumn, finiteValues, readNumbers } from "./common";

/** Stored state of a z-score. */
export interface ZscoreState {
  kind: "zscore";
  source: string;
  mean: number;
  /** Sample standard deviation (n - 1 divisor). */
  sd: number;
  names: string[];
}

/**
 * Fit a z-score: training mean and sample SD (two-pass, so a large common offset loses no digits).
 * @throws OddsmithError BASIS_TOO_FEW_VALUES when fewer than 2 distinct training values (SD 0 or undefined).
 * @example fitZscore({ name: "x", values: [1, 2, 3] }) // mean 2, sd 1
 */
export function fitZscore(column: BasisColumn): ZscoreState {
  const x = finiteValues(readNumbers(column, "z", null, true));
  const n = x.length;
  let mean = 0;
  for (const v of x) mean += v;
  mean /= n;
  // A sum beyond the double range (values near 1e308): average the scaled values instead.
  if (!Number.isFinite(mean)) {
    mean = 0;
    for (const v of x) mean += v / n;
  }
  let ss = 0;
  for (const v of x) ss += (v - mean) * (v - mean);
  let sd = Math.sqrt(ss / (n - 1));
  // Squares of deviations near 1e300 overflow (every z would be 0) and near 1e-300 underflow (the
  // column would look constant): then scale the deviations by the largest one before squaring.
  if (!Number.isFinite(sd) || sd < 1e-140) sd = scaledSampleSd(x, mean);
  if (!(n >= 2 && sd > 0)) {
    throw problem("BASIS_TOO_FEW_VALUES", {
      transform: "z",
      column: column.name,
      needed: 2,
      found: new Set(x).size,
      hint: "A column with one value cannot be standardized: leave it out.",
    });
  }
  return { kind: "zscore", source: column.name, mean, sd, names: [`z(${column.name})`] };
}

/** Sample SD computed from deviations divided by the largest one (no overflow or underflow in the squares). */
function scaledSampleSd(x: ArrayLike<number>, mean: number): number {
  let big = 0;
  for (let i = 0; i < x.length; i++) big = Math.max(big, Math.abs(x[i] - mean));
  if (!(big > 0) || !Number.isFinite(big)) return big;
  let ss = 0;
  for (let i = 0; i < x.length; i++) ss += ((x[i] - mean) / big) ** 2;
  return big * Math.sqrt(ss / (x.length - 1));
}

/** Apply a z-score with the stored mean and SD (blank/text: NaN and a row note). */
export function applyZscore(state: ZscoreState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const x = readNumbers(column, "z", notes);
  return { names: [...state.names], columns: [x.map((v) => (v - state.mean) / state.sd)], notes };
}
