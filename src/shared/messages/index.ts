/**
 * Every message Oddsmith can show, for the code outside the engine: the engine's catalogue
 * (src/engine/messages.ts) and the surface's (cellMessages.ts: cell functions and output limits;
 * paneMessages.ts: the basis builder and generated columns that follow their table), combined into
 * one `problem` / `formatMessage` over all codes, filled by the engine's one template rule
 * (`fillTemplate`: {name} and the plural form {name|one|other}).
 *
 * A code lives in the catalogue of the layer that raises it; codes are unique across catalogues (a
 * test checks) and never change once published. docs/errors.md lists MESSAGES in this order.
 */
import { ENGINE_MESSAGES, OddsmithError, fillTemplate, type MessageEntry } from "../../engine";
import { CELL_MESSAGES } from "./cellMessages";
import { PANE_MESSAGES } from "./paneMessages";

export { OddsmithError, fillTemplate, listNames } from "../../engine";
export type { CellErrorKind, MessageEntry } from "../../engine";
export { CELL_MESSAGES } from "./cellMessages";
export { PANE_MESSAGES } from "./paneMessages";

/** The surface's codes (cell functions, output limits, task pane). */
export const SURFACE_MESSAGES = { ...CELL_MESSAGES, ...PANE_MESSAGES } as const;

/** Every catalogue in one table: the engine's codes first, then the surface's. */
export const MESSAGES = { ...ENGINE_MESSAGES, ...SURFACE_MESSAGES } as const satisfies Record<string, MessageEntry>;

/** A code of any catalogue. */
export type MessageCode = keyof typeof MESSAGES;

/** The message of any code with its placeholders filled (see fillTemplate). */
export function formatMessage(code: MessageCode, params: Record<string, unknown> = {}): string {
  return fillTemplate(MESSAGES[code].template, params);
}

/** The error to throw for any code: `throw problem("OUTPUT_TOO_LARGE", { fn: "ODDS.FIT", ... })`. */
export function problem(code: MessageCode, params: Record<string, unknown> = {}): OddsmithError {
  return new OddsmithError(code, params, MESSAGES[code]);
}

/** True when `code` is a code of some catalogue. */
export function isMessageCode(code: string): code is MessageCode {
  return Object.prototype.hasOwnProperty.call(MESSAGES, code);
}

/** The catalogue code an error carries; INTERNAL for a code no catalogue knows (a bug, not the user's). */
export function codeOf(error: OddsmithError): MessageCode {
  return isMessageCode(error.code) ? error.code : "INTERNAL";
}
