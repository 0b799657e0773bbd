/**
 * Identity: pass a numeric column through unchanged (so a recipe can keep "age" next to "age^2").
 * Blank or text cells give NaN and a row note, like every numeric transform.
 */
import { type BasisBlock, type BasisColumn, readNumbers } from "./common";

/** Stored state of the identity transform (nothing to learn but the name). */
export interface RawState {
  kind: "raw";
  source: string;
  names: string[];
}

/**
 * "Fit" the identity: checks the column holds numbers.
 * @throws OddsmithError BASIS_NEEDS_NUMBERS for a text column.
 * @example fitRaw({ name: "age", values: [30, 41] }).names // ["age"]
 */
export function fitRaw(column: BasisColumn): RawState {
  readNumbers(column, "raw", null, true);
  return { kind: "raw", source: column.name, names: [column.name] };
}

/** Apply the identity (blank/text: NaN and a row note). */
export function applyRaw(state: RawState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  return { names: [...state.names], columns: [readNumbers(column, "raw", notes)], notes };
}
