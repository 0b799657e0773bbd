/**
 * The message catalogue: every problem Oddsmith reports to a user, in one place.
 *
 * Each entry has a stable code (used in tests and docs), the cell error it maps to when a cell
 * function cannot return a result (#VALUE! = the input is wrong, #N/A = the input is fine but
 * nothing can be estimated or scored), and a template that says what is wrong, where, and what to do.
 * Placeholders are written {name}; `formatMessage` fills them.
 *
 * Policy: add a code here before using it; never build user-facing text elsewhere. docs/errors.md is
 * generated from this table (scripts/write-error-table.ts) and a test keeps it in step.
 */

export type CellErrorKind = "#VALUE!" | "#N/A";

export interface MessageEntry {
  cellError: CellErrorKind;
  /** Short title used in docs and in the task pane. */
  title: string;
  template: string;
}

export const MESSAGES = {
  // ---- input shape and parsing (#VALUE!) -------------------------------------------------------
  EMPTY_RANGE: {
    cellError: "#VALUE!",
    title: "Empty range",
    template: "The {argument} range has no data. Select a range that holds at least one row of values.",
  },
  RANGE_SHAPE_MISMATCH: {
    cellError: "#VALUE!",
    title: "Ranges of different lengths",
    template:
      "The {argument} range has {got} rows but {expectedArgument} has {expected}. Select ranges that cover the same rows.",
  },
  RANGE_TOO_LARGE: {
    cellError: "#VALUE!",
    title: "Range too large for a cell function",
    template:
      "The {argument} range holds about {cells} cells, more than a cell function can receive ({limit}). Use the Oddsmith task pane, which reads large tables in pieces.",
  },
  NOT_A_NUMBER: {
    cellError: "#VALUE!",
    title: "Text where a number is needed",
    template:
      "The {argument} value in row {row}, column {column} (\"{value}\") is not a number. Enter a number or clear the cell.",
  },
  BAD_WEIGHT: {
    cellError: "#VALUE!",
    title: "Invalid weight",
    template: "The weight in row {row} is {value}. Weights must be finite numbers of zero or more.",
  },
  BAD_TRIALS: {
    cellError: "#VALUE!",
    title: "Invalid grouped count",
    template:
      "Row {row} has {successes} successes out of {trials} trials. Successes must lie between 0 and the number of trials.",
  },
  RAGGED_RANGE: {
    cellError: "#VALUE!",
    title: "Rows of different lengths",
    template:
      "Row {row} of the {argument} range has {got} cells but row 1 has {expected}. Pass a rectangular range.",
  },
  NOT_FINITE_VALUE: {
    cellError: "#VALUE!",
    title: "Value that is not a finite number",
    template:
      "The {argument} value in row {row}, column {column} is {value}, which is not a finite number. Enter a finite number or clear the cell.",
  },
  SINGLE_COLUMN_NEEDED: {
    cellError: "#VALUE!",
    title: "One column expected",
    template: "The {argument} range has {columns} columns. Select a single column.",
  },
  COLUMN_NOT_FOUND: {
    cellError: "#VALUE!",
    title: "Column not found",
    template: "There is no predictor column named \"{name}\". Columns found: {columns}.",
  },
  LEVEL_NOT_FOUND: {
    cellError: "#VALUE!",
    title: "Category not in the column",
    template:
      "The reference category \"{level}\" does not occur in the {column} column. Categories found: {levels}.",
  },
  // ---- options (#VALUE!) -----------------------------------------------------------------------
  UNKNOWN_OPTION: {
    cellError: "#VALUE!",
    title: "Unknown option",
    template: "\"{name}\" is not an option of {fn}. Valid options: {valid}.",
  },
  BAD_OPTION_VALUE: {
    cellError: "#VALUE!",
    title: "Invalid option value",
    template: "The option {name} cannot be \"{value}\". {expected}",
  },
  OPTION_SYNTAX: {
    cellError: "#VALUE!",
    title: "Options not understood",
    template:
      "The options text \"{text}\" could not be read at \"{at}\". Write name=value pairs separated by semicolons, e.g. \"penalty=0.1; level=0.9\".",
  },
  // ---- labels (#VALUE!) ------------------------------------------------------------------------
  ONE_CLASS_ONLY: {
    cellError: "#VALUE!",
    title: "Only one class",
    template:
      "Every usable row has the label \"{label}\". A classifier needs at least two classes in the label column.",
  },
  TOO_MANY_CLASSES: {
    cellError: "#VALUE!",
    title: "Label column looks continuous",
    template:
      "The label column has {count} distinct values across {rows} rows, which looks like a measurement rather than classes. Point the labels argument at the class column, or group the values into classes first.",
  },
  CLASS_NOT_FOUND: {
    cellError: "#VALUE!",
    title: "Class not in the labels",
    template: "The {role} class \"{label}\" does not occur in the label column. Classes found: {classes}.",
  },
  // ---- estimation (#N/A or warnings) -----------------------------------------------------------
  TOO_FEW_ROWS: {
    cellError: "#N/A",
    title: "Fewer rows than parameters",
    template:
      "Only {rows} usable rows for {parameters} parameters. Add rows, remove predictors, or set a penalty.",
  },
  NO_USABLE_ROWS: {
    cellError: "#N/A",
    title: "No complete rows",
    template: "No row has a label and all predictor values. Missing values per column: {missing}.",
  },
  NOT_CONVERGED: {
    cellError: "#N/A",
    title: "Fit did not converge",
    template:
      "The fit did not converge in {iterations} iterations (last relative change {change}). Results are not reliable: check for separation or extreme values, or set a penalty.",
  },
  SEPARATION_COMPLETE: {
    cellError: "#N/A",
    title: "Complete separation",
    template:
      "The classes are perfectly separated by {columns}: maximum-likelihood estimates do not exist (they run off to infinity). Use bias reduction (firth=true) or a penalty, or remove the separating columns.",
  },
  SEPARATION_QUASI: {
    cellError: "#N/A",
    title: "Quasi-complete separation",
    template:
      "{columns} separate the classes for {count} rows (for example rows {rows}): some estimates run off to infinity. Use bias reduction (firth=true) or a penalty.",
  },
  ALIASED_COLUMNS: {
    cellError: "#N/A",
    title: "Aliased columns",
    template:
      "{columns} can be written exactly from the other predictors, so their coefficients cannot be estimated and were dropped. Remove or combine these columns.",
  },
  PENALIZED_NO_P_VALUES: {
    cellError: "#N/A",
    title: "No p-values for penalized fits",
    template:
      "The fit is penalized (penalty={penalty}): coefficients are shrunk, so classical standard errors, p-values and intervals are not shown.",
  },
  ROWS_SKIPPED: {
    cellError: "#N/A",
    title: "Rows skipped",
    template: "{count} rows were skipped because a used value was missing ({detail}).",
  },
  // ---- scoring (#N/A per row) ------------------------------------------------------------------
  UNSEEN_LEVEL: {
    cellError: "#N/A",
    title: "Category not seen in training",
    template:
      "Row {row} has \"{value}\" in {column}, a category the model was not trained on. Known categories: {levels}.",
  },
  MISSING_FOR_SCORING: {
    cellError: "#N/A",
    title: "Missing value when scoring",
    template: "Row {row} has no value in {column}, so it cannot be scored.",
  },
  OUT_OF_DOMAIN: {
    cellError: "#N/A",
    title: "Value outside the transform's domain",
    template: "Row {row}: {transform} is not defined for {value} in {column}. {hint}",
  },
  // ---- recipes for basis columns (#VALUE!) -----------------------------------------------------
  RECIPE_SYNTAX: {
    cellError: "#VALUE!",
    title: "Recipe not understood",
    template: "The recipe \"{text}\" could not be read at \"{at}\". {hint}",
  },
  // ---- metrics (#VALUE!) -----------------------------------------------------------------------
  BAD_PROBABILITY: {
    cellError: "#VALUE!",
    title: "Invalid probability",
    template: "The probability in row {row} is {value}. Probabilities must lie between 0 and 1.",
  },
  // ---- catch-all (#VALUE!) ---------------------------------------------------------------------
  INTERNAL: {
    cellError: "#VALUE!",
    title: "Unexpected problem",
    template:
      "Oddsmith hit an unexpected problem while {doing}. Your data is unchanged. Please report this with the shape of the input.",
  },
} as const satisfies Record<string, MessageEntry>;

