/**
 * The task pane's message catalogue: problems and notes of the basis builder and of the generated
 * basis columns that follow their table when its rows change. Entries have the shape of the engine's
 * (src/engine/messages.ts); codes never change once published (tests and docs/errors.md name them).
 */
import type { MessageEntry } from "../../engine";

export const PANE_MESSAGES = {
  // ---- the basis builder (writing generated columns) -------------------------------------------
  BASIS_MANY_COLUMNS: {
    cellError: "#N/A",
    title: "Many basis columns for the rows",
    template:
      "The recipe makes {columns} {columns|column|columns} for {rows} {rows|row|rows} ({ratio} rows per column). With fewer than {rule} rows per column a fit tends to overfit or separate: use fewer or smaller transforms, or more rows.",
  },
  BASIS_NEEDS_HEADER: {
    cellError: "#VALUE!",
    title: "Basis columns need a header row",
    template:
      "The block {address} does not seem to start with a header row, and recipes name columns by their headers. Select the block including its header row, or say that the first row holds headers.",
  },
  BASIS_TARGET_NOT_EMPTY: {
    cellError: "#VALUE!",
    title: "Cells in the way",
    template:
      "The cells {address} on sheet \"{sheet}\" are not empty. Choose another place or a new sheet, or confirm that they may be overwritten.",
  },
  // ---- generated columns that follow the table (notes, #N/A) -----------------------------------
  BASIS_FOLLOWED_ROWS: {
    cellError: "#N/A",
    title: "Basis formula follows the table",
    template:
      "The table now has {rows} data rows, so the basis formula at {sheet}!{anchor} was rewritten over {source}: its knots, centres, levels and scales are refitted on all {rows} rows, and the fit uses the new rows.",
  },
  BASIS_VALUES_NOT_REFRESHED: {
    cellError: "#N/A",
    title: "Basis values not refreshed",
    template:
      "The basis columns at {sheet}!{address} hold values, not a live formula, so they were not refreshed after {change}. Rows without basis values are skipped from the fit and edited rows keep their old basis values. Remove the generated columns and add them again, or add them as a live formula.",
  },
  BASIS_FOLLOW_BLOCKED: {
    cellError: "#N/A",
    title: "Basis formula not extended: cells in the way",
    template:
      "The basis formula at {sheet}!{anchor} was not extended to the table's new rows, because the cells {address} it would fill are not empty; the new rows have no basis values and are skipped from the fit. Clear or move those cells, then edit the table again (or remove the generated columns and add them again).",
  },
  BASIS_FOLLOW_LOST: {
    cellError: "#N/A",
    title: "Generated basis columns changed",
    template:
      "The basis columns written at {sheet}!{address} were changed or removed (their header row no longer reads {names}), so they were not rewritten for the table's new rows. Add them again from the basis section if you still need them.",
  },
  BASIS_FOLLOW_FAILED: {
    cellError: "#N/A",
    title: "Basis formula not extended: recipe fails on the new rows",
    template:
      "The basis formula at {sheet}!{anchor} was kept over its old rows, because its recipe cannot be computed over the table's new rows: {reason}",
  },
  // ---- the portable model (keep, download, scoring formulas) -----------------------------------
  KEPT_NO_ROOM: {
    cellError: "#VALUE!",
    title: "No free row for another kept model",
    template:
      "The sheet {sheet} already holds {rows} kept models, in rows 2 to {last}. Delete the rows of models you no longer need on that sheet (unhide it first), or keep this model under the name of one to replace.",
  },
  PORTABLE_NO_FIT: {
    cellError: "#N/A",
    title: "No fitted model yet",
    template: "There is no fitted model to {action}. Fit a model first (section 1), then press the button again.",
  },
} as const satisfies Record<string, MessageEntry>;
