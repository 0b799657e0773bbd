/**
 * The validation step (src/engine/data/validate.ts): each check with its code, its message and the
 * 1-based row of the range as the user selected it (header row = row 1), called directly and through
 * trainModel (which runs the step once per fit).
 */
import { readAlignedRanges } from "../../../../src/engine/data/alignRanges";
import { readTable } from "../../../../src/engine/data/table";
import {
  MAX_PARAMETERS,
  checkClassCount,
  checkGroupedOutcomes,
  checkModelSize,
  checkOffset,
  checkTrials,
  checkTwoClassOptions,
  checkWeights,
  requireNumericColumn,
  requireSingleColumn,
  validateColumns,
} from "../../../../src/engine/data/validate";
import { trainModel } from "../../../../src/engine/model";
import { caught } from "../../../support/caught";

const rowOf = (i: number) => i + 2; // data row 0 sits in sheet row 2 under a header

describe("validation step: the check functions", () => {
  test("a two-column labels range is SINGLE_COLUMN_NEEDED", () => {
    const e = caught(() => requireSingleColumn(readTable([["a", "b"], [1, 2]], { argument: "labels", headers: "yes" })));
    expect(e.code).toBe("SINGLE_COLUMN_NEEDED");
    expect(e.message).toBe("The labels range has 2 columns. Select a single column.");
  });

  test("text in a weights column is NOT_A_NUMBER at its 1-based row", () => {
    const t = readTable([["w"], ["heavy"], ["light"], [1]], { argument: "weights", headers: "yes" });
    const e = caught(() => requireNumericColumn(t));
    expect(e.code).toBe("NOT_A_NUMBER");
    expect(e.message).toBe('The weights value in row 2, column 1 ("heavy") is not a number. Enter a number or clear the cell.');
  });

  test("a negative weight is BAD_WEIGHT at its row; a missing weight is skipped, not refused", () => {
    const values = Float64Array.from([1, NaN, -0.5]);
    const e = caught(() => checkWeights(values, rowOf, Uint8Array.from([0, 1, 0])));
    expect(e.code).toBe("BAD_WEIGHT");
    expect(e.message).toBe("The weight in row 4 is -0.5. Weights must be finite numbers of zero or more.");
    expect(() => checkWeights(Float64Array.from([1, NaN, 0]), rowOf)).not.toThrow();
    expect(caught(() => checkWeights(Float64Array.from([1, Infinity]), rowOf)).code).toBe("BAD_WEIGHT");
  });

  test("more successes than trials is BAD_TRIALS at its row", () => {
    const e = caught(() => checkTrials(Float64Array.from([1, 4]), Float64Array.from([3, 3]), rowOf));
    expect(e.code).toBe("BAD_TRIALS");
    expect(e.message).toBe("Row 3 has 4 successes out of 3 trials. Successes must lie between 0 and the number of trials.");
    expect(caught(() => checkTrials(Float64Array.from([-1]), Float64Array.from([3]), rowOf)).code).toBe("BAD_TRIALS");
    expect(() => checkTrials(Float64Array.from([NaN, 2]), Float64Array.from([3, NaN]), rowOf)).not.toThrow();
  });

  test("an infinite offset is NOT_FINITE_VALUE at its row; NaN is missing", () => {
    const e = caught(() => checkOffset(Float64Array.from([0, NaN, -Infinity]), rowOf));
    expect(e.code).toBe("NOT_FINITE_VALUE");
    expect(e.params).toMatchObject({ argument: "offset", row: 4 });
  });

  test("one class, a measurement and an identifier column are refused by the class count", () => {
    expect(caught(() => checkClassCount(["yes"], 5, null)).code).toBe("ONE_CLASS_ONLY");
    const many = Array.from({ length: 11 }, (_, i) => String(i));
    expect(caught(() => checkClassCount(many, 20, Number)).code).toBe("TOO_MANY_CLASSES");
    expect(caught(() => checkClassCount(["0.5", "1.5", "2"], 20, Number)).code).toBe("TOO_MANY_CLASSES");
    const labels = Array.from({ length: 51 }, (_, i) => `id${i}`);
    expect(caught(() => checkClassCount(labels, 60, null)).code).toBe("TOO_MANY_LABELS");
    expect(() => checkClassCount(["no", "yes"], 2, null)).not.toThrow();
  });

  test("grouped counts of all successes or all failures are ONE_CLASS_ONLY naming the outcome", () => {
    expect(caught(() => checkGroupedOutcomes(0, 9)).params).toMatchObject({ label: "failure" });
    expect(caught(() => checkGroupedOutcomes(9, 9)).params).toMatchObject({ label: "success" });
    expect(() => checkGroupedOutcomes(4, 9)).not.toThrow();
  });

  test("two-class-only options with three classes are BAD_OPTION_VALUE named as the user wrote them", () => {
    const classes = ["a", "b", "c"];
    expect(caught(() => checkTwoClassOptions({ firth: true, offset: false }, classes)).params).toMatchObject({ name: "firth" });
    expect(caught(() => checkTwoClassOptions({ intervalMethod: "profile", offset: false }, classes)).params).toMatchObject({ name: "interval" });
    expect(caught(() => checkTwoClassOptions({ offset: true }, classes)).params).toMatchObject({ name: "offset" });
  });

  test(`more than ${MAX_PARAMETERS} coefficients are TOO_MANY_PARAMETERS`, () => {
    expect(() => checkModelSize(MAX_PARAMETERS, 1)).not.toThrow();
    expect(caught(() => checkModelSize(251, 2)).params).toMatchObject({ parameters: 502, limit: MAX_PARAMETERS });
  });

  test("aligned ranges of different heights are RANGE_SHAPE_MISMATCH naming both", () => {
    const e = caught(() =>
      readAlignedRanges(
        [
          { argument: "labels", cells: [["y"], ["a"], ["b"], ["a"]] },
          { argument: "predictors", cells: [["x"], [1], [2]] },
        ],
        "auto",
      ),
    );
    expect(e.code).toBe("RANGE_SHAPE_MISMATCH");
    expect(e.params).toMatchObject({ argument: "predictors", got: 2, expectedArgument: "labels", expected: 3 });
  });

  test("validateColumns types the extra columns and checks weights on the aligned rows", () => {
    const read = readAlignedRanges(
      [
        { argument: "labels", cells: [["y"], ["a"], ["b"], ["a"]] },
        { argument: "predictors", cells: [["x"], [1], [2], [3]] },
        { argument: "weights", cells: [["w"], [1], [-2], [1]] },
      ],
      "auto",
    );
    const e = caught(() => validateColumns(read.tables, ["weights"]));
    expect(e.code).toBe("BAD_WEIGHT");
    expect(e.params).toMatchObject({ row: 3, value: -2 });
  });
});

