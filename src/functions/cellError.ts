/**
 * Turning whatever an adapter throws into what a cell shows.
 *
 * Policy (one line each):
 * - An OddsmithError (a problem the user can act on) keeps its catalogue message and its cell error:
 *   "#VALUE!" -> CustomFunctions.ErrorCode.invalidValue, "#N/A" -> notAvailable.
 * - Anything else is a bug: the cell shows the catalogue's INTERNAL message (naming what we were doing),
 *   never the raw exception text (which would mean nothing to the user and may leak internals).
 * - Inside Office the result is a `CustomFunctions.Error`; outside Office (the preview workbench, unit
 *   tests) `CustomFunctions.Error` does not exist, so the same information travels as a
 *   `CellFunctionFailure`, an ordinary Error carrying the cell error kind, the code and the message.
 *
 * This module never touches Office at import time, so the adapters and the workbench can import it.
 */
import { MESSAGES, OddsmithError, codeOf, problem, type CellErrorKind, type MessageCode } from "../shared/messages";

/** What a failing cell shows, independent of Office. */
export interface CellFailureInfo {
  /** "#VALUE!" (the input is wrong) or "#N/A" (nothing can be estimated or scored). */
  cellError: CellErrorKind;
  /** Catalogue code, for tests and the workbench. */
  code: MessageCode;
  /** The message shown with the error. */
  message: string;
}

/** The error thrown by cell functions outside Office (where CustomFunctions.Error is undefined). */
export class CellFunctionFailure extends Error implements CellFailureInfo {
  readonly cellError: CellErrorKind;
  readonly code: MessageCode;

  constructor(info: CellFailureInfo) {
    super(info.message);
    this.name = "CellFunctionFailure";
    this.cellError = info.cellError;
    this.code = info.code;
  }
}

/**
 * Classify anything thrown by an adapter.
 * @param error - the thrown value
 * @param doing - what the function was doing, for the INTERNAL message ("fitting the model")
 */
export function describeFailure(error: unknown, doing: string): CellFailureInfo {
  if (error instanceof OddsmithError) {
    return { cellError: error.cellError, code: codeOf(error), message: error.message };
  }
  if (error instanceof CellFunctionFailure) {
    return { cellError: error.cellError, code: error.code, message: error.message };
  }
  const internal = problem("INTERNAL", { doing });
  return { cellError: MESSAGES.INTERNAL.cellError, code: "INTERNAL", message: internal.message };
}

/** True when the Office custom-functions runtime (with its Error class) is present. */
function officeErrorsAvailable(): boolean {
  return (
    typeof CustomFunctions !== "undefined" &&
    typeof (CustomFunctions as { Error?: unknown }).Error === "function"
  );
}

/**
 * The value to throw from a cell function: a CustomFunctions.Error inside Office, a
 * CellFunctionFailure elsewhere. Both carry the catalogue message.
 */
export function toCellError(error: unknown, doing: string): Error | CustomFunctions.Error {
  const info = describeFailure(error, doing);
  if (officeErrorsAvailable()) {
    const code =
      info.cellError === "#N/A" ? CustomFunctions.ErrorCode.notAvailable : CustomFunctions.ErrorCode.invalidValue;
    return new CustomFunctions.Error(code, info.message);
  }
  return new CellFunctionFailure(info);
}

/**
 * Run an adapter and convert its failures: the one wrapper every function in functions.ts uses.
 * @param doing - what the function does, in words ("fitting the model"), for the INTERNAL message
 * @param body - the adapter call
 */
export function runCell<T>(doing: string, body: () => T): T {
  try {
    return body();
  } catch (error) {
    throw toCellError(error, doing);
  }
}
