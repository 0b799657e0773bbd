/**
 * The cell functions' message catalogue: problems only the cell functions meet (their options text,
 * coefficient tables and probability columns read back from the sheet, and what one call can carry
 * and the sheet can hold). Entries have the shape of the engine's (src/engine/messages.ts); codes
 * never change once published (tests and docs/errors.md name them).
 */
import type { MessageEntry } from "../../engine";

export const CELL_MESSAGES = {
  // ---- options text and ranges (#VALUE!) -------------------------------------------------------
  OPTION_SYNTAX: {
    cellError: "#VALUE!",
    title: "Options not understood",
    template:
      "The options text \"{text}\" could not be read at \"{at}\". Write name=value pairs separated by semicolons (or line breaks), e.g. \"penalty=0.1; level=0.9\".",
  },
  DUPLICATE_OPTION: {
    cellError: "#VALUE!",
    title: "Option given twice",
    template: "The option {name} is given twice (\"{first}\" and \"{second}\"). Give it once.",
  },
  OPTION_DECIMAL_COMMA: {
    cellError: "#VALUE!",
    title: "Decimal comma in the options",
    template:
      "The options text \"{text}\" has \"{at}\" after a comma. Commas and semicolons separate options, so write decimals with a point (e.g. \"{suggestion}\").",
  },
  OPTIONS_RANGE_SHAPE: {
    cellError: "#VALUE!",
    title: "Options range of more than two columns",
    template:
      "The options range has {columns} columns, and column {column} holds \"{value}\" (row {row}). Give options as text, as one column of name=value texts, or as two columns: names, then values.",
  },
  // ---- coefficient tables on the sheet (ODDS.SCORE, #VALUE!) -----------------------------------
  COEFFICIENT_TABLE_HEADER: {
    cellError: "#VALUE!",
    title: "Coefficient table without its header",
    template:
      "The coefficients range needs a header row with columns named \"term\" and \"coefficient\" (and \"class\" when the model has several classes); its first row holds {found}. Select the table ODDS.FIT wrote, header row included.",
  },
  COEFFICIENT_TERM_REPEATED: {
    cellError: "#VALUE!",
    title: "Term listed twice",
    template:
      "The term \"{term}\" appears twice for class \"{outcome}\" in the coefficients range (rows {first} and {second}). Keep one row per term and class.",
  },
  COEFFICIENT_REFERENCE_IS_EQUATION: {
    cellError: "#VALUE!",
    title: "Reference class listed with coefficients",
    template:
      "The class header names \"{reference}\" as the reference class, but row {row} of the coefficients range gives an equation for \"{reference}\". The reference class has no equation of its own: correct the header or remove its rows.",
  },
  // ---- metric cell functions: matching labels with probability columns (#VALUE!) ---------------
  BINARY_METRIC_ONLY: {
    cellError: "#VALUE!",
    title: "Metric for two classes only",
    template:
      "{fn} works with two classes, but the labels hold {count} ({classes}). For several classes use ODDS.LOGLOSS or ODDS.CONFUSION with one probability column per class.",
  },
  PROBABILITY_COLUMN_COUNT: {
    cellError: "#VALUE!",
    title: "Probability columns do not match the classes",
    template:
      "The probabilities range has {got} {got|column|columns} for {count} classes ({classes}). Give one column of positive-class probabilities for two classes, or one column per class under a header row naming the classes (as ODDS.PROB writes it).",
  },
  PROBABILITY_COLUMN_MISSING: {
    cellError: "#VALUE!",
    title: "No probability column for a class",
    template:
      "The labels hold the class \"{label}\" but no probability column is named for it (column headers: {headers}). Name each column after its class, e.g. \"P({label})\".",
  },
  METRIC_CLASS_UNNAMED: {
    cellError: "#VALUE!",
    title: "One class, probabilities unnamed",
    template:
      "Every row has the label \"{label}\", and nothing says which class the probabilities are for. Name the class in the probabilities' header row (e.g. \"P({label})\"), or set the positive option.",
  },
  // ---- models kept in the workbook (ODDS.KEPT, #VALUE!) -----------------------------------------
  KEPT_NOT_FOUND: {
    cellError: "#VALUE!",
    title: "No kept model in the range",
    template:
      "The {argument} range does not start with a kept model: its first cell holds {got}, where a kept model's row starts with a text beginning \"oddsmith-model\". Select the model's row on the sheet {sheet} from column A (e.g. {sheet}!2:2), or keep the model again from the Oddsmith pane.",
  },
  KEPT_HEADER: {
    cellError: "#VALUE!",
    title: "Kept model's first cell unreadable",
    template:
      "The first cell of the {argument} range reads {got}, which is not the header Oddsmith writes (\"oddsmith-model 1.0; parts ...; characters ...; check ...; written ...; by Oddsmith ...; name ...\"). It was changed after Oddsmith wrote it: keep the model again from the Oddsmith pane.",
  },
  KEPT_PART: {
    cellError: "#VALUE!",
    title: "Part of a kept model missing",
    template:
      "The kept model \"{name}\" is stored in {parts} {parts|part|parts} after its first cell, but part {part} (cell {cell} of the {argument} range, read row by row) {reason}; that cell holds {got}. Select the model's whole row on the sheet {sheet} (e.g. {sheet}!2:2), or keep the model again from the Oddsmith pane.",
  },
  KEPT_DAMAGED: {
    cellError: "#VALUE!",
    title: "Kept model changed after it was written",
    template:
      "The parts of the kept model \"{name}\" hold {got} characters with check {gotCheck}, but its first cell says {characters} characters with check {check}: a part was edited after Oddsmith wrote it. Keep the model again from the Oddsmith pane, or use a downloaded description.",
  },
  METRIC_HEADERS_DISAGREE: {
    cellError: "#VALUE!",
    title: "Header rows of labels and probabilities disagree",
    template:
      "The first row of {other} looks like {otherLooks}, but the first row of {decided} looks like {decidedLooks}. Reading both as {decision} would drop or invent a row of the metric. Select both ranges with their header rows (or both without), or set headers=yes or headers=no.",
  },
  // ---- evaluation functions (ODDS.FOLDS, ODDS.HOLDOUT) ---------------------------------------
  EVALUATION_SCOPE: {
    cellError: "#N/A",
    title: "What held-out scores show",
    template:
      "These scores estimate how the model predicts new rows drawn like these. They show statistical associations, not causes, and an overall score can hide a group the model serves badly: compare groups before using it in decisions about people.",
  },
  HOLDOUT_BOTH_SPLITS: {
    cellError: "#VALUE!",
    title: "Two ways of splitting",
    template: "Both a split column and the holdout option ({value}) are given. Use one: the column marks the training rows, or holdout=share asks for a seeded split.",
  },
  // ---- what one call can carry and the sheet can hold ------------------------------------------
  RANGE_TOO_LARGE: {
    cellError: "#VALUE!",
    title: "Range too large for a cell function",
    template:
      "The {argument} range holds about {cells} cells, more than a cell function can receive ({limit}). Use the Oddsmith task pane, which reads large tables in pieces.",
  },
  OUTPUT_TOO_LARGE: {
    cellError: "#VALUE!",
    title: "Result too large for the sheet",
    template:
      "{fn} would return {rows} {rows|row|rows} x {columns} {columns|column|columns} ({what}), more than one formula can spill: a sheet has at most 1,048,576 rows and 16,384 columns, and one call can return about 5 MB (about {cells} cells of numbers). {hint}",
  },
  TEXT_TRUNCATED: {
    cellError: "#N/A",
    title: "Text cut to the cell limit",
    template: " [... cut: {dropped} more characters; a cell holds at most {limit}]",
  },
} as const satisfies Record<string, MessageEntry>;
