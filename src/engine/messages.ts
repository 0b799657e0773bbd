/**
 * The engine's message catalogue: every problem the engine itself reports (input shape and parsing,
 * labels, estimation, scoring, basis recipes, metrics, error cells in a table, work limits), and the
 * one way to fill a template, used by every catalogue.
 *
 * Each entry has a stable code (used in tests and docs), the kind of problem written as the cell
 * error a cell function shows for it (#VALUE! = the input is wrong, #N/A = the input is fine but
 * nothing can be estimated or scored), and a template that says what is wrong, where, and what to do.
 * Placeholders are written {name}; {name|one|other} is the word for the count `name`.
 *
 * Codes of the surface (cell functions, task pane, basis columns that follow a table, output limits)
 * live in their own catalogues under src/shared/messages/, which also combine both into the one
 * `problem` / `formatMessage` the outside code uses. The engine never imports them.
 *
 * Policy: add a code to the catalogue of the layer that raises it before using it; never build
 * user-facing text elsewhere. docs/errors.md is generated from the catalogues
 * (scripts/write-error-table.ts) and a test keeps it in step.
 */

export type CellErrorKind = "#VALUE!" | "#N/A";

export interface MessageEntry {
  cellError: CellErrorKind;
  /** Short title used in docs and in the task pane. */
  title: string;
  template: string;
}

