/**
 * Basis columns: stateful transforms that turn raw columns into non-linear basis columns.
 *
 * Each transform has a `fitX` (learns a plain, JSON-serializable state from training rows) and an
 * `applyX` (uses only that state), so that rows scored later are transformed exactly as the training
 * rows were. Per-row problems (blank, text in a numeric column, value outside a function's domain,
 * unseen category) give NaN in that row plus a RowNote; they never fail the whole call.
 * The recipe language (recipe.ts) names transforms per column; docs/basis-recipes.md documents it.
 */
import { problem } from "../messages";
import { applyBins, type BinsState } from "./bins";
import type { BasisBlock, BasisColumn } from "./common";
import { applyLevels, type LevelsState } from "./levels";
import { applyMinmax, type MinmaxState } from "./minmax";
import { applyNs, type NsState } from "./ns";
import { applyPointwise, type PointwiseState } from "./pointwise";
import { applyPoly, type PolyState } from "./poly";
import { applyProducts, type ProductsState } from "./products";
import { applyRaw, type RawState } from "./raw";
import { applyRbf, type RbfState } from "./rbf";
import { applyZscore, type ZscoreState } from "./zscore";

export * from "./common";
export * from "./bins";
export * from "./levels";
export * from "./minmax";
export * from "./ns";
export * from "./pointwise";
export * from "./poly";
export * from "./products";
export * from "./raw";
export * from "./rbf";
export * from "./zscore";
export * from "./kmeans";
export * from "./prng";

/** The stored state of any basis transform (a tagged union on `kind`). */
export type BasisState =
  | RawState
  | PolyState
  | ProductsState
  | PointwiseState
  | ZscoreState
  | MinmaxState
  | LevelsState
  | NsState
  | RbfState
  | BinsState;

/** The source column names a state reads, in order. */
export function sourcesOf(state: BasisState): string[] {
  return "sources" in state ? [...state.sources] : [state.source];
}

/**
 * Apply any stored state to rows. `lookup` returns the column with a given source name (the caller
 * decides how names are matched and reports a missing one).
 */
export function applyBasisState(state: BasisState, lookup: (name: string) => BasisColumn): BasisBlock {
  const cols = sourcesOf(state).map(lookup);
  switch (state.kind) {
    case "raw":
      return applyRaw(state, cols[0]);
    case "poly":
      return applyPoly(state, cols[0]);
    case "products":
      return applyProducts(state, cols);
    case "pointwise":
      return applyPointwise(state, cols[0]);
    case "zscore":
      return applyZscore(state, cols[0]);
    case "minmax":
      return applyMinmax(state, cols[0]);
    case "levels":
      return applyLevels(state, cols[0]);
    case "ns":
      return applyNs(state, cols[0]);
    case "rbf":
      return applyRbf(state, cols);
    case "bins":
      return applyBins(state, cols[0]);
    default:
      throw problem("INTERNAL", { doing: `applying a stored basis of unknown kind "${(state as { kind: string }).kind}"` });
  }
}
