import { applyMinmax, fitMinmax } from "../../../../src/engine/basis/minmax";
import { applyZscore, fitZscore } from "../../../../src/engine/basis/zscore";

const col = (values: (number | string | null)[], name = "x") => ({ name, values });

describe("z-score", () => {
  test("uses the sample SD (n - 1): 1..5 has mean 3 and SD sqrt(2.5) (textbook value)", () => {
    const s = fitZscore(col([1, 2, 3, 4, 5]));
    expect(s.mean).toBe(3);
    expect(s.sd).toBeCloseTo(Math.sqrt(2.5), 15);
    expect(s.names).toEqual(["z(x)"]);
  });

  test("new rows use the training mean and SD, so they equal the same rows standardized inside the training batch", () => {
    const trainRows = [12, 15, 9, 20, 14, 11];
    const s = fitZscore(col(trainRows));
    const alone = applyZscore(s, col([15, 20])).columns[0];
    const inside = applyZscore(s, col(trainRows)).columns[0];
    expect(Array.from(alone)).toEqual([inside[1], inside[3]]);
    expect(Array.from(applyZscore(s, col([100])).columns[0])).toEqual([(100 - s.mean) / s.sd]);
  });

  test("a constant column is refused (SD 0), naming the column", () => {
    expect(() => fitZscore(col([4, 4, 4]))).toThrow(/z on "x" needs at least 2 distinct values/);
  });
});

describe("min-max scaling", () => {
  test("maps the training range onto [0, 1] and is named minmax(x)", () => {
    const s = fitMinmax(col([2, 4, 10]));
    expect(Array.from(applyMinmax(s, col([2, 4, 10])).columns[0])).toEqual([0, 0.25, 1]);
    expect(s.names).toEqual(["minmax(x)"]);
  });

  test("new values outside the training range extend the same line (not clipped) and get no note", () => {
    const s = fitMinmax(col([2, 10]));
    const b = applyMinmax(s, col([-6, 18]));
    expect(Array.from(b.columns[0])).toEqual([-1, 2]);
    expect(b.notes).toHaveLength(0);
  });

  test("a constant column is refused", () => {
    expect(() => fitMinmax(col([3, 3]))).toThrow(/minmax on "x"/);
  });
});
