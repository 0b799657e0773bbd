import { applyProducts, fitProducts } from "../../../../src/engine/basis/products";

const a = { name: "a", values: [1, 2, 3] };
const b = { name: "b", values: [4, 5, null] };
const c = { name: "c", values: [2, 2, 2] };

describe("products of columns", () => {
  test("a*b is one column named a*b holding the row products", () => {
    const s = fitProducts([a, c], { mode: "product" });
    const out = applyProducts(s, [a, c]);
    expect(out.names).toEqual(["a*c"]);
    expect(Array.from(out.columns[0])).toEqual([2, 4, 6]);
  });

  test("pairs makes every pairwise product, in column order", () => {
    expect(fitProducts([a, b, c], { mode: "pairs" }).names).toEqual(["a*b", "a*c", "b*c"]);
  });

  test("a polynomial of two columns up to total degree 2 lists a, b, a^2, a*b, b^2", () => {
    expect(fitProducts([a, b], { mode: "polynomial", degree: 2 }).names).toEqual(["a", "b", "a^2", "a*b", "b^2"]);
  });

  test("three columns up to degree 3 give every monomial once: C(3+3, 3) - 1 = 19 columns", () => {
    const names = fitProducts([a, b, c], { mode: "polynomial", degree: 3 }).names;
    expect(names).toHaveLength(19);
    expect(new Set(names).size).toBe(19);
    expect(names).toContain("a*b*c");
    expect(names).toContain("a^2*c");
  });

  test("a blank factor gives NaN only in the columns that use it, with a note", () => {
    const s = fitProducts([a, b], { mode: "polynomial", degree: 2 });
    const out = applyProducts(s, [a, b]);
    expect(out.columns[0][2]).toBe(3); // "a" does not use b
    expect(Number.isNaN(out.columns[3][2])).toBe(true); // a*b
    expect(out.notes).toEqual([expect.objectContaining({ row: 2, column: "b", code: "MISSING_FOR_SCORING" })]);
  });

  test("a text column in a product is coded as indicators first: one product per non-reference level", () => {
    const dose = { name: "dose", values: [1, 2, 3, 4] };
    const sex = { name: "sex", values: ["F", "M", "F", "F"] };
    const s = fitProducts([dose, sex], { mode: "product" });
    expect(s.names).toEqual(["dose*sex=M"]);
    expect(Array.from(applyProducts(s, [dose, sex]).columns[0])).toEqual([0, 2, 0, 0]);
  });

  test("pairs with a text column expand each pair that uses it", () => {
    const g = { name: "g", values: ["x", "y", "z", "x"] };
    expect(fitProducts([a, c, { ...g, values: g.values.slice(0, 3) }], { mode: "pairs" }).names).toEqual(["a*c", "a*g=y", "a*g=z", "c*g=y", "c*g=z"]);
  });

  test("an unseen level in a product gives NaN for that row and an UNSEEN_LEVEL note", () => {
    const sex = { name: "sex", values: ["F", "M", "F"] };
    const s = fitProducts([a, sex], { mode: "product" });
    const out = applyProducts(s, [{ name: "a", values: [5, 6] }, { name: "sex", values: ["M", "X"] }]);
    expect(out.columns[0][0]).toBe(5);
    expect(Number.isNaN(out.columns[0][1])).toBe(true);
    expect(out.notes[0]).toMatchObject({ row: 1, code: "UNSEEN_LEVEL" });
  });

  test("a text column in a polynomial of several columns is refused", () => {
    expect(() => fitProducts([a, { name: "t", values: ["x", "y", "z"] }], { mode: "polynomial", degree: 2 })).toThrow(/poly needs numbers, but the column "t" holds text/);
  });
});
