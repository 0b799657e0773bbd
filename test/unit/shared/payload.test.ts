/**
 * The payload guard: the estimate rule (JSON text size) and RANGE_TOO_LARGE above ~5 MB, naming the
 * largest argument and pointing to the task pane.
 */
import { formatMessage } from "../../../src/shared/messages";
import { OddsmithError } from "../../../src/shared/messages";
import fc from "fast-check";
import { PAYLOAD_LIMIT_BYTES, PAYLOAD_SIZER, checkPayload, estimateBytes } from "../../../src/shared/payload";
import { contentKeyAndSizes } from "../../../src/shared/fitCache";

/** Excel's largest sheet: a whole-column reference carries this many rows. */
const SHEET_ROWS = 1_048_576;

function catchProblem(f: () => unknown): OddsmithError {
  try {
    f();
  } catch (e) {
    if (e instanceof OddsmithError) return e;
    throw e;
  }
  throw new Error("expected a problem");
}

describe("estimateBytes (JSON text of the values)", () => {
  test("counts digits, separators and brackets as JSON.stringify writes them (within 2 bytes)", () => {
    const range = [
      [0.25, "North", null, true],
      [12, "", false, -3.5e-7],
    ];
    // The estimate adds a separator after every cell, JSON omits the last one per row: 1 byte per row.
    expect(Math.abs(estimateBytes(range) - JSON.stringify(range).length)).toBeLessThanOrEqual(range.length + 1);
  });

  test("a scalar costs its own text", () => {
    expect(estimateBytes("penalty=0.1")).toBe("penalty=0.1".length + 3);
  });
});

describe("checkPayload", () => {
  test("lets a 200 x 5 numeric table through", () => {
    const t = Array.from({ length: 200 }, (_, i) => [i, i * 0.5, i % 2, 3.25, -1]);
    expect(checkPayload([{ argument: "predictors", cells: t }])).toBeLessThan(PAYLOAD_LIMIT_BYTES);
  });

  test("refuses a whole-column reference (1,048,576 blank-padded rows) with RANGE_TOO_LARGE", () => {
    const column = Array.from({ length: SHEET_ROWS }, (_, i) => [i < 200 ? i % 2 : null]);
    const e = catchProblem(() => checkPayload([{ argument: "labels", cells: column }, { argument: "predictors", cells: [[1]] }]));
    expect(e.code).toBe("RANGE_TOO_LARGE");
    expect(e.cellError).toBe("#VALUE!");
    expect(e.message).toBe(
      formatMessage("RANGE_TOO_LARGE", { argument: "labels", cells: "1,048,576", limit: "about 5 MB per call" }),
    );
    expect(e.message).toContain("task pane");
  });

  test("names the largest argument", () => {
    const small = [[1]];
    const big = Array.from({ length: 300_000 }, () => [1.23456789, 2.3456789, 3.456789]);
    const e = catchProblem(() => checkPayload([{ argument: "labels", cells: small }, { argument: "new_rows", cells: big }]));
    expect(e.params.argument).toBe("new_rows");
  });

  test("counts long text at its length", () => {
    const longText = "x".repeat(1000);
    const rows = Array.from({ length: 6000 }, () => [longText]); // ~6 MB of text in only 6,000 cells
    expect(catchProblem(() => checkPayload([{ argument: "data", cells: rows }])).code).toBe("RANGE_TOO_LARGE");
  });

  test("adds the output cells of the call", () => {
    const input = Array.from({ length: 1000 }, () => [0.5]);
    expect(() => checkPayload([{ argument: "labels", cells: input }], 10)).not.toThrow();
    // 300,000 output cells at 20 bytes each is 6 MB.
    expect(catchProblem(() => checkPayload([{ argument: "labels", cells: input }], 300_000)).code).toBe("RANGE_TOO_LARGE");
  });

  test("a limit passed in replaces the default (the rule is the same at any size)", () => {
    const t = [[1, 2, 3]];
    expect(() => checkPayload([{ argument: "x", cells: t }], 0, 5)).toThrow(OddsmithError);
    expect(checkPayload([{ argument: "x", cells: t }], 0, 1000)).toBeGreaterThan(0);
  });
});

describe("sizing in the pass that hashes the cells", () => {
  test("contentKeyAndSizes with PAYLOAD_SIZER gives estimateBytes of every range", () => {
    const cell = fc.oneof(
      { weight: 4, arbitrary: fc.double({ noNaN: true, noDefaultInfinity: true }) },
      { weight: 1, arbitrary: fc.constantFrom<unknown>(null, true, false, "", "North", "a longer text than any number here", 0, -0, 12, 2.5) },
    );
    fc.assert(
      fc.property(fc.array(fc.array(cell, { minLength: 1, maxLength: 6 }), { minLength: 1, maxLength: 10 }), (rows) => {
        const { sizes } = contentKeyAndSizes(["v", rows], PAYLOAD_SIZER);
        return sizes[1] === estimateBytes(rows);
      }),
      { numRuns: 2_000 },
    );
  });
});
