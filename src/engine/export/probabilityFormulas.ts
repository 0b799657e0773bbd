/**
 * The probability end of a scoring block: linear predictors from the coefficient cells, the
 * sigmoid (two classes) or softmax (several), and the predicted class, written so that no EXP can
 * overflow for any finite linear predictor.
 *
 * - Linear predictor of equation e: b_e0 + b_e1*t1 + ... (+ offset), each b a coefficient cell, so an
 *   edited coefficient takes effect at once.
 * - Sigmoid with the sign split: IF(eta>=0, 1/(1+EXP(-eta)), EXP(eta)/(1+EXP(eta))): the exponent is
 *   never positive.
 * - Softmax with the row maximum m subtracted: P_k = EXP(eta_k - m) / sum_l EXP(eta_l - m); in the
 *   reference form the reference class has eta = 0, so m = MAX(0, eta_1, ...).
 * - Predicted class: two classes, the positive one when P reaches the threshold cell; several, the
 *   most probable (the first on a tie), as the add-in decides.
 * Reference: Blanchard, Higham & Higham, "Accurately computing the log-sum-exp and softmax
 * functions", IMA J. Numer. Anal. 41 (2021) (the shifted softmax); the sign-split sigmoid is common
 * practice (as numerics.ts).
 */
import { textArrayLiteral, textLiteral } from "./formulaLiteral";
import { formula, joinFormulas, type Formula, type FormulaPart } from "./formulaTemplate";

/** The cell of a coefficient. */
function coefficient(equation: number, term: number): FormulaPart {
  return { kind: "coefficient", equation, term };
}

/**
 * Linear predictor of one equation: the intercept's cell, then each term's cell times its value.
 * @param values - formula of each term's value, null for the intercept
 * @param offset - formula of the offset, or null
 */
export function linearPredictorFormula(equation: number, values: readonly (Formula | null)[], offset: Formula | null): Formula {
  const parts: Formula[] = values.map((v, t) => (v === null ? formula(coefficient(equation, t)) : formula(coefficient(equation, t), "*", v)));
  if (offset) parts.push(offset);
  return parts.length ? joinFormulas(parts, "+") : formula("0");
}

/** Sigmoid of a linear predictor cell with the sign split (no EXP of a positive number). */
export function sigmoidFormula(eta: Formula): Formula {
  return formula("IF(", eta, ">=0,1/(1+EXP(-", eta, ")),EXP(", eta, ")/(1+EXP(", eta, ")))");
}

/** The row maximum of the linear predictors (with the reference class's 0 in the reference form). */
export function softmaxShiftFormula(etas: readonly Formula[], withReference: boolean): Formula {
  return formula("MAX(", withReference ? "0," : "", joinFormulas(etas, ","), ")");
}

/** The softmax denominator: sum of EXP(eta - m), the reference class contributing EXP(-m). */
export function softmaxSumFormula(etas: readonly Formula[], shift: Formula, withReference: boolean): Formula {
  const terms: Formula[] = etas.map((e) => formula("EXP(", e, "-", shift, ")"));
  if (withReference) terms.unshift(formula("EXP(-", shift, ")"));
  return joinFormulas(terms, "+");
}

/** One class's probability: EXP(eta - m) / sum, or EXP(-m) / sum for the reference class (eta null). */
export function softmaxProbabilityFormula(eta: Formula | null, shift: Formula, sum: Formula): Formula {
  return eta === null ? formula("EXP(-", shift, ")/", sum) : formula("EXP(", eta, "-", shift, ")/", sum);
}

/** Two classes: the positive class when P reaches the threshold cell, else the other. */
export function binaryClassFormula(probability: Formula, positive: string, negative: string): Formula {
  return formula("IF(", probability, ">=", { kind: "threshold" }, `,${textLiteral(positive)},${textLiteral(negative)})`);
}

/** Several classes: the first most probable class over the probability cells `first`..`last`. */
export function multiclassClassFormula(classes: readonly string[], first: string, last: string): Formula {
  const range: FormulaPart = { kind: "blockRange", from: first, to: last };
  // INDEX over a constant keeps the class names in the formula; MATCH finds the first maximum.
  return formula(`INDEX(${textArrayLiteral(classes)},MATCH(MAX(`, range, "),", range, ",0))");
}
