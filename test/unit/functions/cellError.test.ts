/**
 * How thrown values become cell errors: catalogue problems keep their message and kind; anything else
 * becomes the INTERNAL message (never the raw text); inside Office the result is a
 * CustomFunctions.Error with the matching error code.
 */
import { formatMessage, problem } from "../../../src/shared/messages";
import { CellFunctionFailure, describeFailure, runCell, toCellError } from "../../../src/functions/cellError";

describe("cell errors outside Office (CustomFunctions undefined)", () => {
  test("a #VALUE! problem keeps its code, kind and catalogue message", () => {
    const e = toCellError(problem("EMPTY_RANGE", { argument: "labels" }), "fitting the model");
    expect(e).toBeInstanceOf(CellFunctionFailure);
    const f = e as CellFunctionFailure;
    expect(f.cellError).toBe("#VALUE!");
    expect(f.code).toBe("EMPTY_RANGE");
    expect(f.message).toBe(formatMessage("EMPTY_RANGE", { argument: "labels" }));
  });

  test("a #N/A problem stays #N/A", () => {
    const f = toCellError(problem("TOO_FEW_ROWS", { rows: 2, parameters: 4 }), "fitting") as CellFunctionFailure;
    expect(f.cellError).toBe("#N/A");
    expect(f.code).toBe("TOO_FEW_ROWS");
  });

  test("any other exception becomes INTERNAL, naming the activity and hiding the raw text", () => {
    const info = describeFailure(new TypeError("Cannot read properties of undefined (reading 'x')"), "fitting the model");
    expect(info.code).toBe("INTERNAL");
    expect(info.cellError).toBe("#VALUE!");
    expect(info.message).toBe(formatMessage("INTERNAL", { doing: "fitting the model" }));
    expect(info.message).not.toContain("undefined");
  });

  test("a thrown non-Error value is INTERNAL too", () => {
    expect(describeFailure("boom", "scoring").code).toBe("INTERNAL");
    expect(describeFailure(undefined, "scoring").message).not.toContain("boom");
  });

  test("runCell passes results through and converts failures", () => {
    expect(runCell("x", () => [[1]])).toEqual([[1]]);
    expect(() => runCell("x", () => {
      throw problem("EMPTY_RANGE", { argument: "rows" });
    })).toThrow(CellFunctionFailure);
  });

  test("a CellFunctionFailure passing through a second wrapper keeps its code", () => {
    const inner = new CellFunctionFailure({ cellError: "#N/A", code: "NOT_CONVERGED", message: "m" });
    expect(describeFailure(inner, "x")).toEqual({ cellError: "#N/A", code: "NOT_CONVERGED", message: "m" });
  });
});

describe("cell errors inside Office (CustomFunctions.Error present)", () => {
  class FakeCFError {
    constructor(
      public code: string,
      public message: string,
    ) {}
  }
  const g = globalThis as unknown as Record<string, unknown>;
  beforeAll(() => {
    g.CustomFunctions = {
      Error: FakeCFError,
      ErrorCode: { invalidValue: "#VALUE!", notAvailable: "#N/A" },
    };
  });
  afterAll(() => {
    delete g.CustomFunctions;
  });

  test("#VALUE! problems become CustomFunctions.Error(invalidValue, message)", () => {
    const e = toCellError(problem("EMPTY_RANGE", { argument: "labels" }), "fitting") as unknown as FakeCFError;
    expect(e).toBeInstanceOf(FakeCFError);
    expect(e.code).toBe("#VALUE!");
    expect(e.message).toBe(formatMessage("EMPTY_RANGE", { argument: "labels" }));
  });

  test("#N/A problems become CustomFunctions.Error(notAvailable, message)", () => {
    const e = toCellError(problem("SEPARATION_COMPLETE", { columns: '"x"' }), "fitting") as unknown as FakeCFError;
    expect(e.code).toBe("#N/A");
    expect(e.message).toContain('"x"');
  });

  test("bugs become invalidValue with the INTERNAL message", () => {
    const e = toCellError(new RangeError("Invalid array length"), "scoring rows") as unknown as FakeCFError;
    expect(e.code).toBe("#VALUE!");
    expect(e.message).toBe(formatMessage("INTERNAL", { doing: "scoring rows" }));
  });
});
