import { ENGINE_MESSAGES } from "../../../src/engine/messages";
import { CELL_MESSAGES, codeOf, formatMessage, isMessageCode, MESSAGES, OddsmithError, PANE_MESSAGES, problem } from "../../../src/shared/messages";

describe("the combined message catalogue (engine and surface)", () => {
  test("no code is in two catalogues, and MESSAGES holds every code of each", () => {
    const engine = Object.keys(ENGINE_MESSAGES);
    const cell = Object.keys(CELL_MESSAGES);
    const pane = Object.keys(PANE_MESSAGES);
    const all = [...engine, ...cell, ...pane];
    expect(new Set(all).size).toBe(all.length);
    expect(Object.keys(MESSAGES).sort()).toEqual([...all].sort());
    // The engine's codes come first (docs/errors.md lists them in this order).
    expect(Object.keys(MESSAGES).slice(0, engine.length)).toEqual(engine);
  });

  test("every entry says what to do or names what was found", () => {
    for (const [code, entry] of Object.entries(MESSAGES)) {
      expect([code, entry.template.length > 30]).toEqual([code, true]);
      expect(["#VALUE!", "#N/A"]).toContain(entry.cellError);
    }
  });

  test("problem() builds the one error type for a surface code, with that code's cell error and text", () => {
    const e = problem("RANGE_TOO_LARGE", { argument: "predictors", cells: "2,000,000", limit: "about 5 MB per call" });
    expect(e).toBeInstanceOf(OddsmithError);
    expect(e.code).toBe("RANGE_TOO_LARGE");
    expect(e.cellError).toBe("#VALUE!");
    expect(e.message).toBe(
      "The predictors range holds about 2,000,000 cells, more than a cell function can receive (about 5 MB per call). Use the Oddsmith task pane, which reads large tables in pieces.",
    );
    expect(problem("BASIS_FOLLOWED_ROWS", {}).cellError).toBe("#N/A");
  });

  test("problem() and formatMessage() over an engine code give what the engine's own give", () => {
    const params = { rows: 1, parameters: 3 };
    expect(problem("TOO_FEW_ROWS", params).message).toBe("Only 1 usable row for 3 parameters. Add rows, remove predictors, or set a penalty.");
    expect(formatMessage("TOO_FEW_ROWS", params)).toBe(new OddsmithError("TOO_FEW_ROWS", params).message);
  });

  test("the plural form {count|one|other} works in surface templates too", () => {
    const one = formatMessage("OUTPUT_TOO_LARGE", { fn: "ODDS.FIT", rows: 1, columns: 1, what: "x", cells: "1", hint: "" });
    const many = formatMessage("OUTPUT_TOO_LARGE", { fn: "ODDS.FIT", rows: 2, columns: 3, what: "x", cells: "1", hint: "" });
    expect(one).toContain("would return 1 row x 1 column (x)");
    expect(many).toContain("would return 2 rows x 3 columns (x)");
  });

  test("codeOf names the code of an error, and INTERNAL for a code no catalogue has", () => {
    expect(codeOf(problem("OPTION_SYNTAX", {}))).toBe("OPTION_SYNTAX");
    expect(codeOf(new OddsmithError("NO_SUCH_CODE", {}, MESSAGES.INTERNAL))).toBe("INTERNAL");
    expect(isMessageCode("BASIS_FOLLOW_LOST")).toBe(true);
    expect(isMessageCode("toString")).toBe(false);
  });
});
