import { ENGINE_MESSAGES, exampleRows, fillTemplate, formatMessage, listNames, OddsmithError, problem } from "../../../src/engine/messages";

describe("the engine's message catalogue", () => {
  test("fills every placeholder it is given and marks missing ones with ?", () => {
    expect(formatMessage("EMPTY_RANGE", { argument: "labels" })).toBe(
      "The labels range has no data. Select a range that holds at least one row of values.",
    );
    expect(formatMessage("BAD_WEIGHT", { row: 3 })).toContain("row 3 is ?");
  });

  test("problem() carries the code and the cell error of its entry", () => {
    const e = problem("TOO_FEW_ROWS", { rows: 2, parameters: 3 });
    expect(e).toBeInstanceOf(OddsmithError);
    expect(e.code).toBe("TOO_FEW_ROWS");
    expect(e.cellError).toBe("#N/A");
    expect(e.message).toBe("Only 2 usable rows for 3 parameters. Add rows, remove predictors, or set a penalty.");
  });

  test("every engine entry says what to do or names what was found", () => {
    for (const [code, entry] of Object.entries(ENGINE_MESSAGES)) {
      expect([code, entry.template.length > 30]).toEqual([code, true]);
      expect(["#VALUE!", "#N/A"]).toContain(entry.cellError);
    }
  });

  test("fillTemplate picks the word of {name|one|other} by the count: one for 1, other otherwise", () => {
    expect(fillTemplate("{n} {n|row was|rows were} skipped", { n: 1 })).toBe("1 row was skipped");
    expect(fillTemplate("{n} {n|row was|rows were} skipped", { n: 0 })).toBe("0 rows were skipped");
    expect(fillTemplate("{n} {n|row was|rows were} skipped", { n: 3 })).toBe("3 rows were skipped");
  });

  test("listNames quotes, joins with 'and', and shortens long lists", () => {
    expect(listNames(["a"])).toBe('"a"');
    expect(listNames(["a", "b", "c"])).toBe('"a", "b" and "c"');
    expect(listNames(["a", "b", "c", "d"], 2)).toBe('"a", "b" and 2 more');
  });

  test("exampleRows names at most five rows, 1-based by default, and marks that more exist", () => {
    expect(exampleRows([0, 1, 4])).toBe("1, 2, 5");
    expect(exampleRows([0, 1, 2, 3, 4, 5])).toBe("1, 2, 3, 4, 5, ...");
    expect(exampleRows([10, 11], (r) => r + 2)).toBe("12, 13");
  });
});
