/**
 * Categories as formulas: a text column becomes one "levels" column holding the code of the row's
 * category (1, 2, ...; 0 for a blank or a category the model has not seen), and each indicator
 * term is 1 when the code is its category's, 0 otherwise, or #N/A when the code is 0, so a row the
 * add-in would not score shows an error rather than a silently wrong number.
 *
 * Matching policy (one line each):
 * - The cell's text is compared with EXACT after TRIM: case-sensitive, surrounding spaces ignored,
 *   as the range parser and the basis levels do (TRIM also joins runs of inner spaces, which the
 *   add-in keeps: such a category is unmatched in the formula and shows #N/A).
 * - Pooled rare categories share the code of "(other)"; the reference category has a code but no
 *   indicator term.
 * - A category longer than a text constant may be (MAX_TEXT_LITERAL) cannot be written.
 * Reference: treatment coding (Agresti, Categorical Data Analysis, 3rd ed., sec. 5.3); EXACT and
 * TRIM as defined in ECMA-376 Part 1, sec. 18.17.7.
 */
import type { LevelsState } from "../basis/levels";
import type { ColumnEncoding } from "../data/design";
import { OTHER_LEVEL } from "../data/design";
import { fitsTextLiteral, numberArrayLiteral, textArrayLiteral } from "./formulaLiteral";
import { formula, type Formula } from "./formulaTemplate";

/** How the categories of one column map to codes, and which code each indicator term stands for. */
export interface LevelCoding {
  /** Header of the column the categories come from. */
  source: string;
  /** Every category text that has a code. */
  texts: string[];
  /** Code of each text (1-based), parallel to `texts`. */
  codes: number[];
  /** Code of each indicator term, in the coding's term order. */
  slotCodes: number[];
}

/** The coding of a text predictor of the model (design encoding: sorted levels, "(other)" last when pooled). */
export function designCoding(c: ColumnEncoding & { kind: "category" }): LevelCoding {
  const texts: string[] = [];
  const codes: number[] = [];
  const pooledCode = c.pooled.length > 0 ? c.levels.indexOf(OTHER_LEVEL) + 1 : 0;
  c.levels.forEach((l, i) => {
    // "(other)" stands for the pooled categories, which are listed below with its code.
    if (pooledCode > 0 && i === pooledCode - 1) return;
    texts.push(l);
    codes.push(i + 1);
  });
  for (const p of c.pooled) {
    texts.push(p);
    codes.push(pooledCode);
  }
  const slotCodes = c.levels.map((_, i) => i + 1).filter((_, i) => c.levels[i] !== c.reference);
  return { source: c.name, texts, codes, slotCodes };
}

/** The coding of a basis "levels" state (levels in order of first appearance, "(other)" last). */
export function basisCoding(state: LevelsState): LevelCoding {
  const texts = [...state.levels];
  const codes = state.levels.map((_, i) => i + 1);
  const otherCode = state.levels.length + 1;
  for (const p of state.pooled) {
    texts.push(p);
    codes.push(otherCode);
  }
  const slotCodes = state.levels.map((_, i) => i + 1).filter((_, i) => state.levels[i] !== state.reference);
  if (state.pooled.length > 0) slotCodes.push(otherCode);
  return { source: state.source, texts, codes, slotCodes };
}

/** The first category too long to be a text constant, or null when all fit. */
export function unwritableLevel(coding: LevelCoding): string | null {
  return coding.texts.find((t) => !fitsTextLiteral(t)) ?? null;
}

/** A key that is the same for two codings that give every category the same code. */
export function codingKey(coding: LevelCoding): string {
  return JSON.stringify([coding.source, coding.texts, coding.codes]);
}

/**
 * The code of the row's category: SUMPRODUCT(EXACT(TRIM(cell),{"a","b"})*{1,2}); 0 when nothing matches.
 * @example codeFormula(coding, cellRef) // =SUMPRODUCT(EXACT(TRIM($B2),{"North","South"})*{1,2})
 */
export function codeFormula(coding: LevelCoding, cell: Formula): Formula {
  return formula("SUMPRODUCT(EXACT(TRIM(", cell, `),${textArrayLiteral(coding.texts)})*${numberArrayLiteral(coding.codes)})`);
}

/** The indicator of `code`: IF(c=0,NA(),IF(c=k,1,0)). */
export function indicatorFormula(codeCell: Formula, code: number): Formula {
  return formula("IF(", codeCell, "=0,NA(),IF(", codeCell, `=${code},1,0))`);
}
