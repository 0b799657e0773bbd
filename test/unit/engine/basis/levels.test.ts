import { applyLevels, fitLevels } from "../../../../src/engine/basis/levels";

const col = (values: (number | string | null)[], name = "region") => ({ name, values });
const region = ["South", "North", "North", "East", "North", "South", "West", "East", "North"];

describe("indicator columns for categories", () => {
  test("the default reference is the most frequent level; columns follow first appearance: region=South, region=East, region=West", () => {
    const s = fitLevels(col(region));
    expect(s.reference).toBe("North");
    expect(s.names).toEqual(["region=South", "region=East", "region=West"]);
  });

  test("a tie for most frequent goes to the level seen first", () => {
    expect(fitLevels(col(["b", "a", "a", "b"])).reference).toBe("b");
  });

  test("ref= picks the reference; indicators are 1 for the row's level and 0 elsewhere", () => {
    const s = fitLevels(col(region), { ref: "East" });
    const b = applyLevels(s, col(["North", "East", "West"]));
    expect(b.names).toEqual(["region=South", "region=North", "region=West"]);
    expect(b.columns.map((c) => Array.from(c))).toEqual([[0, 0, 0], [1, 0, 0], [0, 0, 1]]);
  });

  test("a reference that is not a level is refused, listing the levels", () => {
    expect(() => fitLevels(col(region), { ref: "Central" })).toThrow(/"Central" does not occur in the "region" column. Categories found: "South", "North", "East" and "West"/);
  });

  test("an unseen level gives NaN in all indicators of that row and an UNSEEN_LEVEL note; other rows are unaffected", () => {
    const s = fitLevels(col(region));
    const b = applyLevels(s, col(["Central", "South"]));
    expect(b.columns.every((c) => Number.isNaN(c[0]))).toBe(true);
    expect(b.columns[0][1]).toBe(1);
    expect(b.notes).toHaveLength(1);
    expect(b.notes[0].message).toBe('Row 1 has "Central" in "region", a category the model was not trained on. Known categories: "South", "North", "East" and "West".');
  });

  test("levels are matched exactly after trimming spaces (case-sensitive, like the shared range parser)", () => {
    const s = fitLevels(col(["a", "b", "a"]));
    const b = applyLevels(s, col(["  b ", "B"]));
    expect(b.columns[0][0]).toBe(1);
    expect(b.notes[0]).toMatchObject({ row: 1, code: "UNSEEN_LEVEL" });
  });

  test("pool=2 (a count) puts levels seen in fewer than 2 training rows into region=(other)", () => {
    const s = fitLevels(col(region), { minCount: 2 });
    expect(s.pooled).toEqual(["West"]);
    expect(s.names).toEqual(["region=South", "region=East", "region=(other)"]);
    expect(applyLevels(s, col(["West"])).columns.map((c) => c[0])).toEqual([0, 0, 1]);
  });

  test("pool=25% (a share) pools levels under a quarter of the training rows, never the reference", () => {
    const s = fitLevels(col(region), { minShare: 0.25, ref: "West" });
    expect(s.reference).toBe("West");
    expect(s.pooled).toEqual(["South", "East"]);
    expect(s.names).toEqual(["region=North", "region=(other)"]);
  });

  test("numbers in a category column are levels by their text", () => {
    const s = fitLevels(col([1, 2, 2, 3], "grade"));
    expect(s.names).toEqual(["grade=1", "grade=3"]);
  });

  test("a single level (after pooling) is refused: indicators need two categories", () => {
    expect(() => fitLevels(col(["a", "a", null]))).toThrow(/levels on "region" needs at least 2 distinct values.*found 1/);
  });

  test("a blank gives NaN and a MISSING_FOR_SCORING note", () => {
    const b = applyLevels(fitLevels(col(region)), col([null]));
    expect(b.notes[0].code).toBe("MISSING_FOR_SCORING");
  });
});
