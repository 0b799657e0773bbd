/**
 * The registry of Oddsmith's cell functions: name -> adapter, parameters and what it does.
 *
 * functions.ts (inside Excel) and the preview workbench (outside Excel, evaluating formulas such as
 * "=ODDS.FIT(A1:D40, E1:E40)" in its own sheet view) both call the adapters listed here, so a formula
 * gives the same result, or the same error message, in both places. The parameter lists mirror the
 * JSDoc of functions.ts; test/unit/metadata.test.ts keeps the two in step with the generated
 * functions.json.
 *
 * Nothing here touches Office: importable in Node, tests and any page.
 */
import type { CellValue } from "../engine";
import { runCell } from "./cellError";
import { NAMESPACE } from "./namespace";
import { fitCell } from "./fitCell";
import { classCell, marginCell, probCell } from "./predictCells";
import { reportCell } from "./reportCell";
import { logLossCell } from "./logLossCell";
import { aucCell } from "./aucCell";
import { cutoffCell } from "./cutoffCell";
import { foldsCell } from "./foldsCell";
import { holdoutCell } from "./holdoutCell";
import { effectsCell } from "./effectsCell";
import { groupsCell } from "./groupsCell";
import { confusionCell } from "./confusionCell";
import { calibrationCell } from "./calibrationCell";
import { scoreCell } from "./scoreCell";
import { basisCellGuarded } from "./basisCells";
import { formulasCell } from "./formulasCell";
import { keptCell } from "./keptCell";

/** A range argument as Excel passes it (row-major), or null for an omitted optional argument. */
export type CellRange = CellValue[][];
export type CellArgument = CellRange | null;
/** What every adapter returns: a rectangular 2-D array that spills. */
export type CellResult = CellValue[][];

export interface ParameterSpec {
  /** Name as shown in Excel's formula tooltip (and in functions.json). */
  name: string;
  optional: boolean;
}

export interface CellFunctionSpec {
  /** Function name in the ODDS namespace, also its id in functions.json. */
  name: string;
  /** What the function is doing, for the catch-all message ("... while fitting the model"). */
  doing: string;
  /** Anchor of its section in the help page (help.html#anchor). */
  help: string;
  parameters: ParameterSpec[];
  adapter: (...args: CellArgument[]) => CellResult;
}

const req = (name: string): ParameterSpec => ({ name, optional: false });
const opt = (name: string): ParameterSpec => ({ name, optional: true });

function spec(
  name: string,
  doing: string,
  parameters: ParameterSpec[],
  adapter: (...args: CellArgument[]) => CellResult,
): CellFunctionSpec {
  return { name, doing, help: name.toLowerCase(), parameters, adapter };
}

