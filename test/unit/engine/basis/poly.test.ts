import { applyPoly, fitPoly, polyNames } from "../../../../src/engine/basis/poly";
import { OddsmithError } from "../../../../src/engine/messages";

const col = (values: (number | string | null)[], name = "age") => ({ name, values });

describe("polynomial basis", () => {
  test("raw powers are named age, age^2, age^3 and equal x, x^2, x^3", () => {
    const s = fitPoly(col([1, 2, 3]), { degree: 3, orthogonal: false });
    const b = applyPoly(s, col([2, -3]));
    expect(b.names).toEqual(["age", "age^2", "age^3"]);
    expect(b.columns.map((c) => Array.from(c))).toEqual([[2, -3], [4, 9], [8, -27]]);
  });

  test("orthogonal columns are named opoly(age)1.. and are orthonormal with zero mean over the training rows", () => {
    const x = [3, 7, 1, 9, 4, 4, 12, 6];
    const s = fitPoly(col(x), { degree: 3, orthogonal: true });
    const cols = applyPoly(s, col(x)).columns;
    expect(polyNames("age", 3, true)).toEqual(["opoly(age)1", "opoly(age)2", "opoly(age)3"]);
    for (let a = 0; a < 3; a++) {
      expect(Math.abs(cols[a].reduce((t, v) => t + v, 0))).toBeLessThan(1e-12);
      for (let b = 0; b < 3; b++) {
        const dot = cols[a].reduce((t, v, i) => t + v * cols[b][i], 0);
        expect(Math.abs(dot - (a === b ? 1 : 0))).toBeLessThan(1e-12);
      }
    }
  });

  test("the stored state is plain JSON: a round trip through JSON.stringify gives identical columns", () => {
    const s = fitPoly(col([1.5, 2, 3.25, 8, 9]), { degree: 2, orthogonal: true });
    const again = JSON.parse(JSON.stringify(s));
    expect(applyPoly(again, col([0, 4, 10])).columns).toEqual(applyPoly(s, col([0, 4, 10])).columns);
  });

  test("orthogonal degree must be below the number of distinct training values (as R requires)", () => {
    expect(() => fitPoly(col([1, 1, 2, 2]), { degree: 2, orthogonal: true })).toThrow(OddsmithError);
    expect(() => fitPoly(col([1, 1, 2, 2]), { degree: 2, orthogonal: true })).toThrow(/needs at least 3 distinct values.*found 2/);
  });

  test("a text cell in the training column is a whole-column error naming the row and value", () => {
    expect(() => fitPoly(col([1, "n/a", 3]), { degree: 2, orthogonal: false })).toThrow(/"age" holds text \(row 2: "n\/a"\)/);
  });

  test("blank training rows are skipped when fitting, and give NaN plus a note when applied", () => {
    const s = fitPoly(col([1, null, 2, 3, 5]), { degree: 2, orthogonal: true });
    expect(s.norm2[1]).toBe(4); // n = 4 usable training rows
    const b = applyPoly(s, col([2, null]));
    expect(Number.isNaN(b.columns[0][1])).toBe(true);
    expect(b.notes).toEqual([expect.objectContaining({ row: 1, column: "age", code: "MISSING_FOR_SCORING" })]);
  });

  test("text in a row being transformed gives NaN and a NOT_A_NUMBER note for that row only", () => {
    const s = fitPoly(col([1, 2, 3]), { degree: 1, orthogonal: false });
    const b = applyPoly(s, col([4, "abc", 6]));
    expect(Array.from(b.columns[0]).map((v) => (Number.isNaN(v) ? "NaN" : v))).toEqual([4, "NaN", 6]);
    expect(b.notes[0]).toMatchObject({ row: 1, code: "NOT_A_NUMBER" });
    expect(b.notes[0].message).toContain('("abc") is not a number');
  });
});

describe("orthogonal polynomials at extreme magnitudes", () => {
  test("data multiplied by 1e300 or 1e-300 gives the same columns as the data itself", () => {
    const base = [0, 1, 2, 0.5, 3, 1.5, 2.5];
    const columnsAt = (c: number) => {
      const col = { name: "a", values: base.map((v) => v * c) };
      return applyPoly(fitPoly(col, { degree: 3, orthogonal: true }), col).columns;
    };
    const ref = columnsAt(1);
    for (const c of [1e300, 1e-300]) {
      const got = columnsAt(c);
      for (let k = 0; k < ref.length; k++) {
        for (let i = 0; i < base.length; i++) expect(Math.abs(got[k][i] - ref[k][i])).toBeLessThan(1e-12);
      }
    }
  });
});
