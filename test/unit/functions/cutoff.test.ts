import { cutoffCell } from "../../../src/functions/cutoffCell";
import { OddsmithError } from "../../../src/engine";

// The hand-computed table of test/unit/engine/evaluation/chooseThreshold.test.ts, as sheet ranges.
const labels = [["sorted"], ["keep"], ["keep"], ["drop"], ["keep"], ["drop"], ["keep"], ["drop"], ["drop"]];
const probs = [["P(keep)"], [0.95], [0.85], [0.7], [0.6], [0.45], [0.3], [0.2], [0.1]];
const value = (out: unknown[][], what: string) => out.find((r) => r[0] === what)?.[1];

describe("ODDS.CUTOFF", () => {
  test("cost rule from the options text, counts at the chosen threshold", () => {
    const out = cutoffCell(labels, probs, [["cost=0.25"]]);
    expect(value(out, "threshold")).toBe(0.3);
    expect(value(out, "rows flagged (p >= threshold)")).toBe(6);
    const header = out.findIndex((r) => r[0] === "actual \\ predicted");
    expect(out[header]).toEqual(["actual \\ predicted", "drop", "keep"]);
    expect(out[header + 1]).toEqual(["drop", 2, 2]);
    expect(out[header + 2]).toEqual(["keep", 0, 4]);
  });
  test("sensitivity and budget rules", () => {
    expect(value(cutoffCell(labels, probs, [["sensitivity=0.75"]]), "threshold")).toBe(0.6);
    expect(value(cutoffCell(labels, probs, [["budget=5"]]), "threshold")).toBe(0.45);
  });
  test("two rules at once are refused with BAD_OPTION_VALUE", () => {
    expect(() => cutoffCell(labels, probs, [["cost=1; budget=3"]])).toThrow(OddsmithError);
    try {
      cutoffCell(labels, probs, [["cost=1; budget=3"]]);
    } catch (e) {
      expect((e as OddsmithError).code).toBe("BAD_OPTION_VALUE");
    }
  });
});
