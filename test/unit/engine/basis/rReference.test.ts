/**
 * Orthogonal polynomials, natural splines and type-7 quantiles against R 4.2.2 (stats::poly and its
 * predict method, splines::ns and its predict method, stats::quantile). Reference values:
 * test/fixtures/basis/r-reference.json, written by test/fixtures/basis/generate-r-reference.R.
 */
import reference from "../../../fixtures/basis/r-reference.json";
import { quantile7, sortedCopy } from "../../../../src/engine/basis/common";
import { applyNs, fitNs } from "../../../../src/engine/basis/ns";
import { applyPoly, fitPoly } from "../../../../src/engine/basis/poly";
import { applyZscore, fitZscore } from "../../../../src/engine/basis/zscore";
import { applyProducts, fitProducts } from "../../../../src/engine/basis/products";

/**
 * Agreement tolerance, relative to the largest magnitude in the compared column (floor 1): both
 * sides compute the same formulas in double precision, differing only in summation order and in
 * LINPACK's dnrm2 scaling, which costs a few ulps times the condition of the basis.
 */
const R_AGREEMENT = 1e-10;

function expectColumnsClose(got: Float64Array[], want: number[][], what: string): void {
  expect(got.length).toBe(want.length);
  want.forEach((col, j) => {
    const scale = Math.max(1, ...col.map(Math.abs));
    col.forEach((w, i) => {
      const g = got[j][i];
      if (!(Math.abs(g - w) <= R_AGREEMENT * scale)) {
        throw new Error(`${what}: column ${j + 1}, row ${i + 1}: expected ${w}, got ${g}, tolerance ${R_AGREEMENT * scale}`);
      }
    });
  });
}

const column = (name: string, x: number[]) => ({ name, values: x });

describe("orthogonal polynomials agree with R's stats::poly", () => {
  for (const c of reference.poly) {
    test(`${c.label}: alpha and norm2 equal R's coefs`, () => {
      const s = fitPoly(column("x", c.x), { degree: c.degree, orthogonal: true });
      expectColumnsClose([Float64Array.from(s.alpha)], [c.alpha], "alpha");
      // norm2 grows like n * spread^(2k): compare relatively.
      c.norm2.forEach((w, k) => expect(Math.abs(s.norm2[k] - w) / Math.abs(w)).toBeLessThan(R_AGREEMENT));
    });
    test(`${c.label}: training columns equal poly(x, degree)`, () => {
      const s = fitPoly(column("x", c.x), { degree: c.degree, orthogonal: true });
      expectColumnsClose(applyPoly(s, column("x", c.x)).columns, c.fitted, "fitted");
    });
    test(`${c.label}: new rows equal predict(poly, newx) with the stored coefficients`, () => {
      const s = fitPoly(column("x", c.x), { degree: c.degree, orthogonal: true });
      expectColumnsClose(applyPoly(s, column("x", c.newx)).columns, c.predicted, "predicted");
    });
    test(`${c.label}: raw powers equal poly(newx, degree, raw = TRUE)`, () => {
      const s = fitPoly(column("x", c.x), { degree: c.degree, orthogonal: false });
      const got = applyPoly(s, column("x", c.newx)).columns;
      c.raw.forEach((col, j) => col.forEach((w, i) => expect(Math.abs(got[j][i] - w)).toBeLessThanOrEqual(Math.abs(w) * 1e-15)));
    });
  }
});

describe("natural cubic splines agree with R's splines::ns", () => {
  for (const c of reference.ns) {
    const options = {
      df: (c.df as number | null) ?? undefined,
      knots: c.knots_in == null ? undefined : ([] as number[]).concat(c.knots_in as number | number[]),
      boundary: (c.boundary_in as [number, number] | null) ?? undefined,
    };
    test(`${c.label}: knots and boundary knots equal R's`, () => {
      const s = fitNs(column("x", c.x), options);
      expect(s.boundary).toEqual(c.boundary);
      expectColumnsClose([Float64Array.from(s.knots)], [([] as number[]).concat(c.knots)], "knots");
    });
    test(`${c.label}: training columns equal ns(x)`, () => {
      const s = fitNs(column("x", c.x), options);
      expectColumnsClose(applyNs(s, column("x", c.x)).columns, c.fitted, "fitted");
    });
    test(`${c.label}: new rows, including beyond the boundary, equal predict(ns, newx)`, () => {
      const s = fitNs(column("x", c.x), options);
      expectColumnsClose(applyNs(s, column("x", c.newx)).columns, c.predicted, "predicted");
    });
  }
});

describe("type-7 quantiles agree with R's quantile()", () => {
  reference.quantile.forEach((c, k) => {
    test(`case ${k + 1}: every probability matches exactly or to an ulp`, () => {
      const s = sortedCopy(c.x);
      c.probs.forEach((p, j) => expect(Math.abs(quantile7(s, p) - c.q[j])).toBeLessThanOrEqual(Math.abs(c.q[j]) * 4e-16));
    });
  });
});

describe("z-scores agree with R's scale()", () => {
  /** Mean and SD are sums of 50-60 values: agreement to a few ulps of the magnitude. */
  const SCALE_AGREEMENT = 1e-13;
  for (const c of reference.zscore) {
    test(`${c.label}: training mean and sample SD equal scale()'s center and scale`, () => {
      const s = fitZscore(column("x", c.x));
      expect(Math.abs(s.mean - c.center) / Math.abs(c.center)).toBeLessThan(SCALE_AGREEMENT);
      expect(Math.abs(s.sd - c.scale) / c.scale).toBeLessThan(SCALE_AGREEMENT);
    });
    test(`${c.label}: standardized values equal scale(x)`, () => {
      const s = fitZscore(column("x", c.x));
      expectColumnsClose(applyZscore(s, column("x", c.x)).columns, [c.scaled], "scaled");
    });
  }
});

describe("raw polynomials of several columns agree with R's polym(raw = TRUE)", () => {
  for (const c of reference.polym) {
    test(`${c.label}: every monomial R makes is made, with equal values (matched by exponents)`, () => {
      const s = fitProducts([column("a", c.a), column("b", c.b)], { mode: "polynomial", degree: c.degree });
      const out = applyProducts(s, [column("a", c.a), column("b", c.b)]);
      expect(s.terms).toHaveLength(c.exponents.length);
      c.exponents.forEach((e, j) => {
        const [pa, pb] = e.split(".").map(Number);
        const k = s.terms.findIndex((t) => t[0] === pa && t[1] === pb);
        expect(k).toBeGreaterThanOrEqual(0);
        expectColumnsClose([out.columns[k]], [c.columns[j]], `a^${pa} b^${pb}`);
      });
    });
  }
});