export const ENGINE_MESSAGES = {
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
      "The {argument} range has {got} {got|row|rows} but {expectedArgument} has {expected}. Select ranges that cover the same rows.",
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
      "Row {row} of the {argument} range has {got} {got|cell|cells} but row 1 has {expected}. Pass a rectangular range.",
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
  COLUMN_COUNT_MISMATCH: {
    cellError: "#VALUE!",
    title: "Different columns than in training",
    template:
      "The {argument} range has {got} {got|column|columns} but the model was trained on {expected} ({columns}). Select the same columns in the same order, or include their names in the first row.",
  },
  TOO_MANY_LEVELS: {
    cellError: "#VALUE!",
    title: "Too many categories in a predictor",
    template:
      "The {column} column has {count} different categories in the rows used, more than the {limit} a fit here can turn into indicator columns in reasonable time. Leave the column out if it identifies rows, pool rare categories (option pool, e.g. pool=5), or group the categories first.",
  },
  EMPTY_COLUMN_IGNORED: {
    cellError: "#N/A",
    title: "Blank column left out",
    template: "The {column} column has no values, so it was left out of the model.",
  },
  LEVELS_POOLED: {
    cellError: "#N/A",
    title: "Rare categories pooled",
    template:
      "{count} {count|category|categories} of {column} ({levels}) {count|occurs|occur} in fewer than {min} rows and {count|was|were} pooled into \"(other)\".",
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
  TOO_MANY_LABELS: {
    cellError: "#VALUE!",
    title: "Too many different labels",
    template:
      "The label column has {count} different labels across {rows} rows, more than the {limit} classes a classifier here can fit. Point the labels argument at the class column (not an identifier or free-text column), or group the labels into at most {limit} classes first.",
  },
  HEADERS_DISAGREE: {
    cellError: "#N/A",
    title: "Header rows disagree",
    template:
      "The first row of {decided} looks like {decidedLooks}, but the first row of {other} looks like {otherLooks}; every first row was read as {decision}. Set headers=yes or headers=no if that is wrong.",
  },
  HEADER_RULE_HINT: {
    cellError: "#N/A",
    title: "Header rows disagreed before a problem",
    template:
      " (Header rows: the first row of {decided} looks like {decidedLooks} and the first row of {other} like {otherLooks}, so every first row was read as {decision}; if that is wrong, select every range with its header row or every range without, or set headers=yes or headers=no.)",
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
      "Only {rows} usable {rows|row|rows} for {parameters} {parameters|parameter|parameters}. Add rows, remove predictors, or set a penalty.",
  },
  TOO_MANY_PARAMETERS: {
    cellError: "#VALUE!",
    title: "Too many coefficients",
    template:
      "The model would estimate {parameters} coefficients ({detail}), more than the {limit} a fit here can handle in reasonable time. Use fewer predictor or basis columns, pool rare categories (option pool), or merge classes.",
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
      "The fit did not converge in {iterations} {iterations|iteration|iterations} (last relative change {change}). Results are not reliable: check for separation or extreme values, or set a penalty.",
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
      "The classes are separated by {columns} for {count} {count|row|rows} (for example {count|row|rows} {rows}): some estimates run off to infinity. Use bias reduction (firth=true) or a penalty.",
  },
  CLASSES_SEPARATED: {
    cellError: "#N/A",
    title: "Classes separated (multi-class)",
    template:
      "{separated} can be told apart perfectly by {columns} ({count} {count|row|rows}, for example {count|row|rows} {rows}): maximum-likelihood estimates do not exist (they run off to infinity), so none are shown. Set a penalty, or remove the separating columns, or merge the separated classes.",
  },
  EMPTY_CLASS: {
    cellError: "#N/A",
    title: "Class without rows",
    template:
      "The class \"{label}\" has no usable rows (rows with a missing value or zero weight do not count), so its probability cannot be estimated. Remove it from the class list or add rows of it.",
  },
  SYMMETRIC_NEEDS_PENALTY: {
    cellError: "#VALUE!",
    title: "Symmetric form needs a penalty",
    template:
      "The symmetric form (one equation per class) is only identifiable with a penalty, but penalty is {penalty}. Set a penalty above 0, or use the reference-class form.",
  },
  CLASS_INDEX_OUT_OF_RANGE: {
    cellError: "#VALUE!",
    title: "Label outside the class list",
    template:
      "Row {row} has class number {value}, but the class list has {count} classes ({classes}). Use a class number from 0 to {last}, or a negative number for a missing label.",
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
    template: "{count} {count|row was|rows were} skipped because a used value was missing ({detail}).",
  },
  BAD_RESPONSE: {
    cellError: "#VALUE!",
    title: "Response is not 0 or 1",
    template:
      "The response in row {row} is {value}. A binary fit needs 1 for the positive class and 0 for the negative class; with grouped counts, give the number of successes and pass the trials.",
  },
  SEPARATION_HANDLED: {
    cellError: "#N/A",
    title: "Separation kept finite by the fit method",
    template:
      "The classes are separated by {columns} ({count} {count|row|rows}, for example {count|row|rows} {rows}), so ordinary estimates would run off to infinity; the {method} keeps them finite. Read these estimates with care.",
  },
  PROFILE_INTERVAL_OPEN: {
    cellError: "#N/A",
    title: "Profile interval end not found",
    template:
      "The profile-likelihood interval of {term} has no {side} end within {limit} (the likelihood stays too flat), so that end is shown as missing. Check for separation or use Wald intervals.",
  },
  COEFFICIENT_OVERFLOW: {
    cellError: "#N/A",
    title: "Coefficient too large to represent",
    template:
      "The coefficient of {columns} is too large to represent as a number, because the column's values are extremely small or extremely large. Rescale the column (for example multiply it by a power of 10) and fit again.",
  },
  LIKELIHOOD_NOT_FINITE: {
    cellError: "#N/A",
    title: "Log-likelihood not finite",
    template:
      "The fit gives some rows a probability of exactly 0 for their observed class, so the log-likelihood is not a finite number and no estimate can be trusted. This comes from extreme values in the offset or the predictors: check them, or rescale them, and fit again.",
  },
  PROFILE_NOT_AVAILABLE: {
    cellError: "#N/A",
    title: "Profile intervals not available",
    template: "Profile-likelihood intervals are not computed for {reason}; {shown} are shown instead.",
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
  RECIPE_UNKNOWN_TRANSFORM: {
    cellError: "#VALUE!",
    title: "Unknown basis transform",
    template: "\"{name}\" in the recipe is not a basis transform. Use one of: {valid}.",
  },
  RECIPE_UNKNOWN_COLUMN: {
    cellError: "#VALUE!",
    title: "Recipe names a missing column",
    template:
      "The recipe names the column \"{column}\", but the {argument} range has no such header. Headers found: {headers}.",
  },
  RECIPE_DUPLICATE_COLUMN: {
    cellError: "#VALUE!",
    title: "Recipe makes a column twice",
    template:
      "The recipe makes the column \"{name}\" more than once ({steps}). Remove one of the steps that make it.",
  },
  RECIPE_EMPTY: {
    cellError: "#VALUE!",
    title: "Empty recipe",
    template: "The recipe is empty: it names no column and no transform. {hint}",
  },
  RECIPE_BAD_PARAMETER: {
    cellError: "#VALUE!",
    title: "Invalid transform setting",
    template: "In the recipe step \"{step}\", {name}={value} is not allowed. {expected}",
  },
  BASIS_NEEDS_NUMBERS: {
    cellError: "#VALUE!",
    title: "Text where a basis transform needs numbers",
    template:
      "{transform} needs numbers, but the column \"{column}\" holds text (row {row}: \"{value}\"). Use levels for a text column, or correct the value.",
  },
  BASIS_TOO_FEW_VALUES: {
    cellError: "#VALUE!",
    title: "Too few distinct values for a basis transform",
    template:
      "{transform} on \"{column}\" needs at least {needed} distinct values in the training rows, but found {found}. {hint}",
  },
  BASIS_REDUCED: {
    cellError: "#N/A",
    title: "Fewer basis columns than asked",
    template: "{transform} on \"{column}\" made {got} {got|column|columns} instead of the {asked} asked for, because {reason}.",
  },
  // ---- metrics (#VALUE!) -----------------------------------------------------------------------
  BAD_PROBABILITY: {
    cellError: "#VALUE!",
    title: "Invalid probability",
    template: "The probability in row {row} is {value}. Probabilities must lie between 0 and 1.",
  },
  METRIC_MISSING_VALUE: {
    cellError: "#VALUE!",
    title: "Missing value in a metric input",
    template:
      "The {argument} value in row {row} is missing (not a number). Metrics need a value in every row: remove the incomplete rows first.",
  },
  BAD_BINARY_LABEL: {
    cellError: "#VALUE!",
    title: "Label is not 0 or 1",
    template:
      "The label in row {row} is {value}. Binary metrics need labels coded 1 for the positive class and 0 for the negative class.",
  },
  BAD_CLASS_INDEX: {
    cellError: "#VALUE!",
    title: "Class index out of range",
    template:
      "The class index in row {row} is {value}. With {classes} probability columns, class indices must be whole numbers from 0 to {max}.",
  },
  PROBABILITIES_NOT_SUMMING: {
    cellError: "#VALUE!",
    title: "Class probabilities do not add up to 1",
    template:
      "The class probabilities in row {row} add up to {sum}, not 1 (allowed difference {tolerance}). Give one column per class, with each row's probabilities summing to 1.",
  },
  TOO_FEW_PROBABILITY_COLUMNS: {
    cellError: "#VALUE!",
    title: "Too few probability columns",
    template:
      "Multi-class metrics need one probability column per class, at least 2, but {got} {got|was|were} given. For a single column of positive-class probabilities use the binary metrics.",
  },
  ZERO_TOTAL_WEIGHT: {
    cellError: "#VALUE!",
    title: "All weights are zero",
    template:
      "Every weight is zero, so there is nothing to average over ({rows} {rows|row|rows}). Give at least one row a positive weight.",
  },
  METRIC_NEEDS_BOTH_CLASSES: {
    cellError: "#N/A",
    title: "Metric needs both classes",
    template:
      "{metric} compares positive with negative rows, but every row with a positive weight has label {label}. It is undefined here: evaluate on rows that include both classes.",
  },
  TOO_FEW_CALIBRATION_GROUPS: {
    cellError: "#N/A",
    title: "Too few calibration groups",
    template:
      "The predicted probabilities form only {groups} {groups|group|groups} (of {requested} requested), because many rows share the same value; the Hosmer-Lemeshow test needs at least {needed}. Use a different check, such as the calibration slope.",
  },
  CONSTANT_PROBABILITIES: {
    cellError: "#N/A",
    title: "Probabilities are all the same",
    template:
      "Every row with a positive weight has the probability {value}, so {measure} cannot be estimated. It needs predictions that vary between rows.",
  },
  PROBABILITIES_CLIPPED: {
    cellError: "#N/A",
    title: "Probabilities clipped",
    template:
      "{count} {count|probability|probabilities} (first in row {row}) {count|was|were} 0 or 1, or closer to them than {eps}, and {count|was|were} moved to {eps} or 1 - {eps} before taking logarithms, so {count|its|their} contribution is large but finite.",
  },
  RATE_UNDEFINED: {
    cellError: "#N/A",
    title: "Rate undefined",
    template: "{measure} is undefined because {denominator} is zero at threshold {threshold}; it is left empty.",
  },
  AUC_INTERVAL_UNDEFINED: {
    cellError: "#N/A",
    title: "No interval for the AUC",
    template:
      "The DeLong variance needs more than one row of each class (positive weight {positives}, negative weight {negatives}); the AUC is given without a standard error or interval.",
  },
  SMALL_EXPECTED_COUNTS: {
    cellError: "#N/A",
    title: "Small expected counts",
    template:
      "{count} of {groups} groups {count|has|have} an expected count below {minimum} (first: group {group}), so the chi-square p-value of the Hosmer-Lemeshow test may be unreliable. Use fewer groups or more rows.",
  },
  CALIBRATION_SLOPE_UNBOUNDED: {
    cellError: "#N/A",
    title: "Calibration slope unbounded",
    template:
      "The probabilities separate the labels (no negative row has a higher probability than a positive row), so the calibration slope runs off to infinity and is not given. Judge calibration from the observed-vs-expected table instead.",
  },
  // ---- error cells and work limits ------------------------------------------------------------
  ERROR_VALUE_CELL: {
    cellError: "#VALUE!",
    title: "Error value in an input",
    template:
      "The {argument} range holds the error value {value} in row {row}, column {column}, and {what}. Correct the formula behind that cell, or wrap it in IFERROR(..., \"\") to leave it blank.",
  },
  ERROR_VALUES_AS_BLANK: {
    cellError: "#N/A",
    title: "Error values read as blank",
    template:
      "{count} {count|cell|cells} of the {argument} range {count|holds an error value|hold error values} (first: {value} in row {row}, column {column}); {count|it was|they were} read as blank, so {count|its row was|their rows were} skipped.",
  },
  FIRTH_TOO_COSTLY: {
    cellError: "#VALUE!",
    title: "Bias reduction too costly here",
    template:
      "Bias reduction (firth=true) on {rows} rows x {terms} terms would take too long in one call: its work grows with rows x terms x terms ({work} here, the limit is {limit}; for example {example}). Use fewer terms or rows, or a penalty (e.g. penalty=0.1) instead of firth=true.",
  },
  // ---- cross-validation and held-out checks -----------------------------------------------------
  CV_CLASS_TOO_SMALL: {
    cellError: "#VALUE!",
    title: "Class too small for the folds",
    template:
      "The class \"{label}\" has {count} {count|row|rows} in the fit, fewer than the {folds} folds asked for: every fold must hold each class. Use at most {count} folds (folds={count}), or gather more rows of that class.",
  },
  CV_BAD_ASSIGNMENT: {
    cellError: "#VALUE!",
    title: "Invalid fold assignment",
    template: "The fold assignment cannot be used: {detail}. Number the folds 1, 2, ... and give every fold's training rows each class.",
  },
  CV_GROUPED_COUNTS: {
    cellError: "#VALUE!",
    title: "Grouped counts cannot be split into folds",
    template:
      "Cross-validation and held-out checks hold out whole rows of single cases; with grouped counts (trials) a row holds many cases. Give one row per case (a label per row) instead.",
  },
  CV_TOO_COSTLY: {
    cellError: "#VALUE!",
    title: "Cross-validation too large",
    template:
      "This cross-validation needs {fits} fits of {rows} rows x {parameters} coefficients (about {work} work units), more than {limit} {where}. Use fewer folds or penalties, fewer rows or predictor columns{hint}.",
  },
  CV_FOLD_FAILED: {
    cellError: "#N/A",
    title: "A fold gave no usable fit",
    template: "Fold {fold} of {folds}{penalty} gave no usable fit: {reason}",
  },
  CV_FOLD_UNSCORED: {
    cellError: "#N/A",
    title: "No held-out row of a fold could be scored",
    template:
      "No held-out row of fold {fold} of {folds} could be scored by the fit on the other folds (row {row}: {reason}). Use fewer folds, or pool rare categories (pool=...).",
  },
  CV_ROWS_UNSCORED: {
    cellError: "#N/A",
    title: "Held-out rows without a probability",
    template:
      "{count} held-out {count|row|rows} got no probability from the fit on the other rows and {count|is|are} left out of the held-out metrics (for example row {row}: {reason}).",
  },
  CV_PENALTY_FAILED: {
    cellError: "#N/A",
    title: "Penalties left out of the path",
    template: "{count} {count|penalty|penalties} of the path gave no usable fit in some fold and {count|is|are} left out of the choice (penalty {penalty}: {reason})",
  },
  CV_NOT_CONVERGED: {
    cellError: "#N/A",
    title: "Some fold fits did not converge",
    template: "{count} of {fits} fold {fits|fit|fits} did not converge (for example fold {fold}{penalty}); their held-out values are less reliable. A penalty usually helps.",
  },
  HOLDOUT_BAD_MARK: {
    cellError: "#VALUE!",
    title: "Unreadable training mark",
    template:
      "The {argument} value in row {row} (\"{value}\") is not a training mark. Use TRUE or 1 for a training row and FALSE or 0 for a held-out row; leave the cell blank to leave the row out.",
  },
  HOLDOUT_EMPTY_SIDE: {
    cellError: "#VALUE!",
    title: "No training or no held-out rows",
    template: "{side} {note}Mark some rows for training and some as held out, or use a seeded split (holdout=0.3).",
  },
  HOLDOUT_CLASS_UNTRAINED: {
    cellError: "#VALUE!",
    title: "Held-out class absent from training",
    template:
      "The class \"{label}\" occurs in {count} held-out {count|row|rows} (for example row {row}) but in no training row, so the model cannot give it a probability. Move some of its rows into training.",
  },
  HOLDOUT_FIT_FAILED: {
    cellError: "#VALUE!",
    title: "No usable fit on the training rows",
    template: "The fit on the {count} training rows gave no usable model: {reason}",
  },
  // ---- marginal effects ------------------------------------------------------------------------
  EFFECTS_TWO_CLASSES_ONLY: {
    cellError: "#VALUE!",
    title: "Marginal effects need two classes",
    template:
      "Marginal effects are computed for two-class models only, and the labels hold {count} classes. Turn the labels into two classes (e.g. one class against the rest) to see effects on that class's probability.",
  },
  EFFECTS_TOO_COSTLY: {
    cellError: "#VALUE!",
    title: "Marginal effects too costly here",
    template:
      "Marginal effects on {rows} rows x {terms} terms with {changes} discrete changes would take too long in one call: the work grows with rows x terms x changes ({work} here, the limit is {limit}). Use fewer rows or fewer text levels, or indicators=slope.",
  },
  EFFECTS_NO_STANDARD_ERRORS: {
    cellError: "#N/A",
    title: "Marginal effects without standard errors",
    template:
      "The fit has no covariance of its coefficients (a penalized fit, or variances beyond the range of numbers), so the marginal effects are shown without standard errors, z, p or intervals.",
  },
  EFFECTS_NOT_CAUSAL: {
    cellError: "#N/A",
    title: "What marginal effects cannot show",
    template:
      "These are average changes in the fitted probability of {positive} over the {rows} {rows|row|rows} used: statistical associations of the model, not causes. They do not tell what would happen if a column were changed.",
  },
  // ---- portable model: formulas and the model description -------------------------------------
  EXPORT_COLUMN_NOT_PLACED: {
    cellError: "#VALUE!",
    title: "Column the formulas cannot find",
    template:
      "The model reads the column \"{column}\", but it is not among the {where} the formulas can refer to ({columns}). {hint}",
  },
  EXPORT_FORMULA_TOO_LONG: {
    cellError: "#N/A",
    title: "Formula longer than a cell holds",
    template:
      "The formula for \"{column}\" would be {length} characters long, more than a cell formula may hold (8,192). {hint}",
  },
  EXPORT_LEVEL_TOO_LONG: {
    cellError: "#N/A",
    title: "Category too long for a formula",
    template:
      "The category \"{level}\" of the {column} column has {length} characters, more than a text constant in a formula may hold (255), so the model cannot be written as plain formulas. Shorten the categories (for example with a lookup column) and fit again.",
  },
  EXPORT_LEFT_TO_ADDIN: {
    cellError: "#N/A",
    title: "Basis column left to the add-in",
    template:
      "The basis column \"{column}\" is not written as a formula ({reason}): the formulas read it from the sheet's column of that name, which Oddsmith computes (ODDS.BASIS), so that column needs the add-in.",
  },
  EXPORT_NO_ESTIMATES: {
    cellError: "#N/A",
    title: "Model without estimates",
    template:
      "The model has no estimate for the term \"{term}\"{equation}, so there are no formulas to write. Fix the fit first (see ODDS.REPORT).",
  },
  EXPORT_BASIS_MISMATCH: {
    cellError: "#VALUE!",
    title: "Basis columns from another recipe or data",
    template:
      "The predictor column \"{column}\" does not hold what the recipe makes from the data (data row {row}: {got} in the predictors, {expected} from the recipe). Give the same data range and recipe as the ODDS.BASIS formula that made the column.",
  },
  EXPORT_NO_ROOM: {
    cellError: "#VALUE!",
    title: "No room for the formulas",
    template: "The formulas cannot be placed at {at}: {reason}. {hint}",
  },
  DESCRIPTION_NOT_JSON: {
    cellError: "#VALUE!",
    title: "Model description is not JSON",
    template:
      "The {argument} is not a readable model description: {reason}. Give the whole text of a description that Oddsmith wrote (the pane's \"download the description\" file, or the kept model's cells), unchanged.",
  },
  DESCRIPTION_NOT_OURS: {
    cellError: "#VALUE!",
    title: "Not an Oddsmith model description",
    template:
      "The {argument} is JSON but not an Oddsmith model description: its \"format\" field is {got}, where \"oddsmith-model\" is expected. Give a description that Oddsmith wrote.",
  },
  DESCRIPTION_NEWER: {
    cellError: "#VALUE!",
    title: "Model description from a newer version",
    template:
      "This model description has format version {version} (written by Oddsmith {producer}); this Oddsmith reads format {supported} and older descriptions of major version {major} only, so it does not guess what a newer one means. Update the Oddsmith add-in to a version that reads format {version}, or fit the model again with this version.",
  },
  DESCRIPTION_FIELD: {
    cellError: "#VALUE!",
    title: "Model description field wrong",
    template:
      "The model description's field \"{field}\" should be {expected}, but it is {got}. The description was changed or damaged after Oddsmith wrote it: use an unchanged copy, or fit the model again.",
  },
  DESCRIPTION_INCONSISTENT: {
    cellError: "#VALUE!",
    title: "Model description contradicts itself",
    template:
      "The model description's field \"{field}\" does not agree with the rest of it: {reason}. The description was changed or damaged after Oddsmith wrote it: use an unchanged copy, or fit the model again.",
  },
  DESCRIPTION_NEEDS_ROWS: {
    cellError: "#VALUE!",
    title: "Rows to score needed",
    template:
      "A model read from its description holds no data rows, so there are no training rows to score. Give the rows to score in the {argument} argument.",
  },
  DESCRIPTION_COLUMN_MISSING: {
    cellError: "#VALUE!",
    title: "Column the model needs is missing",
    template:
      "The model reads the column \"{column}\", but the {argument} range has no column of that name (its header row holds {columns}). Give the rows with a header row naming the columns the model was fitted on.",
  },
  // ---- group comparison ------------------------------------------------------------------------
  GROUPS_TOO_MANY: {
    cellError: "#VALUE!",
    title: "Too many groups",
    template:
      "The group column has more than {limit} different values across {rows} rows (for example {examples}), which looks like an identifier or a measurement rather than groups. Point the group argument at a column of groups, or group the values into at most {limit} first.",
  },
  GROUP_NOT_FOUND: {
    cellError: "#VALUE!",
    title: "Reference group not found",
    template: "The group \"{group}\" given as versus does not occur in the group column among the rows used. Groups found: {groups}.",
  },
  GROUP_RATE_UNDEFINED: {
    cellError: "#N/A",
    title: "Rate undefined in some groups",
    template:
      "{count} {count|group has|groups have} no {kind} rows ({groups}), so {count|its|their} {measure} is undefined and left empty, as are ratios of it.",
  },
  SMALL_GROUPS: {
    cellError: "#N/A",
    title: "Small groups",
    template:
      "{count} {count|group has|groups have} fewer than {minimum} rows ({groups}): {count|its|their} rates and ratios can differ from the others by chance alone. Judge them with care, or pool small groups.",
  },
  GROUPS_NOT_CAUSAL: {
    cellError: "#N/A",
    title: "What a group comparison cannot show",
    template:
      "These figures show statistical associations between the groups and the model's predictions and errors, not causes, and they describe these rows only (judge a model on held-out rows). Decisions about people must follow local law and professional standards, with a qualified person accountable for each decision.",
  },
  // ---- catch-all (#VALUE!) ---------------------------------------------------------------------
  INTERNAL: {
    cellError: "#VALUE!",
    title: "Unexpected problem",
    template:
      "Oddsmith hit an unexpected problem while {doing}. Your data is unchanged. Please report this with the shape of the input.",
  },
} as const satisfies Record<string, MessageEntry>;

/** A code of the engine's catalogue. */
export type MessageCode = keyof typeof ENGINE_MESSAGES;

/** Longest text a filled-in placeholder shows: a message stays far below a cell's 32,767 characters (a quoted cell of 30,000 characters helps nobody). */
export const MAX_PARAM_CHARS = 1000;

/** A placeholder's text, cut to MAX_PARAM_CHARS with a visible ellipsis. */
function paramText(value: unknown): string {
  const text = String(value);
  return text.length > MAX_PARAM_CHARS ? `${text.slice(0, MAX_PARAM_CHARS - 1)}\u2026` : text;
}

/**
 * Fill a template's placeholders: {name} is the value (cut to MAX_PARAM_CHARS characters); {name|one|other}
 * is the word for the count `name` ("one" when it is 1, "other" otherwise: "{rows} {rows|row|rows}").
 * A missing value is shown as "?" so a gap is visible, not hidden. Every catalogue fills its templates
 * with this one function.
 * @example fillTemplate("{n} {n|row|rows}", { n: 1 }) // "1 row"
 */
export function fillTemplate(template: string, params: Record<string, unknown> = {}): string {
  return template.replace(/\{(\w+)(?:\|([^|{}]*)\|([^|{}]*))?\}/g, (_, key: string, one?: string, other?: string) => {
    const value = params[key];
    if (one !== undefined) return Number(value) === 1 ? one : (other as string);
    return value === undefined ? "?" : paramText(value);
  });
}

/** The message of an engine code with its placeholders filled (see fillTemplate). */
export function formatMessage(code: MessageCode, params: Record<string, unknown> = {}): string {
  return fillTemplate(ENGINE_MESSAGES[code].template, params);
}

/**
 * The one error type thrown for problems the user can act on, by the engine and the surface alike.
 * Adapters turn it into a cell error (#VALUE! or #N/A) with `message`; anything else thrown is a bug
 * and becomes INTERNAL. An engine code finds its entry here; a surface catalogue passes its own entry.
 */
export class OddsmithError extends Error {
  readonly code: string;
  readonly cellError: CellErrorKind;
  readonly params: Record<string, unknown>;

  constructor(code: MessageCode, params?: Record<string, unknown>);
  constructor(code: string, params: Record<string, unknown>, entry: MessageEntry);
  constructor(code: string, params: Record<string, unknown> = {}, entry: MessageEntry = ENGINE_MESSAGES[code as MessageCode]) {
    super(fillTemplate(entry.template, params));
    this.name = "OddsmithError";
    this.code = code;
    this.cellError = entry.cellError;
    this.params = params;
  }
}

/** Shorthand used throughout the engine: `throw problem("EMPTY_RANGE", { argument: "labels" })`. */
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

/** How many rows a message names as examples ("for example rows 3, 4, 7, 9, 12, ..."). */
export const EXAMPLE_ROWS = 5;

/**
 * The example rows of a message: the first EXAMPLE_ROWS of `rows`, each shown as `show(row)` (by
 * default 0-based index + 1), with ", ..." when there are more.
 * @example exampleRows([0, 1, 4]) // "1, 2, 5"
 */
export function exampleRows(rows: readonly number[], show: (row: number) => number = (r) => r + 1): string {
  const shown = rows.slice(0, EXAMPLE_ROWS).map(show).join(", ");
  return rows.length > EXAMPLE_ROWS ? `${shown}, ...` : shown;
}

/**
 * The one severity policy of the fits' diagnostics (binary and multi-class alike): "error" when
 * no usable estimate is left (the numbers are NaN), "warning" when an estimate is given but
 * qualified, "note" for information about how it was made. A fit that stops at the iteration cap
 * keeps its last estimate with a NOT_CONVERGED warning (as R's glm does), and rows skipped for a
 * missing value are a ROWS_SKIPPED warning in every fit.
 * Common practice (R's glm warns and keeps the estimate when it does not converge).
 */
export const DIAGNOSTIC_SEVERITY = {
  NO_USABLE_ROWS: "error",
  ONE_CLASS_ONLY: "error",
  EMPTY_CLASS: "error",
  TOO_FEW_ROWS: "error",
  SEPARATION_COMPLETE: "error",
  SEPARATION_QUASI: "error",
  CLASSES_SEPARATED: "error",
  COEFFICIENT_OVERFLOW: "error",
  LIKELIHOOD_NOT_FINITE: "error",
  NOT_CONVERGED: "warning",
  ROWS_SKIPPED: "warning",
  ALIASED_COLUMNS: "warning",
  PROFILE_INTERVAL_OPEN: "warning",
  SEPARATION_HANDLED: "note",
  PENALIZED_NO_P_VALUES: "note",
  PROFILE_NOT_AVAILABLE: "note",
} as const satisfies Partial<Record<MessageCode, "error" | "warning" | "note">>;

/** A code that a fit reports as a diagnostic (see DIAGNOSTIC_SEVERITY). */
export type FitDiagnosticCode = keyof typeof DIAGNOSTIC_SEVERITY;

/**
 * A fit's diagnostic: the code, its severity from DIAGNOSTIC_SEVERITY, the filled message and
 * its parameters, plus `extra` (columns, rows).
 * Common practice (diagnostics carried in the result rather than logged).
 */
export function fitDiagnostic(
  code: FitDiagnosticCode,
  params: Record<string, unknown>,
  extra: { columns?: string[]; rows?: number[] } = {},
): { code: FitDiagnosticCode; severity: (typeof DIAGNOSTIC_SEVERITY)[FitDiagnosticCode]; message: string; params: Record<string, unknown>; columns?: string[]; rows?: number[] } {
  return { code, severity: DIAGNOSTIC_SEVERITY[code], message: formatMessage(code, params), params, ...extra };
}