/** Every cell function, in the order of the help page. */
export const CELL_FUNCTIONS: readonly CellFunctionSpec[] = [
  spec("FIT", "fitting the model", [req("labels"), req("predictors"), opt("options")], (l, p, o) =>
    fitCell(l, p, o ?? null),
  ),
  spec("PROB", "computing probabilities", [req("labels"), req("predictors"), opt("new_rows"), opt("options")], (l, p, n, o) =>
    probCell(l, p, n ?? null, o ?? null),
  ),
  spec("CLASS", "predicting classes", [req("labels"), req("predictors"), opt("new_rows"), opt("options")], (l, p, n, o) =>
    classCell(l, p, n ?? null, o ?? null),
  ),
  spec("MARGIN", "computing margins to the decision boundary", [req("labels"), req("predictors"), opt("new_rows"), opt("options")], (l, p, n, o) =>
    marginCell(l, p, n ?? null, o ?? null),
  ),
  spec("REPORT", "summarizing the fit", [req("labels"), req("predictors"), opt("options")], (l, p, o) =>
    reportCell(l, p, o ?? null),
  ),
  spec("LOGLOSS", "computing the log-loss", [req("labels"), req("probabilities"), opt("options")], (l, p, o) =>
    logLossCell(l, p, o ?? null),
  ),
  spec("AUC", "computing the AUC", [req("labels"), req("probabilities"), opt("options")], (l, p, o) => aucCell(l, p, o ?? null)),
  spec("CONFUSION", "counting predicted against actual classes", [req("labels"), req("probabilities"), opt("options")], (l, p, o) =>
    confusionCell(l, p, o ?? null),
  ),
  spec("CALIBRATION", "building the calibration table", [req("labels"), req("probabilities"), opt("options")], (l, p, o) =>
    calibrationCell(l, p, o ?? null),
  ),
  spec("SCORE", "scoring rows from a coefficient table", [req("coefficients"), req("rows")], (c, r) => scoreCell(c, r)),
  spec("BASIS", "building basis columns", [req("data"), req("recipe"), opt("training_data")], (d, r, t) =>
    basisCellGuarded(d, r, t ?? null),
  ),
  spec("CUTOFF", "choosing the threshold", [req("labels"), req("probabilities"), opt("options")], (l, p, o) =>
    cutoffCell(l, p, o ?? null),
  ),
  spec("EFFECTS", "computing marginal effects", [req("labels"), req("predictors"), opt("options")], (l, p, o) =>
    effectsCell(l, p, o ?? null),
  ),
  spec("FORMULAS", "writing the model as formulas", [req("labels"), req("predictors"), opt("options"), opt("recipe"), opt("data")], (l, p, o, r, d) =>
    formulasCell(l, p, o ?? null, r ?? null, d ?? null),
  ),
  spec("KEPT", "scoring rows with a kept model", [req("model_cells"), req("rows"), opt("options")], (m, r, o) =>
    keptCell(m, r, o ?? null),
  ),
  spec("FOLDS", "cross-validating the model", [req("labels"), req("predictors"), opt("options")], (l, p, o) =>
    foldsCell(l, p, o ?? null),
  ),
  spec("HOLDOUT", "checking the model on held-out rows", [req("labels"), req("predictors"), opt("split"), opt("options")], (l, p, sp, o) =>
    holdoutCell(l, p, sp ?? null, o ?? null),
  ),
  spec("GROUPS", "comparing groups", [req("labels"), req("probabilities_or_predictors"), req("group"), opt("options")], (l, p, g, o) =>
    groupsCell(l, p, g, o ?? null),
  ),
];

/** The same list keyed by name. */
export const CELL_FUNCTIONS_BY_NAME: Readonly<Record<string, CellFunctionSpec>> = Object.fromEntries(
  CELL_FUNCTIONS.map((f) => [f.name, f]),
);

export { NAMESPACE };

/** The registry entry for a name with or without the namespace ("ODDS.FIT", "fit"), or undefined. */
export function findCellFunction(name: string): CellFunctionSpec | undefined {
  const key = name.trim().toUpperCase().replace(new RegExp(`^${NAMESPACE}\\.`), "");
  return CELL_FUNCTIONS_BY_NAME[key];
}

/**
 * Evaluate a cell function by name, as Excel would: missing trailing optional arguments become
 * null; failures are thrown as CellFunctionFailure (outside Office) carrying the cell error and the
 * message. `name` may carry the namespace ("ODDS.FIT") and is case-insensitive.
 * @throws CellFunctionFailure when the name is unknown or the function fails
 */
export function evaluateCellFunction(name: string, args: CellArgument[]): CellResult {
  const fn = findCellFunction(name);
  return runCell(fn ? fn.doing : `evaluating ${name}`, () => {
    if (!fn) throw new UnknownFunction(name);
    const full = fn.parameters.map((_, i) => (i < args.length ? (args[i] ?? null) : null));
    return fn.adapter(...full);
  });
}

/** Thrown for a name the registry does not know; reported as the catch-all message. */
class UnknownFunction extends Error {
  constructor(name: string) {
    super(`unknown cell function ${name}`);
  }
}