export type MessageCode = keyof typeof MESSAGES;

/** Fill a template's {placeholders}; a missing value is shown as "?" so a gap is visible, not hidden. */
export function formatMessage(code: MessageCode, params: Record<string, unknown> = {}): string {
  return MESSAGES[code].template.replace(/\{(\w+)\}/g, (_, key: string) =>
    params[key] === undefined ? "?" : String(params[key]),
  );
}

/**
 * The one error type the engine throws for problems the user can act on. Adapters turn it into a
 * cell error (#VALUE! or #N/A) with `message`; anything else thrown is a bug and becomes INTERNAL.
 */
export class OddsmithError extends Error {
  readonly code: MessageCode;
  readonly cellError: CellErrorKind;
  readonly params: Record<string, unknown>;

  constructor(code: MessageCode, params: Record<string, unknown> = {}) {
    super(formatMessage(code, params));
    this.name = "OddsmithError";
    this.code = code;
    this.cellError = MESSAGES[code].cellError;
    this.params = params;
  }
}

/** Shorthand used throughout: `throw problem("EMPTY_RANGE", { argument: "labels" })`. */
export function problem(code: MessageCode, params: Record<string, unknown> = {}): OddsmithError {
  return new OddsmithError(code, params);
}

/** Format a list of names for a message: "a, b and c" (at most `max`, then "and N more"). */
export function listNames(names: readonly string[], max = 5): string {
  const quoted = names.map((n) => `"${n}"`);
  if (quoted.length <= 1) return quoted.join("");
  if (quoted.length > max) return `${quoted.slice(0, max).join(", ")} and ${quoted.length - max} more`;
  return `${quoted.slice(0, -1).join(", ")} and ${quoted[quoted.length - 1]}`;
}
