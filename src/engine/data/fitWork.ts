/**
 * Work estimates that refuse a fit before it starts when one call could not finish in a few seconds.
 *
 * Policy (one line each):
 * - Bias reduction (Firth 1993, "Bias reduction of maximum likelihood estimates", Biometrika 80:27-38)
 *   recomputes the hat values of every row at every Newton step: about rows x terms^2 operations per
 *   iteration, and up to 100 iterations when the penalized likelihood is flat.
 * - Measured on this project's machines (two shared cores, Node 20; bench/ case "firth at the work
 *   limit"): about 2e-9 s per row x term^2 per iteration (2,000 rows x 400 terms: 7.3 s in 11
 *   iterations; 400 rows x 200 terms: 1.3 s in 40 iterations).
 * - FIRTH_WORK_LIMIT bounds rows x terms^2 so that even 100 iterations stay near 5 s and a typical
 *   fit (about 10 iterations) takes under a second; above it, FIRTH_TOO_COSTLY names the size, the
 *   limit and an example of an accepted size.
 */
import { problem } from "../messages";

/** Largest rows x terms^2 of a bias-reduced fit (see the policy above). */
export const FIRTH_WORK_LIMIT = 2.5e7;

/** rows x terms^2: the work unit of one bias-reduced Newton step. */
export function firthWork(rows: number, terms: number): number {
  return rows * terms * terms;
}

/**
 * Refuse a bias-reduced (Firth) fit whose work would exceed FIRTH_WORK_LIMIT.
 * @param rows - rows used by the fit (after skipped rows)
 * @param terms - coefficients of the fit (intercept included)
 * @throws OddsmithError FIRTH_TOO_COSTLY
 * @example checkFirthWork(2000, 100) // passes (2e7); checkFirthWork(2000, 400) throws
 */
export function checkFirthWork(rows: number, terms: number): void {
  const work = firthWork(rows, terms);
  if (work <= FIRTH_WORK_LIMIT) return;
  const termsAtRows = Math.max(1, Math.floor(Math.sqrt(FIRTH_WORK_LIMIT / Math.max(1, rows))));
  throw problem("FIRTH_TOO_COSTLY", {
    rows: rows.toLocaleString("en-US"),
    terms: terms.toLocaleString("en-US"),
    work: work.toExponential(1),
    limit: FIRTH_WORK_LIMIT.toExponential(1),
    example: `at most ${termsAtRows.toLocaleString("en-US")} terms at ${rows.toLocaleString("en-US")} rows`,
  });
}
