/**
 * The registry the preview workbench evaluates formulas with: names with or without the namespace,
 * in any case; missing trailing optional arguments become null; results and messages equal those of
 * the functions Excel calls.
 */
import * as spector from "../../fixtures/binary/spector.json";
import { fit } from "../../../src/functions/functions";
import { CellFunctionFailure } from "../../../src/functions/cellError";
import { CELL_FUNCTIONS, NAMESPACE, evaluateCellFunction, findCellFunction } from "../../../src/functions/registry";
import { formatMessage } from "../../../src/shared/messages";
import { OMITTED, column, table } from "./excel";

const d = spector.data;

describe("cell-function registry", () => {
  test("finds functions with or without the namespace, in any case", () => {
    expect(NAMESPACE).toBe("ODDS");
    expect(findCellFunction("ODDS.FIT")?.name).toBe("FIT");
    expect(findCellFunction(" odds.prob ")?.name).toBe("PROB");
    expect(findCellFunction("calibration")?.name).toBe("CALIBRATION");
    expect(findCellFunction("ODDS.NOPE")).toBeUndefined();
    expect(findCellFunction("SUM")).toBeUndefined();
  });

  test("lists every cell function, each with its required parameters before its optional ones", () => {
    expect(CELL_FUNCTIONS.map((f) => f.name)).toEqual([
      "FIT", "PROB", "CLASS", "MARGIN", "REPORT", "LOGLOSS", "AUC", "CONFUSION", "CALIBRATION", "SCORE", "BASIS", "CUTOFF", "EFFECTS", "FORMULAS", "KEPT", "FOLDS", "HOLDOUT", "GROUPS",
    ]);
    for (const f of CELL_FUNCTIONS) {
      const firstOptional = f.parameters.findIndex((p) => p.optional);
      if (firstOptional >= 0) expect(f.parameters.slice(firstOptional).every((p) => p.optional)).toBe(true);
    }
  });

  test("evaluates a formula as Excel would, missing optional arguments as null", () => {
    const labels = column("GRADE", d.GRADE);
    const predictors = table({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI });
    expect(evaluateCellFunction("ODDS.FIT", [labels, predictors])).toEqual(fit(labels, predictors, OMITTED));
  });

  test("reports failures with the same cell error and message as in Excel", () => {
    let thrown: unknown;
    try {
      evaluateCellFunction("ODDS.AUC", [column("y", [1, 0]), column("p", [0.5])]);
    } catch (e) {
      thrown = e;
    }
    expect(thrown).toBeInstanceOf(CellFunctionFailure);
    expect((thrown as CellFunctionFailure).code).toBe("RANGE_SHAPE_MISMATCH");
  });

  test("an unknown name is the catch-all message, never a crash", () => {
    let thrown: unknown;
    try {
      evaluateCellFunction("ODDS.NOPE", []);
    } catch (e) {
      thrown = e;
    }
    expect((thrown as CellFunctionFailure).message).toBe(formatMessage("INTERNAL", { doing: "evaluating ODDS.NOPE" }));
  });
});
