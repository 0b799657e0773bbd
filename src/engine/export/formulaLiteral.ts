/**
 * Literals inside written formulas: numbers that read back as the same double, text in quotes,
 * and one-row array constants.
 *
 * Policy (one line each):
 * - A number is written with the shortest digits that read back as the same double (up to 17
 *   significant digits), exponent as "E"; a negative number is wrapped in parentheses, because a
 *   spreadsheet's unary minus binds tighter than "^" (-2^2 is 4).
 * - Text is quoted with inner quotes doubled; text longer than MAX_TEXT_LITERAL characters cannot
 *   be a literal (the limit of a text constant in a formula), so the caller says so and leaves that
 *   column to the add-in.
 * Reference: Microsoft, "Excel specifications and limits" (255 characters per text constant in a
 * formula, 8,192 characters per formula); ECMA-376 Part 1, sec. 18.17.2 (formula syntax, array
 * constants with "," between columns).
 */

/** Longest text a formula may hold as one constant. */
export const MAX_TEXT_LITERAL = 255;

/**
 * A number as formula text: "0.125", "1.5E-7", "(-3.25)". Non-finite numbers have no literal.
 * @throws Error for a non-finite number (callers check first; it is a bug to get here)
 * @example numberLiteral(-0.5) // "(-0.5)"
 */
export function numberLiteral(x: number): string {
  if (!Number.isFinite(x)) throw new Error(`no formula literal for ${x}`);
  if (x === 0) return "0";
  const text = String(x).toUpperCase().replace("E+", "E");
  return x < 0 ? `(${text})` : text;
}

/** True when `text` can be written as one text constant. */
export function fitsTextLiteral(text: string): boolean {
  return text.length <= MAX_TEXT_LITERAL;
}

/** Text as formula text: "North" -> "\"North\"", with inner quotes doubled. */
export function textLiteral(text: string): string {
  return `"${text.replace(/"/g, '""')}"`;
}

/** A one-row array constant of text: {"a","b"}. */
export function textArrayLiteral(items: readonly string[]): string {
  return `{${items.map(textLiteral).join(",")}}`;
}

/** A one-row array constant of numbers: {1,2,3}. */
export function numberArrayLiteral(items: readonly number[]): string {
  // Array constants take a leading minus without parentheses.
  return `{${items.map((x) => String(x).toUpperCase().replace("E+", "E")).join(",")}}`;
}
