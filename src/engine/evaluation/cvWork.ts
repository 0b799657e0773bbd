/**
 * Work bounds of a cross-validation, checked before any fold is fitted, so a call that could not
 * finish in reasonable time is refused at once with what to change.
 *
 * Policy (one line each):
 * - One fit costs about rows x parameters x (1 + parameters / 64) work units plus a fixed
 *   FIT_OVERHEAD_UNITS (parsing, checks, scoring): the Newton steps' cross-products grow with
 *   rows x parameters^2, the WebAssembly kernels make small parameter counts cost mostly the
 *   rows x parameters passes. Parameters are the terms (intercept included) times the equations.
 * - Measured on this project's machines (two shared cores, Node 20, trainModel plus scoreRows,
 *   warm): 10,000 rows x 11 terms 27 ms (2.1e-7 s per unit), 5,000 x 101 terms 156 ms (1.2e-7),
 *   a 32-row fit about 0.7 ms; so a unit costs at most about 2.5e-7 s.
 * - A cell function allows CV_CELL_WORK_LIMIT units (about 3 s); the task pane, which runs the path
 *   in the background with progress and Cancel, allows CV_PANE_WORK_LIMIT (about a minute).
 * - The check uses the fit on all rows (its rows and parameters), made before any fold; that one fit
 *   is bounded as any cell fit is (the payload guard of the cell functions, MAX_PARAMETERS).
 */
import { problem } from "../messages";

/** Most units a cross-validation in a cell function may take (about 3 s; see the policy above). */
export const CV_CELL_WORK_LIMIT = 1.5e7;
/** Most units a cross-validation started from the task pane may take (about a minute). */
export const CV_PANE_WORK_LIMIT = 3e8;
/** Fixed units of one fit (parsing the ranges, checks, scoring every row). */
export const FIT_OVERHEAD_UNITS = 5000;

/** Work units of one fit of `rows` rows and `parameters` coefficients. */
export function fitWorkUnits(rows: number, parameters: number): number {
  return rows * parameters * (1 + parameters / 64) + FIT_OVERHEAD_UNITS;
}

/** Who asks: a cell function or the task pane (for the limit and the message). */
export type WorkBudget = { limit: number; where: "cell" | "pane" };

/** The budget of a cell function and of the task pane. */
export const CELL_BUDGET: WorkBudget = { limit: CV_CELL_WORK_LIMIT, where: "cell" };
export const PANE_BUDGET: WorkBudget = { limit: CV_PANE_WORK_LIMIT, where: "pane" };

/**
 * Refuse `fits` fits of `rows` x `parameters` above the budget.
 * @throws OddsmithError CV_TOO_COSTLY naming the fits, the size, the work and the limit
 * @example checkCvWork(6, 1000, 5, CELL_BUDGET) // passes; checkCvWork(1000, 1e5, 50, CELL_BUDGET) throws
 */
export function checkCvWork(fits: number, rows: number, parameters: number, budget: WorkBudget): void {
  const work = fits * fitWorkUnits(rows, parameters);
  if (work <= budget.limit) return;
  throw problem("CV_TOO_COSTLY", {
    fits: fits.toLocaleString("en-US"),
    rows: rows.toLocaleString("en-US"),
    parameters: parameters.toLocaleString("en-US"),
    work: work.toExponential(1),
    limit: budget.limit.toExponential(1),
    where: budget.where === "cell" ? "a cell function allows" : "the task pane allows",
    hint: budget.where === "cell" ? "; the task pane's cross-validation runs larger ones in the background" : "",
  });
}
