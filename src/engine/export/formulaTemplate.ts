/**
 * Formula templates: a written formula as text pieces and symbolic references, rendered for any
 * data row once the block's place on the sheet is known. A template never holds an address, so the
 * same plan serves the cell function (which lists the formulas) and the task pane (which writes
 * them row by row), wherever the block goes.
 *
 * Reference forms (one line each):
 * - source: the cell of a named data column in the scored row, column fixed ("$B7", "Data!$B7");
 * - block: a cell of the scoring block in the same row ("K7"), by the key of its column;
 * - coefficient / threshold: a fixed cell of the coefficient table ("$R$3").
 */
import { fixedCell, rowCell, sheetPrefix, columnLetters } from "./cellReference";

/** Which column map a source reference uses: the model's predictor columns, or the raw data columns a basis reads. */
export type SourceMap = "predictors" | "data";

export type FormulaPart =
  | string
  | { kind: "source"; map: SourceMap; name: string }
  | { kind: "block"; key: string }
  | { kind: "blockRange"; from: string; to: string }
  | { kind: "coefficient"; equation: number; term: number }
  | { kind: "threshold" };

export type Formula = readonly FormulaPart[];

/** Join text pieces and templates into one template (nested arrays are flattened). */
export function formula(...parts: (FormulaPart | Formula)[]): FormulaPart[] {
  const out: FormulaPart[] = [];
  for (const p of parts) {
    if (Array.isArray(p)) out.push(...(p as FormulaPart[]));
    else out.push(p as FormulaPart);
  }
  return out;
}

/** A template's parts separated by `sep`: join([a, b], "+") is a+b. */
export function joinFormulas(items: readonly Formula[], sep: string): FormulaPart[] {
  const out: FormulaPart[] = [];
  items.forEach((f, i) => {
    if (i > 0) out.push(sep);
    out.push(...f);
  });
  return out;
}

/** A sheet column a source name maps to, and the sheet row of its data row 0. */
export interface SheetColumn {
  sheet: string;
  column: number;
  firstRow: number;
}

/** Where the scoring block, its sources and its coefficient table are on the sheets. */
export interface BlockPlacement {
  /** Sheet of the scoring block. */
  sheet: string;
  /** Sheet column of the block's first column. */
  left: number;
  /** Sheet row of the block's header; data row i is on headerRow + 1 + i. */
  headerRow: number;
  /** The model's predictor columns by header. */
  predictors: ReadonlyMap<string, SheetColumn>;
  /** The raw data columns by header (the columns a basis recipe reads). */
  data: ReadonlyMap<string, SheetColumn>;
  /** Top-left cell (header) of the coefficient table. */
  coefficients: { sheet: string; top: number; left: number };
}

/** How the symbolic references of a plan resolve: block keys to columns, coefficients to cells. */
export interface ReferenceResolver {
  /** Block column (0-based within the block) of a key. */
  blockIndex(key: string): number;
  /** Coefficient table row (0-based, after the header) of equation e, term t. */
  coefficientRow(equation: number, term: number): number;
  /** Coefficient table row (0-based, after the header) of the threshold. */
  thresholdRow(): number;
}

/** The column of the coefficient table that holds the numbers (0-based): class, term, coefficient. */
export const COEFFICIENT_VALUE_COLUMN = 2;

/**
 * Render a template as formula text for data row `i` (0-based), with its leading "=".
 * @throws Error for a source name the placement does not map (the plan checks every source first)
 */
export function renderFormula(template: Formula, place: BlockPlacement, resolve: ReferenceResolver, i: number): string {
  const blockRow = place.headerRow + 1 + i;
  const coef = place.coefficients;
  const coefPrefix = sheetPrefix(coef.sheet, place.sheet);
  let text = "=";
  for (const p of template) {
    if (typeof p === "string") {
      text += p;
      continue;
    }
    switch (p.kind) {
      case "source": {
        const at = (p.map === "data" ? place.data : place.predictors).get(p.name);
        if (!at) throw new Error(`source column "${p.name}" is not placed`);
        text += sheetPrefix(at.sheet, place.sheet) + rowCell(at.column, at.firstRow + i);
        break;
      }
      case "block":
        text += `${columnLetters(place.left + resolve.blockIndex(p.key))}${blockRow}`;
        break;
      case "blockRange":
        text += `${columnLetters(place.left + resolve.blockIndex(p.from))}${blockRow}:${columnLetters(place.left + resolve.blockIndex(p.to))}${blockRow}`;
        break;
      case "coefficient":
        text += coefPrefix + fixedCell(coef.left + COEFFICIENT_VALUE_COLUMN, coef.top + 1 + resolve.coefficientRow(p.equation, p.term));
        break;
      case "threshold":
        text += coefPrefix + fixedCell(coef.left + COEFFICIENT_VALUE_COLUMN, coef.top + 1 + resolve.thresholdRow());
        break;
    }
  }
  return text;
}
