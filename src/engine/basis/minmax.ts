/**
 * Min-max scaling of one column: (x - min) / (max - min) with the training minimum and maximum, so
 * training values fall in [0, 1]. New values outside the training range are scaled by the same
 * line (below 0 or above 1) rather than clipped: the value stays honest and the row gets no note.
 * Reference: Han, Kamber & Pei, Data Mining: Concepts and Techniques, 3rd ed., sec. 3.5.2.
 */
import { problem } from "../messages";
import { type BasisBlock, type BasisColumn, finiteValues, readNumbers } from "./common";

/** Stored state of min-max scaling. */
export interface MinmaxState {
  kind: "minmax";
  source: string;
  min: number;
  max: number;
  names: string[];
}

/**
 * Fit min-max scaling on the training values.
 * @throws OddsmithError BASIS_TOO_FEW_VALUES when the training values are all equal.
 * @example fitMinmax({ name: "x", values: [2, 4, 10] }) // min 2, max 10
 */
export function fitMinmax(column: BasisColumn): MinmaxState {
  const x = finiteValues(readNumbers(column, "minmax", null, true));
  let min = Infinity;
  let max = -Infinity;
  for (const v of x) {
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (!(max > min)) {
    throw problem("BASIS_TOO_FEW_VALUES", {
      transform: "minmax",
      column: column.name,
      needed: 2,
      found: x.length === 0 ? 0 : 1,
      hint: "A column with one value cannot be scaled: leave it out.",
    });
  }
  return { kind: "minmax", source: column.name, min, max, names: [`minmax(${column.name})`] };
}

/** Apply min-max scaling with the stored training range (blank/text: NaN and a row note). */
export function applyMinmax(state: MinmaxState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const x = readNumbers(column, "minmax", notes);
  // Halved first: max - min of values near +-1.7e308 overflows to Infinity (every result would be
  // 0 or NaN), while max/2 - min/2 and x/2 - min/2 are finite; the quotient is the same.
  const range = state.max / 2 - state.min / 2;
  const low = state.min / 2;
  return { names: [...state.names], columns: [x.map((v) => (v / 2 - low) / range)], notes };
}