describe("validation step: run by trainModel", () => {
  const labels = [["y"], ["no"], ["yes"], ["no"], ["yes"]];
  const x = [["x"], [1], [2], [3], [4]];
  test("a bad weight in the fit is BAD_WEIGHT at its sheet row", () => {
    const e = caught(() => trainModel(labels, x, { weights: [["w"], [1], [1], ["-1"], [1]] }));
    expect(e.code).toBe("BAD_WEIGHT");
    expect(e.params).toMatchObject({ row: 4 });
  });
  test("a bad grouped count in the fit is BAD_TRIALS at its sheet row", () => {
    const e = caught(() => trainModel([["s"], [1], [5], [0], [2]], x, { trials: [["t"], [3], [3], [3], [3]] }));
    expect(e.code).toBe("BAD_TRIALS");
    expect(e.params).toMatchObject({ row: 3, successes: 5, trials: 3 });
  });
  test("a label column of one class is ONE_CLASS_ONLY", () => {
    expect(caught(() => trainModel([["y"], ["no"], ["no"], ["no"], ["no"]], x)).code).toBe("ONE_CLASS_ONLY");
  });
  test("the trained model keeps each row's class, so nothing parses the labels again", () => {
    const m = trainModel([["y"], ["no"], ["yes"], [null], ["yes"], ["no"]], [["x"], [1], [2], [3], [4], [2.5]]);
    expect(Array.from(m.labels.codes as Int32Array)).toEqual([0, 1, -1, 1, 0]);
    expect(m.labels.classes).toEqual(["no", "yes"]);
  });
});
