/**
 * How many basis columns a recipe would make, estimated from the plan and the data BEFORE any
 * transform is fitted, so a recipe whose output cannot fit the sheet is refused at once and the
 * work of every recipe is bounded by its (checked) output.
 *
 * Policy (one line each; an upper bound, never an underestimate):
 * - raw, z, minmax, log, log1p, sqrt, inv, product: 1 column per target (product: 1 in all).
 * - poly(d) on one column and opoly(d): d columns; poly(d) on m columns: every monomial of total
 *   degree 1..min(d, 6): C(m + d, d) - 1; pairs on m columns: m (m - 1) / 2.
 * - levels and auto on text: the column's distinct non-blank values (counted up to a cap, since any
 *   count past the sheet's columns is refused anyway); bins(k): k; rbf(k): k; ns: df or knots + 1.
 * The counting itself is one pass over each target column (a Set of at most `cap` values).
 */
import type { BasisColumn } from "./common";
import { MAX_TOTAL_DEGREE } from "./products";
import { findColumn, type RecipePlan, type StepSpec } from "./recipe";

/** C(n, k) as a double (exact for the sizes that matter; large values only need to be large). */
function choose(n: number, k: number): number {
  let c = 1;
  for (let i = 1; i <= k; i++) c = (c * (n - k + i)) / i;
  return Math.round(c);
}

/** Distinct non-blank values of a column, counted up to `cap` (then `cap`). */
function distinctValues(c: BasisColumn, cap: number): number {
  const seen = new Set<number | string>();
  for (const v of c.values) {
    if (v === null) continue;
    seen.add(typeof v === "string" ? v.trim() : v);
    if (seen.size >= cap) return cap;
  }
  return seen.size;
}

function stepColumns(spec: StepSpec, cols: readonly BasisColumn[], cap: number): number {
  const m = cols.length;
  switch (spec.transform) {
    case "product":
      return 1;
    case "pairs":
      return (m * (m - 1)) / 2;
    case "poly":
      return m > 1 ? choose(m + Math.min(spec.degree, MAX_TOTAL_DEGREE), Math.min(spec.degree, MAX_TOTAL_DEGREE)) - 1 : spec.degree;
    case "opoly":
      return m * spec.degree;
    case "rbf":
      return spec.k;
    case "bins":
      return m * spec.k;
    case "ns":
      return m * (spec.knots ? spec.knots.length + 1 : (spec.df ?? 1));
    case "levels":
      return cols.reduce((a, c) => a + distinctValues(c, cap), 0);
    case "auto":
      return cols.reduce((a, c) => a + (c.values.some((v) => typeof v === "string") ? distinctValues(c, cap) : 1), 0);
    default:
      return m;
  }
}

/**
 * Upper bound on the columns `plan` makes from `columns` (the training columns), without fitting.
 * @param cap - counting stops past this many columns (the caller refuses more anyway)
 * @throws OddsmithError RECIPE_UNKNOWN_COLUMN for a target that is not a column
 * @example estimateRecipeColumns(parseRecipe("a: poly(3); b: z"), cols, "data", 16384) // 4
 */
export function estimateRecipeColumns(plan: RecipePlan, columns: readonly BasisColumn[], argument: string, cap: number): number {
  const named = new Set<string>();
  for (const step of plan.steps) if (step.targets !== "*") for (const t of step.targets) named.add(findColumn(columns, t, argument).name);
  let total = 0;
  for (const step of plan.steps) {
    // "*": every column no other item names and that holds a value (as fitRecipe resolves it).
    const cols = step.targets === "*" ? columns.filter((c) => !named.has(c.name) && c.values.some((v) => v !== null)) : step.targets.map((t) => findColumn(columns, t, argument));
    total += stepColumns(step.spec, cols, cap + 1);
    if (total > cap) return total;
  }
  return total;
}
