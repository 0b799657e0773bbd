/**
 * Products of numeric columns: one interaction product (a*b), all pairwise products of a set of
 * columns, or every monomial of several columns up to a total degree (a multivariate raw polynomial:
 * for a, b and degree 2: a, b, a^2, a*b, b^2).
 *
 * Term order: by total degree, then in the order of combinations with repetition of the columns as
 * listed (a^2, a*b, b^2), so names are predictable. Raw (not orthogonal) monomials: centre or scale
 * the inputs first (z) when the columns are large, to keep the products well conditioned.
 * Reference: Hastie, Tibshirani & Friedman, The Elements of Statistical Learning, 2nd ed., sec. 5.1
 * (polynomial and interaction basis expansions).
 */
import { type BasisBlock, type BasisColumn, readNumbers } from "./common";

/** Stored state of a product basis: one exponent vector per generated column. */
export interface ProductsState {
  kind: "products";
  sources: string[];
  /** terms[t][j] = power of sources[j] in generated column t. */
  terms: number[][];
  names: string[];
}

/** Which products to make. */
export type ProductsOptions = { mode: "product" } | { mode: "pairs" } | { mode: "polynomial"; degree: number };

/** Largest total degree of a multivariate polynomial. */
export const MAX_TOTAL_DEGREE = 6;

/** Name of one monomial: "a*b", "a^2*b". */
export function monomialName(sources: readonly string[], powers: readonly number[]): string {
  return powers
    .map((p, j) => (p === 0 ? "" : p === 1 ? sources[j] : `${sources[j]}^${p}`))
    .filter((s) => s !== "")
    .join("*");
}

/** All exponent vectors of total degree exactly d over m columns, in combinations-with-repetition order. */
function monomialsOfDegree(m: number, d: number): number[][] {
  const out: number[][] = [];
  const walk = (start: number, left: number, powers: number[]) => {
    if (left === 0) {
      out.push([...powers]);
      return;
    }
    for (let j = start; j < m; j++) {
      powers[j]++;
      walk(j, left - 1, powers);
      powers[j]--;
    }
  };
  walk(0, d, new Array<number>(m).fill(0));
  return out;
}

/**
 * Fit a product basis (nothing is learned from the values; checks the columns hold numbers and fixes
 * the list of terms).
 * @throws OddsmithError BASIS_NEEDS_NUMBERS for a text column.
 * @example fitProducts([a, b], { mode: "polynomial", degree: 2 }).names // ["a", "b", "a^2", "a*b", "b^2"]
 */
export function fitProducts(columns: readonly BasisColumn[], options: ProductsOptions): ProductsState {
  const label = options.mode === "polynomial" ? "poly" : options.mode === "pairs" ? "pairs" : "product";
  for (const c of columns) readNumbers(c, label, null, true);
  const m = columns.length;
  let terms: number[][] = [];
  if (options.mode === "product") terms = [new Array<number>(m).fill(1)];
  else if (options.mode === "pairs") {
    for (let i = 0; i < m; i++)
      for (let j = i + 1; j < m; j++) {
        const p = new Array<number>(m).fill(0);
        p[i] = 1;
        p[j] = 1;
        terms.push(p);
      }
  } else for (let d = 1; d <= options.degree; d++) terms = terms.concat(monomialsOfDegree(m, d));
  const sources = columns.map((c) => c.name);
  return { kind: "products", sources, terms, names: terms.map((p) => monomialName(sources, p)) };
}

/** Apply a product basis (a blank or text cell in any factor: NaN in that row and a row note). */
export function applyProducts(state: ProductsState, columns: readonly BasisColumn[]): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const xs = columns.map((c) => readNumbers(c, "product", notes));
  const n = xs.length === 0 ? 0 : xs[0].length;
  const out = state.terms.map((powers) => {
    const col = new Float64Array(n).fill(1);
    powers.forEach((p, j) => {
      if (p === 0) return;
      for (let i = 0; i < n; i++) col[i] *= p === 1 ? xs[j][i] : Math.pow(xs[j][i], p);
    });
    return col;
  });
  return { names: [...state.names], columns: out, notes };
}
