/**
 * The diagnostics trainModel adds to a fit: the interval budget's note, the read's notes, skipped
 * rows, and the fitter's row numbers mapped back to the caller's data rows.
 *
 * Policy (one line each):
 * - Profile-likelihood intervals refit the model twice per term, about rows x terms^3 operations in
 *   all (measured: 1,000 rows x 50 terms 3 s, 2,000 rows x 100 terms 38 s); beyond PROFILE_BUDGET of
 *   those units the fit gives Wald intervals with a PROFILE_NOT_AVAILABLE note instead.
 * - A row missing any used value is skipped; the skip is counted per column in a ROWS_SKIPPED
 *   warning. Diagnostic row indices are mapped back to the caller's data rows (0-based, header
 *   excluded), and example rows in messages are numbered as in the user's range.
 */
import { skippedDetail, type BuiltDesign } from "../data/design";
import { rangeRow, type Table } from "../data/table";
import { exampleRows, fitDiagnostic, formatMessage, type MessageCode } from "../messages";
import type { Diagnostic, ModelFit } from "../types";

/** Largest rows x terms^3 for which profile-likelihood intervals are computed; see the policy above. */
export const PROFILE_BUDGET = 1e8;

/**
 * The interval method a binary fit can afford: "profile" falls back to "wald" (with a note) when
 * rows x terms^3 exceeds PROFILE_BUDGET.
 */
export function affordableIntervals(method: "wald" | "profile", rows: number, terms: number): { method: "wald" | "profile"; note: Diagnostic | null } {
  // Beyond the budget, Wald intervals replace profile intervals, with a note.
  if (method !== "profile" || rows * terms ** 3 <= PROFILE_BUDGET) return { method, note: null };
  const reason = `${rows} rows x ${terms} terms (that would take minutes; at most about ${Math.floor(Math.cbrt(PROFILE_BUDGET / Math.max(1, rows)))} terms at this many rows)`;
  return {
    method: "wald",
    note: { code: "PROFILE_NOT_AVAILABLE", severity: "note", message: formatMessage("PROFILE_NOT_AVAILABLE", { reason, shown: "Wald intervals" }) },
  };
}

/**
 * Diagnostic rows from the fitter index design rows: map them back to the caller's data rows, and
 * format the message again with the example rows numbered as in the user's range.
 */
function mapDiagnosticRows(fit: ModelFit, inputRows: Int32Array, predictors: Table): void {
  for (const d of fit.diagnostics) {
    if (!d.rows || d.rows.length === 0) continue;
    d.rows = d.rows.map((r) => (r >= 0 && r < inputRows.length ? inputRows[r] : r));
    if (d.params && "rows" in d.params) {
      d.params = { ...d.params, rows: exampleRows(d.rows, (r) => rangeRow(predictors, r)) };
      d.message = formatMessage(d.code as MessageCode, d.params);
    }
  }
}

/** Skipped rows are a warning carried in the result, counted per column. */
function skippedWarning(built: BuiltDesign): Diagnostic | null {
  if (built.skipped.total === 0) return null;
  return fitDiagnostic(
    "ROWS_SKIPPED",
    { count: built.skipped.total, detail: skippedDetail(built.skipped) },
    { columns: built.skipped.perColumn.map((c) => c.column), rows: built.skipped.rows.slice() },
  );
}

/**
 * Complete a fit's diagnostics: fitter rows mapped to data rows, then the read's notes, the design's
 * notes, the interval budget's note (binary fits) and the skipped-rows warning, in that order.
 */
export function completeDiagnostics(fit: ModelFit, built: BuiltDesign, predictors: Table, readNotes: Diagnostic[], intervalNote: Diagnostic | null): void {
  mapDiagnosticRows(fit, built.inputRows, predictors);
  const added: Diagnostic[] = [...readNotes, ...built.notes];
  if (intervalNote && fit.kind === "binary") added.push(intervalNote);
  const skipped = skippedWarning(built);
  if (skipped) added.push(skipped);
  fit.diagnostics.push(...added);
}
