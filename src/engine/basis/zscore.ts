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
  let ss = 0;
  for (const v of x) ss += (v - mean) * (v - mean);
  const sd = Math.sqrt(ss / (n - 1));
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

/** Apply a z-score with the stored mean and SD (blank/text: NaN and a row note). */
export function applyZscore(state: ZscoreState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const x = readNumbers(column, "z", notes);
  return { names: [...state.names], columns: [x.map((v) => (v - state.mean) / state.sd)], notes };
}
