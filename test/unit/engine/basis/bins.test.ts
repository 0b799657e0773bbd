import { applyBins, binNames, fitBins } from "../../../../src/engine/basis/bins";

const col = (values: (number | string | null)[], name = "age") => ({ name, values });

describe("quantile bins", () => {
  test("4 bins of 1..8 have edges at the type-7 quartiles 2.75, 4.5, 6.25 (first bin is the reference)", () => {
    const s = fitBins(col([1, 2, 3, 4, 5, 6, 7, 8]), 4);
    expect(s.edges).toEqual([2.75, 4.5, 6.25]);
    expect(s.names).toEqual(["bin(age)=(2.75,4.5]", "bin(age)=(4.5,6.25]", "bin(age)=(6.25,inf)"]);
  });

  test("intervals are closed on the right: a value equal to an edge falls in the lower bin", () => {
    const s = fitBins(col([1, 2, 3, 4, 5, 6, 7, 8]), 4);
    const b = applyBins(s, col([4.5, 4.5000001]));
    expect(b.columns.map((c) => c[0])).toEqual([1, 0, 0]);
    expect(b.columns.map((c) => c[1])).toEqual([0, 1, 0]);
  });

  test("new values outside the training range fall in the open-ended outer bins, without a note", () => {
    const s = fitBins(col([1, 2, 3, 4, 5, 6, 7, 8]), 2);
    const b = applyBins(s, col([-100, 100]));
    expect(Array.from(b.columns[0])).toEqual([0, 1]);
    expect(b.notes).toHaveLength(0);
  });

  test("tied values merge equal edges: fewer bins and a BASIS_REDUCED note", () => {
    const s = fitBins(col([1, 1, 1, 1, 1, 1, 2, 3]), 4);
    expect(s.edges).toEqual([1, 1.25]); // quantiles 1, 1, 1.25: the repeated 1 is merged
    expect(s.fitNotes[0].message).toContain("tied values");
  });

  test("a constant column is refused", () => {
    expect(() => fitBins(col([2, 2, 2]), 3)).toThrow(/bins\(3\) on "age"/);
  });

  test("names gain digits until they differ", () => {
    const names = binNames("x", [1.0000001, 1.0000002]);
    expect(new Set(names).size).toBe(2);
  });
});
