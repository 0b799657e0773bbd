import { chooseThreshold } from "../../../../src/engine/evaluation/chooseThreshold";
import { OddsmithError } from "../../../../src/engine/messages";

/*
 * Hand-computed table (8 rows, 4 positives). A row is flagged when p >= threshold.
 *
 *   p:  0.95 0.85 0.70 0.60 0.45 0.30 0.20 0.10
 *   y:   1    1    0    1    0    1    0    0
 *
 *   threshold  flagged  TP FP FN | FP+FN  3FP+FN  0.25FP+FN
 *   1 (none)      0      0  0  4 |   4      4       4
 *   0.95          1      1  0  3 |   3      3       3
 *   0.85          2      2  0  2 |   2      2       2
 *   0.70          3      2  1  2 |   3      5       2.25
 *   0.60          4      3  1  1 |   2      4       1.25
 *   0.45          5      3  2  1 |   3      7       1.5
 *   0.30          6      4  2  0 |   2      6       0.5
 *   0.20          7      4  3  0 |   3      9       0.75
 *   0.10          8      4  4  0 |   4     12       1
 *
 * ratio 1: minimum 2 at 0.85, 0.60 and 0.30; ties go to the highest threshold -> 0.85, cost 2/8.
 * ratio 3: minimum 2 at 0.85 -> cost 2/8.  ratio 0.25: minimum 0.5 at 0.30 -> cost 0.5/8.
 * sensitivity >= 0.75 needs TP >= 3: highest such threshold 0.60; sensitivity 1 needs TP 4: 0.30.
 * budget 5 rows: lowest threshold flagging <= 5 rows is 0.45; budget 0: flag nothing (threshold 1).
 */
const y = new Float64Array([1, 1, 0, 1, 0, 1, 0, 0]);
const p = new Float64Array([0.95, 0.85, 0.7, 0.6, 0.45, 0.3, 0.2, 0.1]);
/** Sums of a few numbers of one-tenth size: exact to rounding. */
const EXACT = 12;

describe("chooseThreshold against the hand-computed table", () => {
  test("cost ratio 1: tie among 0.85, 0.60, 0.30 goes to the highest threshold", () => {
    const c = chooseThreshold(y, p, { rule: "cost", costRatio: 1 });
    expect(c.threshold).toBe(0.85);
    expect(c.expectedCost).toBeCloseTo(2 / 8, EXACT);
    expect([c.counts.truePositives, c.counts.falsePositives, c.counts.falseNegatives, c.counts.trueNegatives]).toEqual([2, 0, 2, 4]);
  });
  test("cost ratio 3 (false positives dear) and 0.25 (false negatives dear)", () => {
    expect(chooseThreshold(y, p, { rule: "cost", costRatio: 3 }).threshold).toBe(0.85);
    const cheap = chooseThreshold(y, p, { rule: "cost", costRatio: 0.25 });
    expect(cheap.threshold).toBe(0.3);
    expect(cheap.expectedCost).toBeCloseTo(0.5 / 8, EXACT);
    expect(cheap.flaggedRows).toBe(6);
    expect([cheap.counts.truePositives, cheap.counts.falsePositives]).toEqual([4, 2]);
  });
  test("target sensitivity", () => {
    const s = chooseThreshold(y, p, { rule: "sensitivity", target: 0.75 });
    expect(s.threshold).toBe(0.6);
    expect(s.counts.sensitivity).toBe(0.75);
    expect(chooseThreshold(y, p, { rule: "sensitivity", target: 1 }).threshold).toBe(0.3);
  });
  test("review budget", () => {
    const b = chooseThreshold(y, p, { rule: "budget", budget: 5 });
    expect(b.threshold).toBe(0.45);
    expect(b.flaggedRows).toBe(5);
    const none = chooseThreshold(y, p, { rule: "budget", budget: 0 });
    expect(none.threshold).toBe(1);
    expect(none.flaggedRows).toBe(0);
    expect(none.counts.truePositives + none.counts.falsePositives).toBe(0);
  });
  test("rows tied at the budget's cut-off stay together (fewer than the budget are flagged)", () => {
    // p 0.9, 0.5, 0.5, 0.1: flagging the two 0.5 rows would make 3 > 2, so only the 0.9 row is flagged.
    const b = chooseThreshold(new Float64Array([1, 1, 0, 0]), new Float64Array([0.9, 0.5, 0.5, 0.1]), { rule: "budget", budget: 2 });
    expect(b.threshold).toBe(0.9);
    expect(b.flaggedRows).toBe(1);
  });
  test("weights: the positive at 0.30 weighted 3 moves the cost-1 choice to 0.30", () => {
    // Positives weigh 6, total 10. At 0.85: FN 4 -> 4; at 0.60: FP 1 + FN 3 -> 4; at 0.30: FP 2 -> 2.
    const w = new Float64Array([1, 1, 1, 1, 1, 3, 1, 1]);
    const c = chooseThreshold(y, p, { rule: "cost", costRatio: 1 }, w);
    expect(c.threshold).toBe(0.3);
    expect(c.expectedCost).toBeCloseTo(2 / 10, EXACT);
  });
  test("out-of-range rule values are refused with BAD_OPTION_VALUE", () => {
    const code = (f: () => unknown) => {
      try {
        f();
      } catch (e) {
        return (e as OddsmithError).code;
      }
      return "none";
    };
    expect(code(() => chooseThreshold(y, p, { rule: "cost", costRatio: 0 }))).toBe("BAD_OPTION_VALUE");
    expect(code(() => chooseThreshold(y, p, { rule: "sensitivity", target: 1.5 }))).toBe("BAD_OPTION_VALUE");
    expect(code(() => chooseThreshold(y, p, { rule: "budget", budget: 2.5 }))).toBe("BAD_OPTION_VALUE");
  });
});
