/** Build a Diagnostic from a catalogue code. Internal to src/engine/metrics. */

import { formatMessage, type MessageCode } from "../messages";
import type { Diagnostic, Severity } from "../types";

/**
 * A diagnostic whose text comes from the message catalogue.
 * @example makeDiagnostic("RATE_UNDEFINED", "note", { measure: "Precision", denominator: "TP + FP", threshold: 0.5 })
 */
export function makeDiagnostic(
  code: MessageCode,
  severity: Severity,
  params: Record<string, unknown>,
  rows?: number[],
): Diagnostic {
  const d: Diagnostic = { code, severity, message: formatMessage(code, params) };
  if (rows) d.rows = rows;
  return d;
}
