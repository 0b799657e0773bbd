/**
 * Products of numeric columns: one interaction product (a*b), all pairwise products of a set of
 * columns, or every monomial of several columns up to a total degree (a multivariate raw polynomial:
 * for a, b and degree 2: a, b, a^2, a*b, b^2).
 *
 * Term order: by total degree, then in the order of combinations with repetition of the columns as
 * listed (a^2, a*b, b^2), so names are predictable.
 * Text columns in a product or in pairs are coded as indicator columns first (levels.ts: reference =
 * most frequent level) and the product is taken with each indicator: "dose*sex=M". A polynomial of
 * several columns needs numbers. Raw (not orthogonal) monomials: centre or scale
 * the inputs first (z) when the columns are large, to keep the products well conditioned.
 * Reference: Hastie, Tibshirani & Friedman, The Elements of Statistical Learning, 2nd ed., sec. 5.1
 * (polynomial and interaction basis expansions).
 */
import { type BasisBlock, type BasisColumn, readNumbers } from "./common";
import { applyLevels, fitLevels, type LevelsState } from "./levels";

/** Stored state of a product basis: one exponent vector per generated column. */
export interface ProductsState {
  kind: "products";
  sources: string[];
  /** terms[t][j] = power of sources[j] in generated column t. */
  terms: number[][];
  /** Per source: the indicator coding of a text column, or null for a numeric one. */
  levels: (LevelsState | null)[];
  names: string[];
}

/** Which products to make. */
export type ProductsOptions = { mode: "product" } | { mode: "pairs" } | { mode: "polynomial"; degree: number };

/** Largest total degree of a multivariate polynomial. */
export const MAX_TOTAL_DEGREE = 6;

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
 * For each term (an exponent vector), its generated columns: the indicator slot used of each
 * factor with a positive power (0 for a numeric factor) and the column name, in output order.
 */
export function expandTerm(sources: readonly string[], powers: readonly number[], levels: readonly (LevelsState | null)[]): { slots: number[]; name: string }[] {
  let out: { slots: number[]; parts: string[] }[] = [{ slots: [], parts: [] }];
  powers.forEach((p, j) => {
    if (p === 0) return;
    const lv = levels[j];
    const options = lv ? lv.names.map((name, slot) => ({ slot, part: name })) : [{ slot: 0, part: p === 1 ? sources[j] : `${sources[j]}^${p}` }];
    const next: typeof out = [];
    for (const o of out) for (const opt of options) next.push({ slots: [...o.slots, opt.slot], parts: [...o.parts, opt.part] });
    out = next;
  });
  return out.map((o) => ({ slots: o.slots, name: o.parts.join("*") }));
}

function isText(c: BasisColumn): boolean {
  return c.values.some((v) => typeof v === "string");
}

/**
 * Fit a product basis: fixes the list of terms, and the indicator coding of any text column in a
 * product or in pairs.
 * @throws OddsmithError BASIS_NEEDS_NUMBERS for a text column in a multi-column polynomial.
 * @example fitProducts([a, b], { mode: "polynomial", degree: 2 }).names // ["a", "b", "a^2", "a*b", "b^2"]
 */
export function fitProducts(columns: readonly BasisColumn[], options: ProductsOptions): ProductsState {
  const label = options.mode === "polynomial" ? "poly" : options.mode === "pairs" ? "pairs" : "product";
  const levels = columns.map((c) => {
    if (options.mode !== "polynomial" && isText(c)) return fitLevels(c);
    readNumbers(c, label, null, true);
    return null;
  });
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
  const names = terms.flatMap((p) => expandTerm(sources, p, levels).map((t) => t.name));
  return { kind: "products", sources, terms, levels, names };
}

/**
 * Apply a product basis. A blank or text cell in a numeric factor, a blank or unseen level in a text
 * factor: NaN in the columns that use it, and a row note.
 */
export function applyProducts(state: ProductsState, columns: readonly BasisColumn[]): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const levels = state.levels ?? state.sources.map(() => null);
  const factors: Float64Array[][] = columns.map((c, j) => {
    const lv = levels[j];
    if (!lv) return [readNumbers(c, "product", notes)];
    const b = applyLevels(lv, c);
    notes.push(...b.notes);
    return b.columns;
  });
  const n = columns.length === 0 ? 0 : columns[0].values.length;
  const out: Float64Array[] = [];
  for (const powers of state.terms) {
    const used = powers.map((p, j) => ({ p, j })).filter((t) => t.p > 0);
    for (const { slots } of expandTerm(state.sources, powers, levels)) {
      const col = new Float64Array(n).fill(1);
      used.forEach(({ p, j }, t) => {
        const f = factors[j][slots[t]];
        for (let i = 0; i < n; i++) col[i] *= p === 1 ? f[i] : Math.pow(f[i], p);
      });
      out.push(col);
    }
  }
  return { names: [...state.names], columns: out, notes };
}
