/**
 * The written forms of the two basis transforms whose formulas are not the apply step's own
 * operations: natural splines in truncated power form and orthogonal polynomials as products of
 * their roots. Both must give the apply step's columns, inside and beyond the training range.
 * The formulas themselves are checked in a real spreadsheet engine (test/spreadsheet/).
 */
import { applyNs, fitNs } from "../../../../src/engine/basis/ns";
import { applyPoly, fitPoly } from "../../../../src/engine/basis/poly";
import { orthogonalRoots } from "../../../../src/engine/export/orthogonalPolynomialFormula";
import { splinePowerForm } from "../../../../src/engine/export/splineFormula";

/** Agreement of two ways of computing the same column: rounding only (a few hundred ulps of the scale). */
const SAME_COLUMN = 1e-12;

function powerFormValue(form: ReturnType<typeof splinePowerForm>, k: number, u: number): number {
  const { a, b, w } = form.columns[k];
  let v = a + b * u;
  form.knots.forEach((t, j) => (v += w[j] * Math.max(u - t, 0) ** 3));
  return v;
}

const ages = [18, 19, 22, 25, 25, 27, 30, 33, 34, 38, 41, 45, 47, 52, 55, 58, 61, 64, 70, 77];
const probes = [5, 18, 18.5, 20, 26, 33, 40, 41.7, 50, 63, 77, 80, 120];

describe("natural splines in truncated power form", () => {
  test.each([[{ df: 1 }], [{ df: 3 }], [{ df: 5 }], [{ knots: [30, 31, 60] }], [{ df: 4, boundary: [10, 90] as [number, number] }]])("%j: the form gives the basis columns", (opts) => {
    const state = fitNs({ name: "age", values: ages }, opts);
    const form = splinePowerForm(state);
    const want = applyNs(state, { name: "age", values: probes });
    const [lo, hi] = state.boundary;
    want.columns.forEach((col, k) =>
      probes.forEach((x, i) => {
        const got = powerFormValue(form, k, (x - lo) / (hi - lo));
        expect(Math.abs(got - col[i])).toBeLessThanOrEqual(SAME_COLUMN * Math.max(1, Math.abs(col[i])));
      }),
    );
  });

  test("the knots of the form are the boundary and interior knots on the unit scale", () => {
    const state = fitNs({ name: "age", values: ages }, { knots: [30, 60] });
    expect(splinePowerForm(state).knots).toEqual([0, (30 - 18) / 59, (60 - 18) / 59, 1]);
  });
});

describe("orthogonal polynomials as products of their roots", () => {
  const x = [3.1, 4.7, 5.2, 6.8, 7.7, 8.1, 9.9, 10.4, 12.6, 13.3, 15.0, 16.2];
  test.each([[1], [2], [4], [7]])("degree %i: product of (x - root) over the norm gives the columns", (degree) => {
    const state = fitPoly({ name: "x", values: x }, { degree, orthogonal: true });
    const roots = orthogonalRoots(state);
    const at = [0, 3.1, 5, 8.8, 12, 16.2, 20];
    const want = applyPoly(state, { name: "x", values: at });
    want.columns.forEach((col, k) => {
      expect(roots[k]).toHaveLength(k + 1);
      at.forEach((v, i) => {
        const got = roots[k].reduce((p, r) => p * (v - r), 1) / Math.sqrt(state.norm2[k + 2]);
        expect(Math.abs(got - col[i])).toBeLessThanOrEqual(SAME_COLUMN * Math.max(1, Math.abs(col[i])));
      });
    });
  });

  test("roots are real, ascending and interlace those of the degree below (Szego, theorem 3.3.2)", () => {
    const state = fitPoly({ name: "x", values: x }, { degree: 6, orthogonal: true });
    const roots = orthogonalRoots(state);
    for (let k = 1; k < roots.length; k++) {
      for (let j = 0; j < roots[k - 1].length; j++) {
        expect(roots[k][j]).toBeLessThan(roots[k - 1][j]);
        expect(roots[k - 1][j]).toBeLessThan(roots[k][j + 1]);
      }
    }
  });
});
