/**
 * Basis columns as formulas: column k of a fitted basis state (src/engine/basis/) written with
 * built-in functions over the row's numeric inputs and category codes, computing what the
 * transform's apply step computes (the same operations in the same order where that matters).
 *
 * Per transform (one line each):
 * - raw x; poly x^k; opoly product of (x - root) over the norm (orthogonalPolynomialFormula.ts);
 * - products and pairs: x1*x2^2..., a text factor as its indicator;
 * - log LN(x+s), log1p LN(1+(x+s)), sqrt SQRT(x+s), inv 1/(x+s): a value outside the domain is a
 *   #NUM! or #DIV/0! error in the sheet where the add-in leaves the row unscored;
 * - z (x-mean)/sd; minmax (x/2-min/2)/(max/2-min/2), halved as the add-in does;
 * - levels: the indicator of the row's category code (levelCoding.ts);
 * - bins: IF(AND(x>e_j,x<=e_j+1),1,0), the outer bins open-ended;
 * - ns: the truncated power form (splineFormula.ts);
 * - rbf: EXP(-sum((x-mean)/sd-centre)^2/(2 width^2)).
 * A transform whose category text is too long for a text constant cannot be written: the reason
 * is returned and the caller leaves the column to the add-in.
 */
import type { BasisState } from "../basis";
import { expandTerm } from "../basis/products";
import { numberLiteral } from "./formulaLiteral";
import { formula, joinFormulas, type Formula, type FormulaPart } from "./formulaTemplate";
import { basisCoding, indicatorFormula, type LevelCoding, unwritableLevel } from "./levelCoding";
import { orthogonalRoots } from "./orthogonalPolynomialFormula";
import { nsColumnFormula, splinePowerForm } from "./splineFormula";

/** What a basis formula may refer to: the row's numeric input and category code of a raw data column. */
export interface BasisInputs {
  /** The numeric input cell of data column `source` (a number, or an error for a blank or text). */
  numeric(source: string): Formula;
  /** The code cell of a category coding of a data column. */
  code(coding: LevelCoding): Formula;
}

/** A written column, or why it cannot be written. */
export type BasisColumnFormula = { formula: Formula } | { reason: string };

/** Text too long for a constant in a coding: the reason, or null. */
function longLevelReason(coding: LevelCoding): string | null {
  const level = unwritableLevel(coding);
  return level === null ? null : `the category "${level.slice(0, 40)}..." of ${coding.source} is longer than a formula's text constant may be (255 characters)`;
}

function power(x: Formula, p: number): Formula {
  return p === 1 ? x : formula(x, `^${p}`);
}

function pointwiseFormula(fn: string, x: Formula, shift: number): Formula {
  const v = shift === 0 ? x : formula("(", x, `+${numberLiteral(shift)})`);
  switch (fn) {
    case "log":
      return formula("LN(", v, ")");
    case "log1p":
      return formula("LN(1+", v, ")");
    case "sqrt":
      return formula("SQRT(", v, ")");
    default:
      return formula("(1/", v, ")");
  }
}

function binsFormula(edges: readonly number[], k: number, x: Formula): Formula {
  const above = formula(x, `>${numberLiteral(edges[k])}`);
  if (k + 1 >= edges.length) return formula("IF(", above, ",1,0)");
  return formula("IF(AND(", above, ",", x, `<=${numberLiteral(edges[k + 1])}),1,0)`);
}

function rbfFormula(state: BasisState & { kind: "rbf" }, k: number, inputs: BasisInputs): Formula {
  const centre = state.centres[k];
  const squares = state.sources.map((s, j) =>
    formula("((", inputs.numeric(s), `-${numberLiteral(state.means[j])})/${numberLiteral(state.sds[j])}-${numberLiteral(centre[j])})^2`),
  );
  const twoS2 = 2 * state.width * state.width;
  return formula("EXP(-(", joinFormulas(squares, "+"), `)/${numberLiteral(twoS2)})`);
}

function productsFormula(state: BasisState & { kind: "products" }, k: number, inputs: BasisInputs): BasisColumnFormula {
  const levels = state.levels ?? state.sources.map(() => null);
  let at = 0;
  for (const powers of state.terms) {
    for (const { slots } of expandTerm(state.sources, powers, levels)) {
      if (at++ !== k) continue;
      const factors: Formula[] = [];
      let slot = 0;
      for (let j = 0; j < powers.length; j++) {
        if (powers[j] === 0) continue;
        const lv = levels[j];
        if (!lv) factors.push(power(inputs.numeric(state.sources[j]), powers[j]));
        else {
          const coding = basisCoding(lv);
          const reason = longLevelReason(coding);
          if (reason) return { reason };
          factors.push(formula("(", indicatorFormula(inputs.code(coding), coding.slotCodes[slots[slot]]), ")"));
          // A text factor's power is 1 (products and pairs only); an indicator's powers equal it anyway.
        }
        slot++;
      }
      return { formula: joinFormulas(factors, "*") };
    }
  }
  return { reason: `column ${k + 1} of the products is not in the stored state` };
}

function opolyFormula(state: BasisState & { kind: "poly" }, k: number, x: Formula): Formula {
  const roots = orthogonalRoots(state)[k];
  const unit = state.unit ?? 1;
  const scaled = unit === 1 ? x : formula("(", x, `/${numberLiteral(unit)})`);
  const factors: FormulaPart[][] = roots.map((r) => formula("(", scaled, `-${numberLiteral(r)})`));
  return formula("(", joinFormulas(factors, "*"), `)/${numberLiteral(Math.sqrt(state.norm2[k + 2]))}`);
}

/**
 * The formula of column k (0-based, in `state.names` order) of a fitted basis state.
 * @example basisColumnFormula(zscoreState, 0, inputs) // { formula: (x-41.5)/12.25 }
 */
export function basisColumnFormula(state: BasisState, k: number, inputs: BasisInputs): BasisColumnFormula {
  switch (state.kind) {
    case "raw":
      return { formula: inputs.numeric(state.source) };
    case "poly":
      return { formula: state.orthogonal ? opolyFormula(state, k, inputs.numeric(state.source)) : power(inputs.numeric(state.source), k + 1) };
    case "products":
      return productsFormula(state, k, inputs);
    case "pointwise":
      return { formula: pointwiseFormula(state.fn, inputs.numeric(state.source), state.shift) };
    case "zscore":
      return { formula: formula("(", inputs.numeric(state.source), `-${numberLiteral(state.mean)})/${numberLiteral(state.sd)}`) };
    case "minmax":
      return {
        formula: formula("(", inputs.numeric(state.source), `/2-${numberLiteral(state.min / 2)})/${numberLiteral(state.max / 2 - state.min / 2)}`),
      };
    case "levels": {
      const coding = basisCoding(state);
      const reason = longLevelReason(coding);
      if (reason) return { reason };
      return { formula: indicatorFormula(inputs.code(coding), coding.slotCodes[k]) };
    }
    case "bins":
      return { formula: binsFormula(state.edges, k, inputs.numeric(state.source)) };
    case "ns":
      return { formula: nsColumnFormula(state, splinePowerForm(state), k, inputs.numeric(state.source)) };
    case "rbf":
      return { formula: rbfFormula(state, k, inputs) };
  }
}
