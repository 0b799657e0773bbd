import { applyNs, bsplineRow, fitNs } from "../../../../src/engine/basis/ns";

const col = (values: (number | string | null)[], name = "age") => ({ name, values });
const train = [18, 22, 25, 29, 31, 34, 38, 41, 45, 47, 52, 55, 58, 63, 67, 70, 74, 79];

describe("natural cubic spline basis", () => {
  test("df 4 gives columns ns(age)1..ns(age)4 with 3 interior knots at the quartiles", () => {
    const s = fitNs(col(train), { df: 4 });
    expect(s.names).toEqual(["ns(age)1", "ns(age)2", "ns(age)3", "ns(age)4"]);
    expect(s.knots.length).toBe(3);
    expect(s.boundary).toEqual([18, 79]);
  });

  test("B-splines on any knot sequence sum to one inside the boundary (partition of unity)", () => {
    const t = [0, 0, 0, 0, 1, 2.5, 4, 4, 4, 4];
    for (const x of [0, 0.3, 1, 2.2, 3.99, 4]) {
      const sum = bsplineRow(t, x, 0).reduce((a, v) => a + v, 0);
      expect(Math.abs(sum - 1)).toBeLessThan(1e-14);
    }
  });

  test("beyond the boundary knots every column continues as a straight line (zero second difference)", () => {
    const s = fitNs(col(train), { df: 3 });
    for (const xs of [[-10, -5, 0], [90, 100, 110]]) {
      const b = applyNs(s, col(xs)).columns;
      for (const c of b) expect(Math.abs(c[0] - 2 * c[1] + c[2])).toBeLessThan(1e-12);
    }
  });

  test("the stored knots transform new rows alone exactly as inside a batch with the training rows", () => {
    const s = fitNs(col(train), { df: 4 });
    const fresh = [20.5, 50, 80, 10];
    const alone = applyNs(s, col(fresh)).columns;
    const together = applyNs(s, col([...train, ...fresh])).columns;
    alone.forEach((c, j) => expect(Array.from(together[j].subarray(train.length))).toEqual(Array.from(c)));
  });

  test("tied values whose quantile knots coincide are refused with advice, not a singular basis", () => {
    const tied = [1, 1, 1, 1, 1, 1, 1, 1, 2, 9];
    expect(() => fitNs(col(tied), { df: 4 })).toThrow(/quantile knots coincide.*smaller df/);
  });

  test("explicit knots outside the training range are refused, naming the boundary", () => {
    expect(() => fitNs(col(train), { knots: [10, 40] })).toThrow(/knots=10 is not allowed.*between the boundary knots 18 and 79/);
  });

  test("a constant training column is refused: a spline needs values that differ", () => {
    expect(() => fitNs(col([5, 5, 5]), { df: 2 })).toThrow(/needs at least 2 distinct values/);
  });

  test("a blank row gives NaN in every spline column and one note", () => {
    const s = fitNs(col(train), { df: 2 });
    const b = applyNs(s, col([30, null]));
    expect(b.columns.every((c) => Number.isNaN(c[1]) && Number.isFinite(c[0]))).toBe(true);
    expect(b.notes).toHaveLength(1);
  });
});
